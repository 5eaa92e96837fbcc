package main

import (
	"errors"
	"fmt"
	"io"
	"path/filepath"
	"time"

	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/internal/atomicfile"
	"github.com/kinmap/kinmap/internal/cli"
	"github.com/kinmap/kinmap/labels"
	"github.com/kinmap/kinmap/model"
)

// labelCmd sets the names and statuses of a model's regimes from a CSV
// file, or prints them as such a file.
func labelCmd(args []string, e *env) error {
	var modelFile, file string
	f := cli.New(commandNamed("label"), nil)
	f.Section("Labels")
	f.Str(&modelFile, "model", "", "model `FILE` whose regimes to label; it is rewritten in place")
	f.Str(&file, "file", "", "labels `CSV` with the columns regime, name and status (normal, watch or fault); without it, print the model's labels as such a file")
	if err := f.Parse(args, e.stdout); err != nil {
		return err
	}
	switch {
	case f.NArg() > 0:
		return cli.UsageError("unexpected arguments %q: label takes --model FILE and --file CSV", f.Args())
	case modelFile == "":
		return cli.UsageError("no model: name the model file to label with --model FILE")
	}
	if file == "" {
		m, err := model.ReadFile(modelFile)
		if err != nil {
			return err
		}
		if m.Levels == nil {
			fmt.Fprintf(e.stderr, "note: %s keeps no channel levels (format version %d), so the descriptions give standardised differences alone; the model that update or assign writes keeps them\n", modelFile, m.Version)
		}
		return labels.Write(e.stdout, export.Described(m))
	}
	ls, err := labels.ReadFile(file)
	if err != nil {
		return err
	}
	// The model's folder is locked from the reading to the writing, as a
	// run locks it, so that neither overwrites the other's model.
	tx, err := atomicfile.Begin(filepath.Dir(modelFile), nil, time.Minute)
	if err != nil {
		return err
	}
	defer tx.Abort()
	m, err := model.ReadFile(modelFile)
	if err != nil {
		return err
	}
	changed, err := labels.Apply(m, ls)
	if le := (*labels.Error)(nil); errors.As(err, &le) {
		le.Path = file
	}
	if err != nil {
		return err
	}
	if len(changed) == 0 {
		fmt.Fprintf(e.stdout, "%s: no label changed\n", modelFile)
		return nil
	}
	if err := tx.Create(modelFile, func(w io.Writer) error { return errors.Unwrap(m.Write(w)) }); err != nil {
		return err
	}
	if err := tx.Commit(); err != nil {
		return err
	}
	for _, c := range changed {
		fmt.Fprintln(e.stdout, c)
	}
	fmt.Fprintf(e.stdout, "%s: %d regime(s) relabelled; outputs show the labels from the next assign or update with this model\n", modelFile, len(changed))
	return nil
}

// featuresHelp prints the meaning of every statistic a feature name can
// end in: "kinmap help features".
func featuresHelp(w io.Writer) {
	fmt.Fprintln(w, "Features are named CHANNEL.STATISTIC (flow.p95) or A~B.corr for a pair of channels.")
	fmt.Fprintln(w, "Each is computed per window from the channel's raw readings in it:")
	fmt.Fprintln(w)
	for _, d := range features.Definitions() {
		fmt.Fprintf(w, "  %-13s %s\n", d.Stat, d.Text)
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, "--features basic is mean, std, min, max, p05, p50, p95, trend and flat; full is every statistic.")
	fmt.Fprintln(w, "Regime descriptions give each feature's difference from the fleet mean in standard deviations (σ).")
}
