package main

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/internal/cli"
	"github.com/kinmap/kinmap/scenarios"
)

// smallFleet writes a one-week pumping fleet of n sites as a long Parquet
// dump and a register into a new folder, and returns the fleet and the
// paths of both files.
func smallFleet(t *testing.T, n int) (fleet *scenarios.Fleet, dump, register string) {
	t.Helper()
	spec, err := scenarios.DefaultSpec("pumping")
	if err != nil {
		t.Fatal(err)
	}
	spec.Sites, spec.Weeks, spec.Seed = n, 1, 3
	if fleet, err = scenarios.Generate(spec); err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	if _, err := fleet.Write(dir, scenarios.FileLongParquet, scenarios.FileSites); err != nil {
		t.Fatal(err)
	}
	return fleet, filepath.Join(dir, scenarios.FileLongParquet), filepath.Join(dir, scenarios.FileSites)
}

// smallModel trains a small map on dump with the options extra, writes
// its outputs into dir/train and returns the path of its model, dir/model.
func smallModel(t *testing.T, dir, dump string, extra ...string) string {
	t.Helper()
	model := filepath.Join(dir, "model")
	args := append([]string{"run", "--data", dump, "--out", filepath.Join(dir, "train"), "--model", model,
		"--grid", "6x4", "--epochs", "2", "--quiet"}, extra...)
	if code, _, stderr := invoke(args...); code != cli.ExitOK {
		t.Fatalf("run: exit status %d:\n%s", code, stderr)
	}
	return model
}

// longRows counts the rows a long dump of the fleet holds: one per reading
// with a value, duplicated rows included.
func longRows(f *scenarios.Fleet) int64 {
	var n int64
	for _, s := range f.Sites {
		for _, ch := range s.Readings.Values {
			for _, v := range ch {
				if !math.IsNaN(v) {
					n++
				}
			}
		}
	}
	return n
}

// run.json records the inputs, the options given, the counts, the quality
// figures and the timings of a run.
func TestRunJSON(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end run")
	}
	fleet, dump, register := smallFleet(t, 12)
	out := filepath.Join(t.TempDir(), "out")
	code, _, stderr := invoke("run", "--data", dump, "--sites", register, "--out", out, "--grid", "6x4", "--epochs", "4", "--seed", "5", "--window", "1d", "--quiet")
	if code != cli.ExitOK {
		t.Fatalf("run: exit status %d:\n%s", code, stderr)
	}
	raw, err := os.ReadFile(filepath.Join(out, export.RunFile))
	if err != nil {
		t.Fatal(err)
	}
	// Decoded into plain maps, so that the test reads the file's own keys.
	var info struct {
		Command  string             `json:"command"`
		Started  time.Time          `json:"started"`
		Finished time.Time          `json:"finished"`
		Inputs   []map[string]any   `json:"inputs"`
		Register string             `json:"register"`
		Options  map[string]any     `json:"options"`
		Counts   map[string]float64 `json:"counts"`
		Quality  map[string]any     `json:"quality"`
		Timings  map[string]float64 `json:"timings_seconds"`
		Warnings json.RawMessage    `json:"warnings"`
	}
	if err := json.Unmarshal(raw, &info); err != nil {
		t.Fatalf("run.json: %v", err)
	}
	// Lists, empty or not, so that a reader can always iterate them.
	if !bytes.HasPrefix(info.Warnings, []byte("[")) {
		t.Errorf("run.json warnings %s, want a list", info.Warnings)
	}
	if _, ok := info.Quality["warnings"].([]any); !ok {
		t.Errorf("run.json quality.warnings %v, want a list", info.Quality["warnings"])
	}
	rows := longRows(fleet)
	if info.Command != "run" || info.Register != register || info.Finished.Before(info.Started) || info.Started.IsZero() {
		t.Errorf("run.json: command %q, register %q, started %v, finished %v", info.Command, info.Register, info.Started, info.Finished)
	}
	if len(info.Inputs) != 1 || info.Inputs[0]["path"] != dump || info.Inputs[0]["format"] != "parquet" || info.Inputs[0]["rows"] != float64(rows) {
		t.Errorf("run.json inputs %v, want %s as parquet with %d rows", info.Inputs, dump, rows)
	}
	// The options given on the command line, and a default.
	if info.Options["scaling"] != "zscore" {
		t.Errorf("run.json options.scaling = %v, want zscore", info.Options["scaling"])
	}
	for _, o := range []struct {
		group, key string
		want       any
	}{
		{"map", "seed", 5.0},
		{"map", "epochs", 4.0},
		{"map", "cols", 6.0},
		{"map", "rows", 4.0},
		{"map", "rule", "batch"},
		{"map", "cells", "hex"},
		{"map", "surface", "torus"},
		{"features", "window_ns", float64(24 * time.Hour)},
		{"features", "features", "basic"},
		{"ingest", "site_col", "site"},
	} {
		group, _ := info.Options[o.group].(map[string]any)
		if got := group[o.key]; got != o.want {
			t.Errorf("run.json options.%s.%s = %v, want %v", o.group, o.key, got, o.want)
		}
	}
	// The map's shape is recorded by name only, not as the booleans of
	// earlier releases.
	if m, _ := info.Options["map"].(map[string]any); m["hex"] != nil || m["flat"] != nil {
		t.Errorf("run.json options.map records hex %v and flat %v", m["hex"], m["flat"])
	}
	// Counts against what the scenario wrote: 7 daily windows per site.
	windows := float64(len(fleet.Sites) * 7 * fleet.Spec.Weeks)
	for _, c := range []struct {
		key  string
		want float64
	}{
		{"rows", float64(rows)},
		{"sites", float64(len(fleet.Sites))},
		{"channels", float64(len(fleet.Channels))},
		{"units", 24},
	} {
		if got, ok := info.Counts[c.key]; !ok || got != c.want {
			t.Errorf("run.json counts.%s = %v, want %v", c.key, got, c.want)
		}
	}
	if got := info.Counts["windows"] + info.Counts["windows_skipped"]; got != windows || info.Counts["windows"] == 0 {
		t.Errorf("run.json: %v windows and %v skipped, want %v in all", info.Counts["windows"], info.Counts["windows_skipped"], windows)
	}
	if info.Counts["regimes"] < 1 || info.Counts["features"] < 1 || info.Counts["readings"] < 1 {
		t.Errorf("run.json counts %v: no regimes, features or readings", info.Counts)
	}
	qe, _ := info.Quality["qe"].(float64)
	te, okTE := info.Quality["te"].(float64)
	unused, okUnused := info.Quality["unused"].(float64)
	if !(qe > 0) || !okTE || te < 0 || te > 1 || !okUnused || unused < 0 || unused > 1 {
		t.Errorf("run.json quality %v: want qe > 0, te and unused in [0, 1]", info.Quality)
	}
	for _, step := range []string{"read", "features", "train", "decode"} {
		if s, ok := info.Timings[step]; !ok || s < 0 {
			t.Errorf("run.json timings_seconds %v: no time for %s", info.Timings, step)
		}
	}
}

// Progress goes to stderr when it is a terminal, with a line per training
// epoch and its quantization error; --quiet and a stderr that is no
// terminal silence it.
func TestProgress(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end run")
	}
	_, dump, _ := smallFleet(t, 12)
	const epochs = 4
	epochLine := regexp.MustCompile(`(?m)^epoch (\d+): quantization error (\S+)$`)
	tests := []struct {
		name     string
		terminal bool
		quiet    bool
		progress bool
	}{
		{"terminal", true, false, true},
		{"terminal, quiet", true, true, false},
		{"no terminal", false, false, false},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			args := []string{"run", "--data", dump, "--out", filepath.Join(t.TempDir(), "out"), "--grid", "6x4", "--epochs", strconv.Itoa(epochs)}
			if tt.quiet {
				args = append(args, "--quiet")
			}
			var stdout, stderr bytes.Buffer
			if code := dispatch(args, &env{stdout: &stdout, stderr: &stderr, terminal: tt.terminal}); code != cli.ExitOK {
				t.Fatalf("exit status %d:\n%s", code, stderr.String())
			}
			found := epochLine.FindAllStringSubmatch(stderr.String(), -1)
			if !tt.progress {
				// Warnings are no progress and stay.
				for line := range strings.Lines(stderr.String()) {
					if !strings.HasPrefix(line, "warning: ") {
						t.Errorf("progress line %q", strings.TrimSpace(line))
					}
				}
				return
			}
			if len(found) != epochs {
				t.Fatalf("%d epoch lines, want %d:\n%s", len(found), epochs, stderr.String())
			}
			for i, m := range found {
				qe, err := strconv.ParseFloat(m[2], 64)
				if m[1] != strconv.Itoa(i+1) || err != nil || !(qe > 0) {
					t.Errorf("epoch line %q: want epoch %d with a positive quantization error", m[0], i+1)
				}
			}
			for _, want := range []string{"reading 1 input", "features: "} {
				if !strings.Contains(stderr.String(), want) {
					t.Errorf("no progress line with %q:\n%s", want, stderr.String())
				}
			}
		})
	}
}

// A model refuses a dump whose features differ from its own, naming them.
func TestAssignSchemaMismatch(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end run")
	}
	_, dump, _ := smallFleet(t, 12)
	dir := t.TempDir()
	model := smallModel(t, dir, dump, "--channels", "flow,pressure,current,vibration")
	// The later dump has lost its vibration sensor and gained the bearing
	// temperature.
	out := filepath.Join(dir, "assigned")
	code, _, stderr := invoke("assign", "--model", model, "--data", dump, "--out", out, "--channels", "flow,pressure,current,bearing_temp")
	if code != cli.ExitData {
		t.Errorf("assign: exit status %d, want %d (data error):\n%s", code, cli.ExitData, stderr)
	}
	for _, want := range []string{"missing", "vibration.mean", "vibration.p95", "extra", "bearing_temp.mean", "bearing_temp.p95"} {
		if !strings.Contains(stderr, want) {
			t.Errorf("assign: message does not name %q:\n%s", want, stderr)
		}
	}
	if strings.Contains(stderr, "flow.mean") {
		t.Errorf("assign: message names a feature both have:\n%s", stderr)
	}
	if _, err := os.Stat(out); err == nil {
		t.Error("a refused assign created its output folder")
	}
}
