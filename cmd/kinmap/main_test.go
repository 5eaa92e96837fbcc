package main

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/internal/cli"
	"github.com/kinmap/kinmap/scenarios"
)

// invoke runs the command with args and returns its exit status and output.
func invoke(args ...string) (code int, stdout, stderr string) {
	var out, errs bytes.Buffer
	code = run(args, &out, &errs)
	return code, out.String(), errs.String()
}

func TestUsageErrors(t *testing.T) {
	dump := filepath.Join(t.TempDir(), "dump.csv")
	if err := os.WriteFile(dump, []byte("site,time,channel,value\na,2026-01-01T00:00:00Z,flow,1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	// An hour of readings every 5 s.
	var steady strings.Builder
	steady.WriteString("site,time,channel,value\n")
	for i := range 720 {
		fmt.Fprintf(&steady, "a,%d,flow,%d\n", 1_780_000_000+5*i, i%7)
	}
	dump5s := filepath.Join(t.TempDir(), "dump5s.csv")
	if err := os.WriteFile(dump5s, []byte(steady.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name string
		args []string
		want string // in stderr
	}{
		{"no command", nil, "Commands:"},
		// Ran four minutes, or never ended, or took 8 GB.
		{"window shorter than the step", []string{"run", "--data", dump5s, "--out", t.TempDir(), "--window", "10ms"}, "--window 10ms is shorter than the sampling step found in the data (5s)"},
		{"window of 1ns", []string{"run", "--data", dump5s, "--out", t.TempDir(), "--window", "1ns"}, "--window 1ns is shorter"},
		{"stride shorter than the step", []string{"run", "--data", dump5s, "--out", t.TempDir(), "--window", "10m", "--stride", "1ms"}, "--stride 1ms is shorter"},
		{"unknown command", []string{"crunch"}, `unknown command "crunch"`},
		{"unknown flag", []string{"run", "--colour", "red"}, "colour"},
		{"no output folder", []string{"run", "--data", dump}, "--out DIR"},
		{"no dump", []string{"run", "--out", t.TempDir()}, "--data"},
		{"bad time unit", []string{"run", "--data", dump, "--out", t.TempDir(), "--time-unit", "fortnight"}, "fortnight"},
		{"bad grid", []string{"run", "--data", dump, "--out", t.TempDir(), "--grid", "30by20"}, "COLSxROWS"},
		{"bad window", []string{"run", "--data", dump, "--out", t.TempDir(), "--window", "a while"}, "a while"},
		{"odd rows on a hexagonal torus", []string{"run", "--data", dump, "--out", t.TempDir(), "--grid", "30x21"}, "even number of rows"},
		{"learning rate above 1", []string{"run", "--data", dump, "--out", t.TempDir(), "--rule", "online", "--eta0", "2"}, "Eta0"},
		{"negative dwell", []string{"run", "--data", dump, "--out", t.TempDir(), "--min-dwell", "-1"}, "--min-dwell -1: want a value of 1 window or more"},
		{"quantile above 1", []string{"run", "--data", dump, "--out", t.TempDir(), "--unfamiliar-q", "1.5"}, "--unfamiliar-q 1.5: want a value in (0, 1]"},
		{"negative switch cost", []string{"assign", "--model", "m", "--data", dump, "--out", t.TempDir(), "--switch-cost", "-1"}, "--switch-cost -1: want a value of 0 or more"},
		// The work list's thresholds are worded with their options.
		{"confidence above 1", []string{"run", "--data", dump, "--out", t.TempDir(), "--top-confidence", "1.5"}, "--top-confidence 1.5: want a value in (0, 1]"},
		{"negative stay", []string{"assign", "--model", "m", "--data", dump, "--out", t.TempDir(), "--long-stay", "-2"}, "--long-stay -2: want a value of 1 window or more"},
		// An explicit 0 would be read as the default: refused instead.
		{"confidence of 0", []string{"run", "--data", dump, "--out", t.TempDir(), "--top-confidence", "0"}, "--top-confidence 0: want a value in (0, 1]"},
		{"fleet p of 0", []string{"assign", "--model", "m", "--data", dump, "--out", t.TempDir(), "--fleet-p", "0"}, "--fleet-p 0: want a value in (0, 1)"},
		{"dwell of 0", []string{"update", "--model", "m", "--data", dump, "--out", t.TempDir(), "--min-dwell", "0"}, "--min-dwell 0: want a value of 1 window or more"},
		{"fleet p of 1", []string{"update", "--model", "m", "--data", dump, "--out", t.TempDir(), "--fleet-p", "1"}, "--fleet-p 1: want a value in (0, 1)"},
		{"unknown time zone", []string{"run", "--data", dump, "--out", t.TempDir(), "--tz", "Mars/Olympus"}, "Mars/Olympus"},
		{"bad scaling", []string{"run", "--data", dump, "--out", t.TempDir(), "--scale", "minmax"}, "minmax"},
		{"assign without model", []string{"assign", "--data", dump, "--out", t.TempDir()}, "--model FILE"},
		{"unit without a channel", []string{"run", "--data", dump, "--out", t.TempDir(), "--units", "m3/h"}, `unit "m3/h": want CHANNEL=UNIT`},
		{"label without model", []string{"label", "--file", "regimes.csv"}, "--model FILE"},
		{"label with arguments", []string{"label", "--model", "m", "regimes.csv"}, "unexpected arguments"},
		{"unknown scenario", []string{"scenario", "volcano", "--out", t.TempDir()}, "volcano"},
		{"too many sites", []string{"scenario", "pumping", "--out", t.TempDir(), "--sites", "6000"}, "6000 sites"},
		{"no sites", []string{"scenario", "pumping", "--out", t.TempDir(), "--sites", "0"}, "0 sites"},
		{"negative sites", []string{"scenario", "pumping", "--out", t.TempDir(), "--sites", "-3"}, "-3 sites"},
		{"no weeks", []string{"scenario", "pumping", "--out", t.TempDir(), "--weeks", "0"}, "0 weeks"},
		{"negative weeks", []string{"scenario", "reefers", "--out", t.TempDir(), "--weeks", "-1"}, "-1 weeks"},
		{"scenario with arguments", []string{"scenario", "pumping", "--out", t.TempDir(), "extra"}, "extra"},
		{"scenario name last", []string{"scenario", "--out", t.TempDir(), "pumping"}, "comes before"},
		{"help with arguments", []string{"help", "run", "extra"}, "extra"},
		{"demo with arguments", []string{"demo", "extra"}, "no arguments"},
		// Names only the data can judge, but misspelt options all the same.
		{"unknown channel in the feature list", []string{"run", "--data", dump, "--out", t.TempDir(), "--features", "wind.mean"}, `unknown channel "wind" in the feature list (channels: flow)`},
		{"weight of an unknown feature", []string{"run", "--data", dump, "--out", t.TempDir(), "--min-coverage", "0", "--weights", "flow.maen=2"}, "weights for unknown features flow.maen"},
		// A NaN weight once passed the flag and failed later as a data error.
		{"NaN weight", []string{"run", "--data", dump, "--out", t.TempDir(), "--weights", "flow.mean=NaN"}, `weight "flow.mean=NaN"`},
		{"negative weight", []string{"run", "--data", dump, "--out", t.TempDir(), "--weights", "flow.mean=-3"}, `weight "flow.mean=-3"`},
		{"infinite weight", []string{"run", "--data", dump, "--out", t.TempDir(), "--weights", "flow.mean=+Inf"}, `weight "flow.mean=+Inf"`},
		{"NaN width", []string{"run", "--data", dump, "--out", t.TempDir(), "--sigma0", "NaN"}, "want a finite number"},
		{"NaN coverage", []string{"run", "--data", dump, "--out", t.TempDir(), "--min-coverage", "nan"}, "want a finite number"},
		// Ran out of memory in the batch rule before the limit.
		{"huge grid", []string{"run", "--data", dump, "--out", t.TempDir(), "--grid", "1000x1000"}, "limit of 4096"},
		// Flags renamed to kinmap's own words are refused with the new name.
		{"old lattice flag", []string{"run", "--data", dump, "--out", t.TempDir(), "--lattice", "rect"}, "--lattice is now --cells (hex or square)"},
		{"old lattice flag with =", []string{"run", "--lattice=hex", "--data", dump, "--out", t.TempDir()}, "--lattice is now --cells"},
		{"old sheet flag", []string{"run", "--data", dump, "--out", t.TempDir(), "-sheet"}, "--sheet is now --surface plane"},
		{"unknown surface", []string{"run", "--data", dump, "--out", t.TempDir(), "--surface", "sheet"}, `"sheet"`},
		{"unknown cells", []string{"run", "--data", dump, "--out", t.TempDir(), "--cells", "rect"}, `"rect"`},
		{"pattern matching nothing", []string{"run", "--data", filepath.Join(t.TempDir(), "missing-*.parquet"), "--out", t.TempDir()}, "matches no file"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			code, _, stderr := invoke(tt.args...)
			if code != cli.ExitUsage {
				t.Errorf("exit status %d, want %d (usage); stderr:\n%s", code, cli.ExitUsage, stderr)
			}
			if !strings.Contains(stderr, tt.want) {
				t.Errorf("stderr does not name %q:\n%s", tt.want, stderr)
			}
		})
	}
}

func TestDataErrors(t *testing.T) {
	dir := t.TempDir()
	notParquet := filepath.Join(dir, "dump.parquet")
	if err := os.WriteFile(notParquet, []byte("PAR1 and then nothing"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, args := range [][]string{
		{"run", "--data", notParquet, "--out", filepath.Join(dir, "out")},
		{"assign", "--model", notParquet, "--data", notParquet, "--out", filepath.Join(dir, "out")},
	} {
		code, _, stderr := invoke(args...)
		if code != cli.ExitData {
			t.Errorf("%v: exit status %d, want %d (data error); stderr:\n%s", args, code, cli.ExitData, stderr)
		}
		if lines := strings.Count(strings.TrimSpace(stderr), "\n"); lines != 0 {
			t.Errorf("%v: error takes %d lines, want one:\n%s", args, lines+1, stderr)
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "out")); err == nil {
		t.Error("a failed run created its output folder")
	}
}

// Every command documents every option with its default and an example.
func TestHelp(t *testing.T) {
	code, stdout, _ := invoke("help")
	if code != cli.ExitOK {
		t.Fatalf("help: exit status %d", code)
	}
	if code, out, _ := invoke("help", "help"); code != cli.ExitOK || out != stdout {
		t.Errorf("help help: exit status %d, output %q; want the overview", code, out)
	}
	for _, c := range commands() {
		if !strings.Contains(stdout, c.Name) {
			t.Errorf("help does not list %s", c.Name)
		}
		if c.run == nil {
			continue
		}
		code, out, _ := invoke(c.Name, "-h")
		if code != cli.ExitOK {
			t.Errorf("%s -h: exit status %d", c.Name, code)
		}
		for _, want := range []string{"Usage:", c.Usage, "Example:", c.Example} {
			if !strings.Contains(out, want) {
				t.Errorf("%s -h lacks %q:\n%s", c.Name, want, out)
			}
		}
		if code2, out2, _ := invoke("help", c.Name); code2 != cli.ExitOK || out2 != out {
			t.Errorf("help %s differs from %s -h", c.Name, c.Name)
		}
	}
	if _, out, _ := invoke("update", "-h"); !strings.Contains(out, "--regimes K") || strings.Contains(out, "--grid") {
		t.Errorf("update -h should offer --regimes but not --grid:\n%s", out)
	}
	if _, out, _ := invoke("scenario", "-h"); !strings.Contains(out, "(default: the scenario's own)") || strings.Contains(out, "(default 0)") {
		t.Errorf("scenario -h should state each default once:\n%s", out)
	}
	_, out, _ := invoke("run", "-h")
	for _, want := range []string{"--site-col COLUMN", "(default site)", "--window LENGTH", "(default 1d)", "--min-coverage SHARE", "(default 0.6)", "--cells SHAPE", "(default hex)", "--surface SURFACE", "(default torus)", "--unfamiliar-q QUANTILE", "(default 0.99)"} {
		if !strings.Contains(out, want) {
			t.Errorf("run -h lacks %q", want)
		}
	}
}

// A new user's path: write a scenario, map it, apply the model to the same
// dump, then update it, each writing all outputs.
func TestScenarioRunAssignUpdate(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end run")
	}
	dir := t.TempDir()
	data := filepath.Join(dir, "fleet")
	code, stdout, stderr := invoke("scenario", "pumping", "--out", data, "--sites", "40", "--weeks", "2", "--seed", "7")
	if code != cli.ExitOK {
		t.Fatalf("scenario: exit status %d:\n%s", code, stderr)
	}
	if n := strings.Count(stdout, "\n"); n != len(scenarios.FileNames()) {
		t.Errorf("scenario listed %d files, want %d:\n%s", n, len(scenarios.FileNames()), stdout)
	}
	dump := filepath.Join(data, scenarios.FileLongParquet)
	register := filepath.Join(data, scenarios.FileSites)
	first := filepath.Join(dir, "week1")
	history := filepath.Join(dir, "history")
	steps := [][]string{
		{"run", "--data", dump, "--sites", register, "--out", first, "--history", history, "--quiet"},
		{"assign", "--model", filepath.Join(first, export.ModelFile), "--data", dump, "--sites", register, "--out", filepath.Join(dir, "assigned"), "--history", history},
		{"update", "--model", filepath.Join(first, export.ModelFile), "--data", dump, "--out", filepath.Join(dir, "updated"), "--epochs", "3"},
	}
	for _, args := range steps {
		code, stdout, stderr := invoke(args...)
		if code != cli.ExitOK {
			t.Fatalf("%s: exit status %d:\n%s", args[0], code, stderr)
		}
		out := args[slices.Index(args, "--out")+1]
		if !strings.Contains(stdout, filepath.Join(out, export.ReportFile)) {
			t.Errorf("%s does not say where the report is:\n%s", args[0], stdout)
		}
		for _, name := range []string{export.SitesFile, export.RegimesFile, export.GeoPackageFile, export.TimelineParquetFile, export.TimelineCSVFile, export.SwitchesCSVFile, export.SwitchesParquetFile, export.FeaturesFile, export.ModelFile, export.RunFile, export.ReportFile} {
			if _, err := os.Stat(filepath.Join(out, name)); err != nil {
				t.Errorf("%s: %v", args[0], err)
			}
		}
		// The report says which command made it.
		if report, err := os.ReadFile(filepath.Join(out, export.ReportFile)); err != nil || !strings.Contains(string(report), "<title>kinmap "+args[0]+"</title>") {
			t.Errorf("%s: the report's title does not name the command (%v)", args[0], err)
		}
	}
	items, err := os.ReadDir(history)
	periods := 0
	for _, it := range items {
		if strings.HasPrefix(it.Name(), "period=") {
			periods++
		}
	}
	if err != nil || periods != 1 {
		t.Errorf("history holds %d periods (%v), want 1: the same dump twice replaces its windows", periods, err)
	}
}

// The scenario flags given replace the scenario's own values, and only
// those: --seed 0 is seed 0, not the default seed.
func TestScenarioFlags(t *testing.T) {
	tests := []struct {
		args   []string
		change func(*scenarios.Spec)
	}{
		{[]string{"--sites", "3", "--weeks", "1"}, func(s *scenarios.Spec) { s.Sites, s.Weeks = 3, 1 }},
		{[]string{"--sites", "3", "--weeks", "1", "--seed", "0"}, func(s *scenarios.Spec) { s.Sites, s.Weeks, s.Seed = 3, 1, 0 }},
		{[]string{"--seed", "9", "--weeks", "1", "--sites", "2"}, func(s *scenarios.Spec) { s.Sites, s.Weeks, s.Seed = 2, 1, 9 }},
	}
	files := []string{scenarios.FileSites, scenarios.FileLongParquet}
	var written [][]byte
	for _, tt := range tests {
		dir := t.TempDir()
		if code, _, stderr := invoke(append([]string{"scenario", "pumping", "--out", dir}, tt.args...)...); code != cli.ExitOK {
			t.Fatalf("scenario %v: exit status %d:\n%s", tt.args, code, stderr)
		}
		spec, err := scenarios.DefaultSpec("pumping")
		if err != nil {
			t.Fatal(err)
		}
		tt.change(&spec)
		fleet, err := scenarios.Generate(spec)
		if err != nil {
			t.Fatal(err)
		}
		want := t.TempDir()
		if _, err := fleet.Write(want, files...); err != nil {
			t.Fatal(err)
		}
		for _, name := range files {
			got, err1 := os.ReadFile(filepath.Join(dir, name))
			exp, err2 := os.ReadFile(filepath.Join(want, name))
			if err1 != nil || err2 != nil || !bytes.Equal(got, exp) {
				t.Errorf("scenario %v: %s differs from the fleet of %+v (%v, %v)", tt.args, name, spec, err1, err2)
			}
			if name == scenarios.FileSites {
				written = append(written, got)
			}
		}
	}
	if bytes.Equal(written[0], written[1]) {
		t.Error("--seed 0 wrote the same register as the default seed")
	}
}
