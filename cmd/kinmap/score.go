package main

import (
	"encoding/json"
	"fmt"
	"io"
	"strings"
	"time"

	"github.com/kinmap/kinmap/internal/cli"
	"github.com/kinmap/kinmap/score"
)

// scoreOptions are the command line of score.
type scoreOptions struct {
	out, truth string
	tolerance  time.Duration
	json       bool
}

// scoreFlags returns the flags of score, which set o.
func scoreFlags(o *scoreOptions) *cli.Flags {
	o.tolerance = 24 * time.Hour
	f := cli.New(commandNamed("score"), nil)
	f.Section("Input")
	f.Str(&o.out, "out", "", "output `DIR` of a kinmap run (its timeline and switches tables)")
	f.Str(&o.truth, "truth", "", "truth `PATH`: a folder with truth-windows.csv (and truth-switches.csv), or a CSV file of site, window_start, regime")
	f.Section("Scoring")
	f.Duration(&o.tolerance, "tolerance", "a found switch matches a true one of the same site at most `LENGTH` apart (Go durations plus d and w)")
	f.Section("Output")
	f.Bool(&o.json, "json", false, "print the report as JSON")
	return f
}

func scoreCmd(args []string, e *env) error {
	var o scoreOptions
	f := scoreFlags(&o)
	if err := f.Parse(args, e.stdout); err != nil {
		return err
	}
	switch {
	case f.NArg() > 0:
		return cli.UsageError("unexpected arguments %q: score takes only options", f.Args())
	case o.out == "":
		return cli.UsageError("no output folder to score: name it with --out DIR")
	case o.truth == "":
		return cli.UsageError("no truth: name a folder or windows file with --truth PATH")
	case o.tolerance < 0:
		return cli.UsageError("--tolerance %v: want a length of 0 or more", o.tolerance)
	}
	r, err := score.Folder(o.out, o.truth, o.tolerance)
	if err != nil {
		return err
	}
	if o.json {
		enc := json.NewEncoder(e.stdout)
		enc.SetIndent("", "  ")
		return enc.Encode(r)
	}
	printScore(e.stdout, r, o.out, o.truth)
	return nil
}

// printScore writes the report as a table with the source of each measure.
func printScore(w io.Writer, r score.Report, out, truth string) {
	fmt.Fprintf(w, "%s scored against %s\n", out, truth)
	fmt.Fprintf(w, "windows: %d in the truth, %d scored, %d missing from the output (skipped, e.g. for low coverage), %d not in the truth\n",
		r.TruthWindows, r.Scored, r.Missing, r.Extra)
	fmt.Fprintf(w, "sites: %d; regimes: %d true, %d found; switches: %d true, %d found\n\n",
		r.Sites, r.TrueRegimes, r.FoundRegimes, r.TrueSwitches, r.FoundSwitches)
	tol := cli.FormatDuration(r.Tolerance)
	rows := []struct {
		name        string
		found, base string
		source      string
	}{
		{"adjusted Rand index (ARI)", num(r.Found.ARI), num(r.Baseline.ARI), "Hubert and Arabie 1985"},
		{"adjusted mutual information", num(r.Found.AMI), num(r.Baseline.AMI), "Vinh, Epps and Bailey 2010, arithmetic mean"},
		{"segment covering", num(r.Found.Covering), num(r.Baseline.Covering), "Arbeláez et al. 2011; van den Burg and Williams 2020"},
		{"switch precision", precision(r.Found.Switches), precision(r.Baseline.Switches), "one to one within ±" + tol},
		{"switch recall", num(r.Found.Switches.Recall), num(r.Baseline.Switches.Recall), ""},
		{"switch F1", num(r.Found.Switches.F1), num(r.Baseline.Switches.F1), ""},
		{"switches matched", fmt.Sprint(r.Found.Switches.TP), fmt.Sprint(r.Baseline.Switches.TP), ""},
	}
	fmt.Fprintf(w, "%-28s %7s %10s  %s\n", "measure", "kinmap", "no switch", "source")
	for _, row := range rows {
		fmt.Fprintln(w, strings.TrimRight(fmt.Sprintf("%-28s %7s %10s  %s", row.name, row.found, row.base, row.source), " "))
	}
	fmt.Fprintln(w, "\nno switch: every site held all along in the true regime it spends most windows in")
	fmt.Fprintln(w, "(taken from the truth). Precision —: no switch claimed.")
}

func num(v float64) string { return fmt.Sprintf("%.3f", v) }

// precision is "—" when no switch was found, where the share is undefined.
func precision(m score.Match) string {
	if m.TP+m.FP == 0 {
		return "—"
	}
	return num(m.Precision)
}
