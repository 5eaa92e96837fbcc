package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/internal/cli"
	"github.com/kinmap/kinmap/scenarios"
	"github.com/kinmap/kinmap/score"
)

// scoreFleet writes a pumping fleet of 60 sites over two weeks, its dump,
// register and truth files, into a new folder and returns the folder and
// the files.
func scoreFleet(t *testing.T) (string, scenarioFiles) {
	t.Helper()
	spec, err := scenarios.DefaultSpec("pumping")
	if err != nil {
		t.Fatal(err)
	}
	spec.Sites, spec.Weeks, spec.Seed = 60, 2, 3
	dir := t.TempDir()
	files, err := writeScenario(spec, dir, scenarios.FileLongParquet, scenarios.FileSites, scenarios.FileTruthWin, scenarios.FileTruthSwitch)
	if err != nil {
		t.Fatal(err)
	}
	return dir, files
}

// scoreJSON runs kinmap score with --json and decodes its report.
func scoreJSON(t *testing.T, args ...string) score.Report {
	t.Helper()
	code, stdout, stderr := invoke(append([]string{"score", "--json"}, args...)...)
	if code != cli.ExitOK {
		t.Fatalf("score %v: exit status %d:\n%s", args, code, stderr)
	}
	var r score.Report
	if err := json.Unmarshal([]byte(stdout), &r); err != nil {
		t.Fatalf("score --json: %v:\n%s", err, stdout)
	}
	return r
}

// A new user's check: write a scenario, map it with the defaults and score
// the output against the scenario's truth. kinmap must do clearly better
// than holding every site in its true majority regime: close at least half
// of that baseline's gap to a perfect ARI, and find the switches that the
// baseline cannot (F1 at least 0.8, the baseline's 0).
func TestScoreRun(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end run")
	}
	truth, files := scoreFleet(t)
	out := filepath.Join(t.TempDir(), "out")
	if code, _, stderr := invoke("run", "--data", files.dump, "--sites", files.register, "--out", out, "--quiet"); code != cli.ExitOK {
		t.Fatalf("run: exit status %d:\n%s", code, stderr)
	}
	r := scoreJSON(t, "--out", out, "--truth", truth)
	t.Logf("%d of %d windows scored, %d sites, %d regimes found (%d true); ARI %.3f (no switch %.3f), AMI %.3f (%.3f), covering %.3f (%.3f); switches %d found, %d true, %d matched: P %.3f, R %.3f, F1 %.3f",
		r.Scored, r.TruthWindows, r.Sites, r.FoundRegimes, r.TrueRegimes, r.Found.ARI, r.Baseline.ARI, r.Found.AMI, r.Baseline.AMI,
		r.Found.Covering, r.Baseline.Covering, r.FoundSwitches, r.TrueSwitches, r.Found.Switches.TP,
		r.Found.Switches.Precision, r.Found.Switches.Recall, r.Found.Switches.F1)
	if r.TruthWindows != 60*14 || r.Scored+r.Missing != r.TruthWindows || r.Extra != 0 || r.Sites != 60 {
		t.Errorf("windows: %d in the truth, %d scored, %d missing, %d extra, %d sites; want 840 = scored + missing, none extra, 60 sites",
			r.TruthWindows, r.Scored, r.Missing, r.Extra, r.Sites)
	}
	if r.TrueSwitches == 0 || r.Baseline.Switches.F1 != 0 || r.Baseline.Switches.TP != 0 {
		t.Errorf("%d true switches, no-switch baseline F1 %g with %d matched; want switches to find and 0", r.TrueSwitches, r.Baseline.Switches.F1, r.Baseline.Switches.TP)
	}
	if gain := (r.Found.ARI - r.Baseline.ARI) / (1 - r.Baseline.ARI); gain < 0.5 {
		t.Errorf("ARI %.3f closes %.2f of the no-switch baseline's gap to 1 (baseline %.3f), want at least 0.5", r.Found.ARI, gain, r.Baseline.ARI)
	}
	if r.Found.Switches.F1 < 0.8 {
		t.Errorf("switch F1 %.3f, want at least 0.8", r.Found.Switches.F1)
	}
	if r.Found.Covering <= r.Baseline.Covering {
		t.Errorf("covering %.3f, no better than the no-switch baseline's %.3f", r.Found.Covering, r.Baseline.Covering)
	}

	// The table names every measure with its source and shows the figures
	// of the report.
	code, table, stderr := invoke("score", "--out", out, "--truth", truth)
	if code != cli.ExitOK {
		t.Fatalf("score: exit status %d:\n%s", code, stderr)
	}
	for _, want := range []string{
		"adjusted Rand index", "Hubert and Arabie 1985", fmt.Sprintf("%.3f", r.Found.ARI), fmt.Sprintf("%.3f", r.Baseline.ARI),
		"adjusted mutual information", "Vinh, Epps and Bailey 2010", fmt.Sprintf("%.3f", r.Found.AMI),
		"segment covering", "Arbeláez", "van den Burg and Williams 2020", fmt.Sprintf("%.3f", r.Found.Covering),
		"switch F1", fmt.Sprintf("%.3f", r.Found.Switches.F1), "±1d",
		fmt.Sprintf("%d missing from the output", r.Missing),
	} {
		if !strings.Contains(table, want) {
			t.Errorf("the table lacks %q:\n%s", want, table)
		}
	}

	// Without the CSV tables, the Parquet ones give the same report.
	for _, name := range []string{export.TimelineCSVFile, export.SwitchesCSVFile} {
		if err := os.Remove(filepath.Join(out, name)); err != nil {
			t.Fatal(err)
		}
	}
	if pq := scoreJSON(t, "--out", out, "--truth", truth); pq != r {
		t.Errorf("from Parquet:\n%+v\nfrom CSV:\n%+v", pq, r)
	}
}

// The truth scored against itself, as if it were an output folder, is
// perfect: ARI, AMI, covering and switch F1 all 1, nothing missing.
func TestScoreTruthItself(t *testing.T) {
	// The names score reads are those the scenarios write.
	if score.TruthWindowsFile != scenarios.FileTruthWin || score.TruthSwitchesFile != scenarios.FileTruthSwitch {
		t.Fatalf("score reads %s and %s, scenarios write %s and %s", score.TruthWindowsFile, score.TruthSwitchesFile, scenarios.FileTruthWin, scenarios.FileTruthSwitch)
	}
	truth, _ := scoreFleet(t)
	self := t.TempDir()
	for from, to := range map[string]string{
		scenarios.FileTruthWin:    export.TimelineCSVFile,
		scenarios.FileTruthSwitch: export.SwitchesCSVFile,
	} {
		b, err := os.ReadFile(filepath.Join(truth, from))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(self, to), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	r := scoreJSON(t, "--out", self, "--truth", truth, "--tolerance", "0s")
	if r.Found.ARI != 1 || r.Found.AMI != 1 || r.Found.Covering != 1 || r.Found.Switches.F1 != 1 || r.Missing != 0 || r.Extra != 0 || r.TrueSwitches == 0 {
		t.Errorf("the truth against itself: %+v; want 1 throughout, nothing missing or extra", r)
	}
}

func TestScoreUsage(t *testing.T) {
	dir := t.TempDir()
	tests := []struct {
		name string
		args []string
		code int
		want string // in stderr
	}{
		{"no output folder", []string{"--truth", dir}, cli.ExitUsage, "--out DIR"},
		{"no truth", []string{"--out", dir}, cli.ExitUsage, "--truth PATH"},
		{"arguments", []string{"--out", dir, "--truth", dir, "extra"}, cli.ExitUsage, "extra"},
		{"bad tolerance", []string{"--out", dir, "--truth", dir, "--tolerance", "soon"}, cli.ExitUsage, "soon"},
		{"negative tolerance", []string{"--out", dir, "--truth", dir, "--tolerance", "-1h"}, cli.ExitUsage, "-1h"},
		{"no truth file", []string{"--out", dir, "--truth", dir}, cli.ExitData, score.TruthWindowsFile},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			code, _, stderr := invoke(append([]string{"score"}, tt.args...)...)
			if code != tt.code || !strings.Contains(stderr, tt.want) {
				t.Errorf("exit status %d, want %d; stderr does not name %q?\n%s", code, tt.code, tt.want, stderr)
			}
		})
	}
}
