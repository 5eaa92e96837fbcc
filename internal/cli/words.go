package cli

import (
	"errors"
	"fmt"
	"strings"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/attention"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/lattice"
	"github.com/kinmap/kinmap/timeline"
)

// flagNames are the options of the commands that set the Config fields the
// library's errors name: of features.Config, attention.Config and
// timeline.Config.
var flagNames = map[string]string{"Window": "--window", "Stride": "--stride",
	"MinConfidence": "--top-confidence", "LongStay": "--long-stay", "FleetAlpha": "--fleet-p",
	"SwitchCost": "--switch-cost", "MinDwell": "--min-dwell", "UnfamiliarQ": "--unfamiliar-q"}

// fieldFlags words the settings that library warnings name by their
// fields, in parentheses and qualified by package, with the options that
// set them: the one rule of every warning that names a setting.
var fieldFlags = strings.NewReplacer(
	"(mapper.Config.Sigma0)", "(--sigma0)",
	"(mapper.Config.Regimes)", "(--regimes)",
	"(export.Run.Register)", "(--sites)",
	"(kinmap.Options.Data)", "(--data)",
	"(scaleout.Options.Work)", "(--work)", // kinmap-beam
)

// WordWarning returns a warning of the library in the words of the
// command's options; Write words the warnings of run.json and the report
// with it too.
func WordWarning(w string) string { return fieldFlags.Replace(w) }

// Words returns the message of err in the words of the run command's
// options: the library reports settings by their fields, the command by
// its options.
func Words(err error) string {
	var (
		step  *features.StepError
		limit *features.WindowLimitError
		grid  *lattice.LimitError
		none  *kinmap.NoWindowError
		list  *attention.ConfigError
		dec   *timeline.ConfigError
	)
	switch {
	case errors.As(err, &step):
		return fmt.Sprintf("%s %v is shorter than the sampling step found in the data (%v): give at least %v",
			flagNames[step.Field], step.Value, step.Step, step.Step)
	case errors.As(err, &limit):
		return fmt.Sprintf("windows every %v would make about %.0f windows, beyond the limit of %d: give a longer --stride (or --window), or a shorter dump",
			limit.Stride, limit.Windows, features.MaxWindows)
	case errors.As(err, &grid):
		return fmt.Sprintf("--grid: %s: %.0f %s, beyond the limit of %.0f: give a smaller grid, or none to let the data choose",
			grid.What, grid.Value, grid.Unit, grid.Limit)
	case errors.As(err, &none) && none.Unit != nil:
		return fmt.Sprintf("no usable window: every window of every site was skipped (%s): %v", none.Reasons, none.Unit)
	case errors.As(err, &list) && flagNames[list.Field] != "":
		return outOfRange(list.Field, list.Value, list.Want)
	case errors.As(err, &dec) && flagNames[dec.Field] != "":
		return outOfRange(dec.Field, dec.Value, dec.Want)
	case errors.As(err, &none):
		return fmt.Sprintf("no usable window: every window of every site was skipped (%s); try a lower --min-coverage or a longer --window", none.Reasons)
	}
	return fieldFlags.Replace(err.Error())
}

// outOfRange words a setting out of its range, which the library names by
// its field, with the option that sets it.
func outOfRange(field string, value float64, want string) string {
	return fmt.Sprintf("%s %g: want a value %s", flagNames[field], value, want)
}
