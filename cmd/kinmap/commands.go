package main

import (
	"fmt"
	"path/filepath"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/scenarios"
)

// outputs are the flags every mapping command shares.
type outputs struct {
	out, model string
	quiet      bool
}

func inputFlags(f *flags, o *kinmap.Options) {
	f.section("Input")
	f.value(listValue{p: &o.Data}, "data", "dump `FILES`: Parquet, Arrow IPC or CSV (.gz too); globs and several files allowed")
	f.str(&o.Sites, "sites", "", "site register `FILE` (CSV, Parquet, Arrow or GeoJSON points) with positions and attributes")
	f.str(&o.Register.Key, "sites-key", "", "register id `COLUMN` (default: the --site-col name)")
	f.str(&o.Ingest.SiteCol, "site-col", o.Ingest.SiteCol, "site id `COLUMN` of the dump")
	f.str(&o.Ingest.TimeCol, "time-col", o.Ingest.TimeCol, "time `COLUMN` of the dump")
	f.str(&o.Ingest.ChannelCol, "channel-col", o.Ingest.ChannelCol, "channel name `COLUMN` of a long dump")
	f.str(&o.Ingest.ValueCol, "value-col", o.Ingest.ValueCol, "value `COLUMN` of a long dump")
	f.str(&o.Ingest.LatCol, "lat-col", o.Ingest.LatCol, "latitude `COLUMN` of the register and of a dump with moving sites")
	f.str(&o.Ingest.LonCol, "lon-col", o.Ingest.LonCol, "longitude `COLUMN` of the register and of a dump with moving sites")
	f.value(listValue{p: &o.Ingest.Channels, comma: true}, "channels", "wide dump: use only these `CHANNELS` (a,b,c)")
	f.value(choiceValue{&o.Ingest.TimeUnit, []string{"s", "ms", "us", "ns"}}, "time-unit", "`UNIT` of integer epoch times: s, ms, us or ns")
}

func featureFlags(f *flags, o *kinmap.Options) {
	f.section("Windows and features")
	f.value(durationValue{&o.Features.Window}, "window", "window `LENGTH` (Go durations plus d and w, for example 24h, 1d, 1w)")
	f.value(durationValue{&o.Features.Stride}, "stride", "`STEP` between window starts for overlapping windows (default: the window length)")
	f.str(&o.Features.TZ, "tz", "", "IANA `ZONE` whose midnight windows are aligned to (default UTC)")
	f.num(&o.Features.MinCoverage, "min-coverage", o.Features.MinCoverage, "minimum `SHARE` of expected readings for a window to be used; 0 disables the rule")
	f.str(&o.Features.Features, "features", o.Features.Features, "`SET`: basic, full, or a list of statistics or feature names")
	f.boolean(&o.Features.Pairs, "pairs", false, "add the correlation of each channel pair")
	f.value(choiceValue{&o.Scaling, []string{"zscore", "robust"}}, "scale", "feature `SCALING`: zscore (mean, std) or robust (median, IQR)")
	f.value(weightsValue{&o.Weights}, "weights", "per-feature `WEIGHTS`, for example flow.mean=2,vibration.p95=0.5")
}

func mapFlags(f *flags, o *kinmap.Options, training bool) {
	f.section("Map")
	if training {
		f.value(gridValue{&o.Map.Cols, &o.Map.Rows}, "grid", "lattice `SIZE`, COLSxROWS such as 30x20 (default: about 5·√N units for N windows)")
		shape := "hex"
		f.value(choiceValue{&shape, []string{"hex", "rect"}}, "lattice", "unit `SHAPE`: hex (6 neighbours) or rect (4)")
		f.after(func() { o.Map.Hex = shape == "hex" })
		f.boolean(&o.Map.Flat, "sheet", false, "a flat sheet with edges instead of a torus")
		f.value(choiceValue{&o.Map.Rule, []string{"batch", "online"}}, "rule", "training `RULE`: batch or online")
		f.value(choiceValue{&o.Map.Init, []string{"pca", "random"}}, "init", "initialisation `METHOD`: pca (first two principal components) or random (data samples)")
		f.num(&o.Map.Eta0, "eta0", o.Map.Eta0, "online rule: initial learning `RATE` in (0, 1]")
		f.integer(&o.Map.Regimes, "regimes", 0, "number of regimes `K`; 0 chooses by the Davies–Bouldin index over 2..12")
	}
	f.integer(&o.Map.Epochs, "epochs", o.Map.Epochs, "training `EPOCHS`; 0 chooses from the data size")
	f.num(&o.Map.Sigma0, "sigma0", o.Map.Sigma0, "initial neighbourhood `WIDTH` in lattice units; 0 chooses from the grid")
	f.num(&o.Map.SigmaEnd, "sigma-end", o.Map.SigmaEnd, "final neighbourhood `WIDTH`; 0 chooses")
	seed := int(o.Map.Seed)
	f.integer(&seed, "seed", seed, "random `SEED` (initialisation and the online rule)")
	f.integer(&o.Map.Workers, "workers", 0, "`N` parallel workers; 0 uses all cores")
	f.after(func() { o.Map.Seed = int64(seed); o.Features.Workers = o.Map.Workers })
}

func timelineFlags(f *flags, o *kinmap.Options) {
	f.section("Regimes over time")
	f.num(&o.Timeline.SwitchCost, "switch-cost", o.Timeline.SwitchCost, "penalty `COST` per regime switch in the decoding; 0 chooses from the model")
	f.integer(&o.Timeline.MinDwell, "min-dwell", o.Timeline.MinDwell, "`WINDOWS` a site must stay on each side of a switch")
	f.num(&o.Timeline.UnfamiliarQ, "unfamiliar-q", o.Timeline.UnfamiliarQ, "a window is unfamiliar above this `QUANTILE` of the training quantization errors")
}

func outputFlags(f *flags, o *kinmap.Options, out *outputs, modelHelp string) {
	f.section("Output")
	f.str(&out.out, "out", "", "output `DIR`ectory (created if missing)")
	f.str(&out.model, "model", "", modelHelp)
	f.str(&o.History, "history", "", "history `DIR`: append this run's timeline and decode switches across dumps")
	f.boolean(&out.quiet, "quiet", false, "no progress messages")
}

// setup parses the flags of a mapping command and checks the output flags.
func setup(f *flags, args []string, e *env, o *kinmap.Options, out *outputs, needModel bool) error {
	if err := f.parse(args, e); err != nil {
		return err
	}
	o.Data = append(o.Data, f.Args()...)
	if o.Register.Key == "" {
		o.Register.Key = o.Ingest.SiteCol
	}
	o.Register.LatCol, o.Register.LonCol = o.Ingest.LatCol, o.Ingest.LonCol
	if out.out == "" {
		return usageErr("no output folder: name one with --out DIR")
	}
	if needModel && out.model == "" {
		return usageErr("no model: name the model file of an earlier run with --model FILE")
	}
	if !out.quiet && e.terminal {
		o.Log = e.stderr
	}
	return nil
}

func runCmd(args []string, e *env) error {
	o := kinmap.DefaultOptions()
	var out outputs
	f := newFlags(commandNamed("run"))
	inputFlags(f, &o)
	featureFlags(f, &o)
	mapFlags(f, &o, true)
	timelineFlags(f, &o)
	outputFlags(f, &o, &out, "also write the model to `FILE` (it is always written to DIR/model)")
	if err := setup(f, args, e, &o, &out, false); err != nil {
		return err
	}
	res, err := kinmap.Train(o)
	if err != nil {
		return err
	}
	return finishRun(res, &o, &out, e)
}

func assignCmd(args []string, e *env) error {
	return applyModel("assign", args, e, kinmap.Assign)
}

func updateCmd(args []string, e *env) error {
	return applyModel("update", args, e, kinmap.Update)
}

// applyModel runs a command that reads a model: assign or update.
func applyModel(name string, args []string, e *env, apply func(kinmap.Options, *mapper.Model) (*kinmap.Result, error)) error {
	o := kinmap.DefaultOptions()
	var out outputs
	f := newFlags(commandNamed(name))
	inputFlags(f, &o)
	if name == "update" {
		mapFlags(f, &o, false)
	}
	timelineFlags(f, &o)
	outputFlags(f, &o, &out, "model `FILE` of an earlier run")
	if err := setup(f, args, e, &o, &out, true); err != nil {
		return err
	}
	m, err := mapper.ReadModelFile(out.model)
	if err != nil {
		return err
	}
	res, err := apply(o, m)
	if err != nil {
		return err
	}
	res.Info.Model = out.model
	out.model = "" // the model read is not written over
	return finishRun(res, &o, &out, e)
}

// finishRun writes the outputs of a run and says where they are.
func finishRun(res *kinmap.Result, o *kinmap.Options, out *outputs, e *env) error {
	if err := res.Write(out.out); err != nil {
		return err
	}
	if out.model != "" {
		if err := res.Model.WriteFile(out.model); err != nil {
			return err
		}
	}
	if o.History != "" {
		if err := res.AppendHistory(o.History); err != nil {
			return err
		}
	}
	c := res.Info.Counts
	fmt.Fprintf(e.stdout, "%d sites, %d windows, %d regimes on a %dx%d map, %d switches, %d unfamiliar windows\n",
		c.Sites, c.Windows, c.Regimes, res.Model.Map.Lattice.Cols, res.Model.Map.Lattice.Rows, c.Switches, c.Unfamiliar)
	for _, w := range res.Info.Warnings {
		fmt.Fprintf(e.stderr, "warning: %s\n", w)
	}
	fmt.Fprintf(e.stdout, "outputs in %s; open %s first\n", out.out, filepath.Join(out.out, "report.html"))
	return nil
}

func demoCmd(args []string, e *env) error {
	var out outputs
	f := newFlags(commandNamed("demo"))
	f.section("Output")
	f.str(&out.out, "out", "kinmap-demo", "output `DIR`ectory; the generated dump goes to DIR/data")
	f.boolean(&out.quiet, "quiet", false, "no progress messages")
	if err := f.parse(args, e); err != nil {
		return err
	}
	if f.NArg() > 0 {
		return usageErr("demo takes no arguments, only --out DIR")
	}
	spec, err := scenarios.DefaultSpec("pumping")
	if err != nil {
		return err
	}
	data := filepath.Join(out.out, "data")
	fmt.Fprintf(e.stdout, "generating the %s scenario (%d sites, %d weeks) in %s\n", spec.Name, spec.Sites, spec.Weeks, data)
	// The demo reads one dump; the other formats are for "kinmap scenario".
	files, err := writeScenario(spec, data, scenarios.FileLongParquet, scenarios.FileSites, scenarios.FileTruthWin, scenarios.FileTruthSwitch)
	if err != nil {
		return err
	}
	o := kinmap.DefaultOptions()
	o.Data = []string{files.dump}
	o.Sites = files.register
	if !out.quiet && e.terminal {
		o.Log = e.stderr
	}
	res, err := kinmap.Train(o)
	if err != nil {
		return err
	}
	return finishRun(res, &o, &out, e)
}

func scenarioCmd(args []string, e *env) error {
	var out outputs
	var sites, weeks, seed int
	f := newFlags(commandNamed("scenario"))
	f.section("Scenario")
	f.integer(&sites, "sites", 0, "number of `N` sites (default: the scenario's own)")
	f.integer(&weeks, "weeks", 0, "`WEEKS` of readings (default: the scenario's own)")
	f.integer(&seed, "seed", 0, "random `SEED` (default: the scenario's own)")
	f.section("Output")
	f.str(&out.out, "out", "", "output `DIR`ectory")
	// The scenario name comes first; the flag package stops at it otherwise.
	if len(args) == 0 || len(args[0]) == 0 || args[0][0] == '-' {
		if err := f.parse(args, e); err != nil {
			return err
		}
		return usageErr("no scenario named: pick one of %v", scenarios.Names())
	}
	name := args[0]
	if err := f.parse(args[1:], e); err != nil {
		return err
	}
	spec, err := scenarios.DefaultSpec(name)
	if err != nil {
		return usageErr("%v", err)
	}
	if out.out == "" {
		return usageErr("no output folder: name one with --out DIR")
	}
	if sites > 0 {
		spec.Sites = sites
	}
	if weeks > 0 {
		spec.Weeks = weeks
	}
	if seed != 0 {
		spec.Seed = int64(seed)
	}
	files, err := writeScenario(spec, out.out)
	if err != nil {
		return err
	}
	for _, p := range files.all {
		fmt.Fprintln(e.stdout, p)
	}
	return nil
}

// scenarioFiles are the files a written scenario holds.
type scenarioFiles struct {
	dump, register string
	all            []string
}

func writeScenario(spec scenarios.Spec, dir string, only ...string) (scenarioFiles, error) {
	fleet, err := scenarios.Generate(spec)
	if err != nil {
		return scenarioFiles{}, err
	}
	all, err := fleet.Write(dir, only...)
	if err != nil {
		return scenarioFiles{}, err
	}
	return scenarioFiles{
		dump:     filepath.Join(dir, scenarios.FileLongParquet),
		register: filepath.Join(dir, scenarios.FileSites),
		all:      all,
	}, nil
}

func commandNamed(name string) command {
	for _, c := range commands() {
		if c.name == name {
			return c
		}
	}
	panic("kinmap: no command " + name)
}
