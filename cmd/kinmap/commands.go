package main

import (
	"flag"
	"fmt"
	"path/filepath"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/internal/cli"
	"github.com/kinmap/kinmap/model"
	"github.com/kinmap/kinmap/scenarios"
)

// parse parses the flags of a mapping command and completes its options.
func parse(f *cli.Flags, args []string, e *env, o *kinmap.Options, out *cli.Outputs, needModel bool) error {
	if err := f.Parse(args, e.stdout); err != nil {
		return err
	}
	if err := f.Finish(o, out, needModel); err != nil {
		return err
	}
	if !out.Quiet && e.terminal {
		o.Log = e.stderr
	}
	return nil
}

func runCmd(args []string, e *env) error {
	o := kinmap.DefaultOptions()
	var out cli.Outputs
	f := runFlags(&o, &out)
	if err := parse(f, args, e, &o, &out, false); err != nil {
		return err
	}
	res, err := kinmap.Train(o)
	if err != nil {
		return err
	}
	return finishRun(res, &o, &out, e)
}

// runFlags returns the flags of run, which set o and out.
func runFlags(o *kinmap.Options, out *cli.Outputs) *cli.Flags {
	f := cli.New(commandNamed("run"), nil)
	f.Input(o)
	f.Features(o)
	f.Map(o, true)
	f.Timeline(o)
	f.WorkList(o)
	f.Events(o)
	f.Output(o, out, "also write the model to `FILE` (it is always written to DIR/model)")
	return f
}

func assignCmd(args []string, e *env) error {
	return applyModel("assign", args, e, kinmap.Assign)
}

func updateCmd(args []string, e *env) error {
	return applyModel("update", args, e, kinmap.Update)
}

// applyModel runs a command that reads a model: assign or update.
func applyModel(name string, args []string, e *env, apply func(kinmap.Options, *model.Model) (*kinmap.Result, error)) error {
	o := kinmap.DefaultOptions()
	var out cli.Outputs
	f := cli.New(commandNamed(name), nil)
	f.Input(&o)
	if name == "update" {
		f.Map(&o, false)
	}
	f.Timeline(&o)
	f.WorkList(&o)
	f.Events(&o)
	f.Output(&o, &out, "model `FILE` of an earlier run")
	if err := parse(f, args, e, &o, &out, true); err != nil {
		return err
	}
	// Options are checked before the model is read: a wrong option says
	// so even when the model is wrong too.
	if err := o.Validate(); err != nil {
		return err
	}
	m, err := model.ReadFile(out.Model)
	if err != nil {
		return err
	}
	res, err := apply(o, m)
	if err != nil {
		return err
	}
	res.Info.Model = out.Model
	out.Model = "" // the model read is not written over
	return finishRun(res, &o, &out, e)
}

// finishRun writes the outputs of a run and says where they are.
func finishRun(res *kinmap.Result, o *kinmap.Options, out *cli.Outputs, e *env) error {
	if err := cli.Write(res, o, out); err != nil {
		return err
	}
	cli.Report(e.stdout, e.stderr, res, out.Out)
	return nil
}

func demoCmd(args []string, e *env) error {
	var out cli.Outputs
	f := cli.New(commandNamed("demo"), nil)
	f.Section("Output")
	f.Str(&out.Out, "out", "kinmap-demo", "output `DIR`ectory; the generated dump goes to DIR/data")
	f.Bool(&out.Quiet, "quiet", false, "no progress messages")
	if err := f.Parse(args, e.stdout); err != nil {
		return err
	}
	if f.NArg() > 0 {
		return cli.UsageError("demo takes no arguments, only --out DIR")
	}
	spec, err := scenarios.DefaultSpec("pumping")
	if err != nil {
		return err
	}
	data := filepath.Join(out.Out, "data")
	fmt.Fprintf(e.stdout, "generating the %s scenario (%d sites, %d weeks) in %s\n", spec.Name, spec.Sites, spec.Weeks, data)
	// The demo reads one dump; the other formats are for "kinmap scenario".
	files, err := writeScenario(spec, data, scenarios.FileLongParquet, scenarios.FileSites, scenarios.FileTruthWin, scenarios.FileTruthSwitch)
	if err != nil {
		return err
	}
	o := kinmap.DefaultOptions()
	o.Data = []string{files.dump}
	o.Sites = files.register
	o.Units = files.units
	if !out.Quiet && e.terminal {
		o.Log = e.stderr
	}
	res, err := kinmap.Train(o)
	if err != nil {
		return err
	}
	return finishRun(res, &o, &out, e)
}

func scenarioCmd(args []string, e *env) error {
	var out cli.Outputs
	var sites, weeks, seed int
	f := cli.New(commandNamed("scenario"), nil)
	f.Section("Scenario")
	f.Int(&sites, "sites", 0, "`N` sites (default: the scenario's own)")
	f.Int(&weeks, "weeks", 0, "`W` weeks of readings (default: the scenario's own)")
	f.Int(&seed, "seed", 0, "random seed `S` (default: the scenario's own)")
	f.Section("Output")
	f.Str(&out.Out, "out", "", "output `DIR`ectory")
	// The scenario name comes first; the flag package stops at it otherwise.
	if len(args) == 0 || len(args[0]) == 0 || args[0][0] == '-' {
		if err := f.Parse(args, e.stdout); err != nil {
			return err
		}
		if f.NArg() > 0 {
			return cli.UsageError("the scenario name comes before the options: kinmap scenario %s --out DIR", f.Arg(0))
		}
		return cli.UsageError("no scenario named: pick one of %v", scenarios.Names())
	}
	name := args[0]
	if err := f.Parse(args[1:], e.stdout); err != nil {
		return err
	}
	if f.NArg() > 0 {
		return cli.UsageError("unexpected arguments %q: scenario takes one name and options", f.Args())
	}
	spec, err := scenarios.DefaultSpec(name)
	if err != nil {
		return cli.UsageError("%v", err)
	}
	if out.Out == "" {
		return cli.UsageError("no output folder: name one with --out DIR")
	}
	// Only the flags given replace the scenario's own values, so that
	// "--seed 0" chooses seed 0 and "--sites 0" is refused by Validate.
	f.Visit(func(fl *flag.Flag) {
		switch fl.Name {
		case "sites":
			spec.Sites = sites
		case "weeks":
			spec.Weeks = weeks
		case "seed":
			spec.Seed = int64(seed)
		}
	})
	if err := spec.Validate(); err != nil {
		return cli.UsageError("%v", err)
	}
	files, err := writeScenario(spec, out.Out)
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
	units          map[string]string // of the channels, those with a unit
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
	units := map[string]string{}
	for _, c := range fleet.Channels {
		if c.Unit != "" && c.Unit != "1" { // "1" marks a dimensionless share, read bare
			units[c.Name] = c.Unit
		}
	}
	return scenarioFiles{
		dump:     filepath.Join(dir, scenarios.FileLongParquet),
		register: filepath.Join(dir, scenarios.FileSites),
		all:      all,
		units:    units,
	}, nil
}

func commandNamed(name string) cli.Command {
	for _, c := range commands() {
		if c.Name == name {
			return c.Command
		}
	}
	panic("kinmap: no command " + name)
}
