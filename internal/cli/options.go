package cli

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/attention"
	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/history"
	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/internal/atomicfile"
	"github.com/kinmap/kinmap/lattice"
)

// Exit statuses of the commands.
const (
	ExitOK    = 0
	ExitData  = 1 // an error in the data
	ExitUsage = 2 // an error in the command line
)

// Status reports err on stderr as the command called name and returns its
// exit status: ExitOK without an error or when help was asked for,
// ExitUsage with a pointer to the help for a usage error, worded with the
// options (Words), ExitData for any other error.
func Status(stderr io.Writer, name string, err error) int {
	switch {
	case err == nil || errors.Is(err, flag.ErrHelp):
		return ExitOK
	case kinmap.IsUsage(err):
		fmt.Fprintf(stderr, "%s: %s\nRun '%s -h' for its options.\n", name, Words(err), name)
		return ExitUsage
	default:
		msg := err.Error()
		var none *kinmap.NoWindowError
		if name == "kinmap run" && errors.As(err, &none) { // only run sets the windows
			msg = Words(err)
		}
		var unit *ingest.UnitError
		if errors.As(err, &unit) {
			msg += fmt.Sprintf("; read them with --time-unit %s", unit.Likely)
		}
		fmt.Fprintf(stderr, "%s: %s\n", name, msg)
		return ExitData
	}
}

// Outputs are the output flags every mapping command shares.
type Outputs struct {
	Out, Model string
	Quiet      bool
}

// Input registers the flags of the dumps and the register.
func (f *Flags) Input(o *kinmap.Options) {
	f.Section("Input")
	f.Value(listValue{p: &o.Data}, "data", "dump `FILES`: Parquet, Arrow IPC or CSV (.gz too); globs and several files allowed")
	f.Str(&o.Sites, "sites", "", "site register `FILE` (CSV, Parquet, Arrow or GeoJSON points) with positions and attributes")
	f.Str(&o.Register.Key, "sites-key", "", "register id `COLUMN` (default: the --site-col name)")
	f.Str(&o.Ingest.SiteCol, "site-col", o.Ingest.SiteCol, "site id `COLUMN` of the dump")
	f.Str(&o.Ingest.TimeCol, "time-col", o.Ingest.TimeCol, "time `COLUMN` of the dump")
	f.Str(&o.Ingest.ChannelCol, "channel-col", o.Ingest.ChannelCol, "channel name `COLUMN` of a long dump")
	f.Str(&o.Ingest.ValueCol, "value-col", o.Ingest.ValueCol, "value `COLUMN` of a long dump")
	f.Str(&o.Ingest.LatCol, "lat-col", o.Ingest.LatCol, "latitude `COLUMN` of the register and of a dump with moving sites")
	f.Str(&o.Ingest.LonCol, "lon-col", o.Ingest.LonCol, "longitude `COLUMN` of the register and of a dump with moving sites")
	f.Value(listValue{p: &o.Ingest.Channels, comma: true}, "channels", "use only these `CHANNELS`, for example flow,pressure (default: all)")
	f.Value(choiceValue{&o.Ingest.TimeUnit, []string{"s", "ms", "us", "ns"}}, "time-unit", "`UNIT` of integer epoch times: s, ms, us or ns")
	f.Value(unitsValue{&o.Units}, "units", "`UNITS` of channels for the regime descriptions, for example flow=m3/h,vibration=mm/s; kept in the model")
}

// Features registers the flags of the windows, features and scaling.
func (f *Flags) Features(o *kinmap.Options) {
	f.Section("Windows and features")
	f.Value(durationValue{&o.Features.Window}, "window", "window `LENGTH` (Go durations plus d and w, for example 24h, 1d, 1w)")
	f.Value(durationValue{&o.Features.Stride}, "stride", "`STEP` between window starts for overlapping windows (default: the window length)")
	f.Str(&o.Features.TZ, "tz", "", "IANA `ZONE` whose midnight windows are aligned to (default UTC)")
	f.Num(&o.Features.MinCoverage, "min-coverage", o.Features.MinCoverage, "minimum `SHARE` of expected readings for a window to be used; 0 disables the rule")
	f.Str(&o.Features.Features, "features", o.Features.Features, "`SET`: basic, full, or a list of statistics or feature names")
	f.Bool(&o.Features.Pairs, "pairs", false, "add the correlation of each channel pair")
	f.Value(choiceValue{&o.Scaling, []string{"zscore", "robust"}}, "scale", "feature `SCALING`: zscore (mean, std) or robust (median, IQR)")
	f.Value(weightsValue{&o.Weights}, "weights", "per-feature `WEIGHTS`, for example flow.mean=2,vibration.p95=0.5")
}

// Map registers the flags of the map: all of them for training a new map,
// the training length and neighbourhood only for continuing one.
func (f *Flags) Map(o *kinmap.Options, training bool) {
	f.Section("Map")
	if training {
		f.Value(gridValue{&o.Map.Cols, &o.Map.Rows}, "grid", "lattice `SIZE`, COLSxROWS such as 30x20 (default: about 5·√N units for N windows)")
		l := o.Map.Lattice()
		cells, surface := l.Cells(), l.Surface()
		f.Value(choiceValue{&cells, []string{lattice.CellsHex, lattice.CellsSquare}}, "cells", "cell `SHAPE`: hex (6 neighbours) or square (4)")
		f.Value(choiceValue{&surface, []string{lattice.SurfaceTorus, lattice.SurfacePlane}}, "surface", "map `SURFACE`: torus (wraps both ways) or plane (ends at its edges)")
		f.After(func() { o.Map.Hex, o.Map.Flat = cells == lattice.CellsHex, surface == lattice.SurfacePlane })
		f.Renamed("lattice", "cells (hex or square)")
		f.Renamed("sheet", "surface plane")
		f.Value(choiceValue{&o.Map.Rule, []string{"batch", "online"}}, "rule", "training `RULE`: batch or online")
		f.Value(choiceValue{&o.Map.Init, []string{"pca", "random"}}, "init", "initialisation `METHOD`: pca (first two principal components) or random (data samples)")
		f.Num(&o.Map.Eta0, "eta0", o.Map.Eta0, "online rule: initial learning `RATE` in (0, 1]")
		f.NonZero("eta0", "in (0, 1]")
		f.Int(&o.Map.Regimes, "regimes", 0, "number of regimes `K`; 0 chooses it from the site timelines, at most 12")
	} else {
		f.Int(&o.Map.Regimes, "regimes", 0, "number of regimes `K`; 0 keeps the model's number")
	}
	f.Int(&o.Map.Epochs, "epochs", o.Map.Epochs, "training `EPOCHS`; 0 chooses from the data size")
	f.Num(&o.Map.Sigma0, "sigma0", o.Map.Sigma0, "initial neighbourhood `WIDTH` in lattice units; 0 chooses from the grid")
	f.Num(&o.Map.SigmaEnd, "sigma-end", o.Map.SigmaEnd, "final neighbourhood `WIDTH`; 0 chooses")
	seed := int(o.Map.Seed)
	f.Int(&seed, "seed", seed, "random `SEED` (initialisation and the online rule)")
	f.Int(&o.Map.Workers, "workers", 0, "`N` parallel workers; 0 uses all cores")
	f.After(func() { o.Map.Seed = int64(seed); o.Features.Workers, o.Ingest.Workers = o.Map.Workers, o.Map.Workers })
}

// Timeline registers the flags of the decoding of timelines. A switch cost
// of 0 chooses it from the model, as documented; a dwell or quantile of 0
// is refused rather than silently taken as the default.
func (f *Flags) Timeline(o *kinmap.Options) {
	f.Section("Regimes over time")
	f.Num(&o.Timeline.SwitchCost, "switch-cost", o.Timeline.SwitchCost, "penalty `COST` per regime switch in the decoding; 0 chooses from the model")
	f.Int(&o.Timeline.MinDwell, "min-dwell", o.Timeline.MinDwell, "`WINDOWS` a site must stay on each side of a switch, 1 or more; 1 disables the rule")
	f.Num(&o.Timeline.UnfamiliarQ, "unfamiliar-q", o.Timeline.UnfamiliarQ, "a window is unfamiliar above this `QUANTILE`, in (0, 1], of the training quantization errors")
	f.NonZero("min-dwell", "of 1 window or more")
	f.NonZero("unfamiliar-q", "in (0, 1]")
}

// WorkList registers the flags of the work list's thresholds. A
// confidence or probability of 0 is refused: it could only mean "no switch
// leaves the top" or "no fleet-wide event", which attention.Config cannot
// say (its zero fields are the defaults), and taking it as the default
// would do the opposite of what was asked. A small value comes close.
func (f *Flags) WorkList(o *kinmap.Options) {
	d := attention.DefaultConfig()
	f.Section("Work list")
	f.Num(&o.WorkList.MinConfidence, "top-confidence", d.MinConfidence, "switches below this `CONFIDENCE`, in (0, 1], leave the top of the work list; they stay in switches.csv")
	f.Int(&o.WorkList.LongStay, "long-stay", 0, "`WINDOWS` in a row in a watch or fault regime that list a site; 0 is a week of windows")
	f.Num(&o.WorkList.FleetAlpha, "fleet-p", d.FleetAlpha, "same-day switches are one fleet-wide event when chance gives as many with a probability below `P`, in (0, 1)")
	f.NonZero("top-confidence", "in (0, 1]")
	f.NonZero("fleet-p", "in (0, 1)")
}

// Output registers the output flags, with modelHelp for --model.
func (f *Flags) Output(o *kinmap.Options, out *Outputs, modelHelp string) {
	f.Section("Output")
	f.Str(&out.Out, "out", "", "output `DIR`ectory (created if missing)")
	f.Str(&out.Model, "model", "", modelHelp)
	f.Str(&o.History, "history", "", "history `DIR`: append this run's timeline and decode switches across dumps")
	f.Bool(&out.Quiet, "quiet", false, "no progress messages")
}

// Finish completes the options after parsing: the remaining arguments
// are more dumps, the register's columns default to the dump's, and --out
// (and with needModel --model) must be given.
func (f *Flags) Finish(o *kinmap.Options, out *Outputs, needModel bool) error {
	o.Data = append(o.Data, f.Args()...)
	if o.Register.Key == "" {
		o.Register.Key = o.Ingest.SiteCol
	}
	o.Register.LatCol, o.Register.LonCol = o.Ingest.LatCol, o.Ingest.LonCol
	if out.Out == "" {
		return UsageError("no output folder: name one with --out DIR")
	}
	if needModel && out.Model == "" {
		return UsageError("no model: name the model file of an earlier run with --model FILE")
	}
	return checkOutputs(o, out, needModel)
}

// checkOutputs refuses, before any data is read, the outputs that cannot
// be written or would destroy something: --out naming a file, or a folder
// holding files under kinmap's output names that no kinmap run wrote;
// --history naming a file; and any output that is an input (a dump, the
// register, or the model that assign and update read).
func checkOutputs(o *kinmap.Options, out *Outputs, modelIsInput bool) error {
	inputs := []string{o.Sites, o.Events.File}
	for _, d := range o.Data {
		if m, err := filepath.Glob(d); err == nil && len(m) > 0 {
			inputs = append(inputs, m...)
		} else {
			inputs = append(inputs, d)
		}
	}
	var model string
	if modelIsInput {
		inputs = append(inputs, out.Model)
	} else {
		model = out.Model
	}
	for _, in := range inputs {
		if in == "" {
			continue
		}
		info, err := os.Stat(in)
		if err != nil {
			continue // reading it will say what is wrong
		}
		switch {
		case model != "" && samePath(model, info):
			return UsageError("--model %s is an input of the run; name another file", model)
		case within(in, out.Out) && export.IsOutput(filepath.Base(in)):
			return UsageError("--out %s would replace the input %s; name another folder", out.Out, in)
		case o.History != "" && within(in, o.History):
			return UsageError("--history %s holds the input %s; name another folder", o.History, in)
		}
	}
	if _, err := export.CheckDir(out.Out); err != nil {
		var nf *export.NotFolderError
		var ff *export.ForeignFilesError
		switch {
		case errors.As(err, &nf):
			return UsageError("--out %s is a file; name a folder", out.Out)
		case errors.As(err, &ff):
			return UsageError("--out %s holds %s, which no kinmap run wrote there; kinmap will not replace them: move them or name another folder", out.Out, strings.Join(ff.Files, ", "))
		}
		return err
	}
	if info, err := os.Stat(o.History); o.History != "" && err == nil && !info.IsDir() {
		return UsageError("--history %s is a file; name a folder", o.History)
	}
	return nil
}

// samePath reports whether path is the file info describes.
func samePath(path string, info os.FileInfo) bool {
	p, err := os.Stat(path)
	return err == nil && os.SameFile(p, info)
}

// within reports whether the file path lies directly or deeper in dir.
func within(path, dir string) bool {
	if dir == "" {
		return false
	}
	d, err := os.Stat(dir)
	if err != nil {
		return false
	}
	for p := filepath.Dir(path); ; p = filepath.Dir(p) {
		if info, err := os.Stat(p); err == nil && os.SameFile(info, d) {
			return true
		}
		if next := filepath.Dir(p); next == p {
			return false
		}
	}
}

// Write writes the outputs of a run: the output folder, the copy of the
// model that --model names, and the run's period of the history folder.
//
// They are written together or not at all (kinmap.Result.Save).
func Write(res *kinmap.Result, o *kinmap.Options, out *Outputs) error {
	err := res.Save(kinmap.Targets{Out: out.Out, Model: out.Model, History: o.History, Word: WordWarning})
	var busy *atomicfile.ErrBusy
	var changed *history.ChangedError
	switch {
	case errors.As(err, &busy):
		return fmt.Errorf("%s is being written by another kinmap run, which held it for more than %v; nothing was written", busy.Dir, busy.Wait)
	case errors.As(err, &changed):
		return fmt.Errorf("--history %s: another kinmap run wrote it while this one ran; nothing was written: run again", o.History)
	}
	return err
}

// Report says what a run found and where its outputs are, and lists its
// warnings on stderr.
func Report(stdout, stderr io.Writer, res *kinmap.Result, dir string) {
	c := res.Info.Counts
	fmt.Fprintf(stdout, "%d sites, %d windows, %d regimes on a %dx%d map, %d switches, %d unfamiliar windows\n",
		c.Sites, c.Windows, c.Regimes, res.Model.Map.Lattice.Cols, res.Model.Map.Lattice.Rows, c.Switches, c.Unfamiliar)
	for _, w := range res.Info.Warnings {
		fmt.Fprintf(stderr, "warning: %s\n", WordWarning(w))
	}
	fmt.Fprintf(stdout, "outputs in %s; open %s first\n", dir, filepath.Join(dir, export.ReportFile))
}
