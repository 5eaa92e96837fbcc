package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/kinmap/kinmap/internal/cli"
)

// Outputs that cannot be written, or would destroy an input or a file
// kinmap did not write, are refused as usage errors before any data is
// read (the dump here is not even a valid one, so reading it first would
// end in a data error), and nothing is touched.
func TestOutputsCheckedFirst(t *testing.T) {
	dir := t.TempDir()
	write := func(name, content string) string {
		p := filepath.Join(dir, name)
		os.MkdirAll(filepath.Dir(p), 0o755)
		if err := os.WriteFile(p, []byte(content), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	dump := write("dump.csv", "not a dump at all")
	file := write("notes.txt", "a file")
	register := write("reg/sites.csv", "site,lat,lon\n")
	inOut := write("old/features.parquet", "a dump the user keeps here")
	foreign := write("mine/sites.png", "the user's own picture")
	tests := []struct {
		name string
		args []string
		want string
	}{
		{"--out is a file", []string{"run", "--data", dump, "--out", file}, "--out " + file + " is a file"},
		{"--model is the dump", []string{"run", "--data", dump, "--out", filepath.Join(dir, "o1"), "--model", dump}, "--model " + dump + " is an input"},
		{"--model is the register", []string{"run", "--data", dump, "--sites", register, "--out", filepath.Join(dir, "o2"), "--model", register}, "is an input"},
		{"--out holds the dump", []string{"run", "--data", inOut, "--out", filepath.Join(dir, "old")}, "would replace the input " + inOut},
		{"--out holds a file of the user", []string{"run", "--data", dump, "--out", filepath.Join(dir, "mine")}, "sites.png, which no kinmap run wrote"},
		{"--history is a file", []string{"run", "--data", dump, "--out", filepath.Join(dir, "o3"), "--history", file}, "--history " + file + " is a file"},
		{"--history holds the register", []string{"run", "--data", dump, "--sites", register, "--out", filepath.Join(dir, "o4"), "--history", filepath.Join(dir, "reg")}, "holds the input"},
		{"assign: --out holds the model read", []string{"assign", "--model", filepath.Join(dir, "old", "features.parquet"), "--data", dump, "--out", filepath.Join(dir, "old")}, "would replace the input"},
	}
	before := map[string]string{}
	for _, p := range []string{dump, file, register, inOut, foreign} {
		b, _ := os.ReadFile(p)
		before[p] = string(b)
	}
	for _, tc := range tests {
		code, _, stderr := invoke(tc.args...)
		if code != cli.ExitUsage || !strings.Contains(stderr, tc.want) {
			t.Errorf("%s: exit %d, stderr %q; want a usage error with %q", tc.name, code, stderr, tc.want)
		}
	}
	for p, want := range before {
		if b, err := os.ReadFile(p); err != nil || string(b) != want {
			t.Errorf("%s changed (%v)", p, err)
		}
	}
	for _, o := range []string{"o1", "o2", "o3", "o4"} {
		if _, err := os.Stat(filepath.Join(dir, o)); err == nil {
			t.Errorf("a refused run made %s", o)
		}
	}
}

// A --model that cannot be written fails the run with a message naming
// the path given, not a hidden temporary file, and leaves --out as the
// earlier run left it.
func TestModelWriteFails(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end run")
	}
	_, dump, register := smallFleet(t, 6)
	dir := t.TempDir()
	out := filepath.Join(dir, "out")
	if code, _, stderr := invoke("run", "--data", dump, "--sites", register, "--out", out, "--quiet"); code != cli.ExitOK {
		t.Fatalf("first run: exit %d: %s", code, stderr)
	}
	before, err := os.ReadFile(filepath.Join(out, "run.json"))
	if err != nil {
		t.Fatal(err)
	}
	model := filepath.Join(dir, "models", "fleet.model")
	if err := os.MkdirAll(model, 0o755); err != nil { // a folder where the file should go
		t.Fatal(err)
	}
	code, _, stderr := invoke("run", "--data", dump, "--sites", register, "--out", out, "--model", model, "--seed", "5", "--quiet")
	if code != cli.ExitData || !strings.Contains(stderr, model) || strings.Contains(stderr, ".kinmap-") {
		t.Errorf("exit %d, stderr %q; want a data error naming %s only", code, stderr, model)
	}
	if after, err := os.ReadFile(filepath.Join(out, "run.json")); err != nil || string(after) != string(before) {
		t.Errorf("the failed run replaced --out's files (%v)", err)
	}
}
