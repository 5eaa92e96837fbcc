package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/kinmap/kinmap/internal/cli"
)

// The events options through the command: renamed columns and a span are
// taken, a missing label column is a data error naming the file and the
// column, and an events file inside --out is refused before anything is
// read.
func TestRunEvents(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end run")
	}
	fleet, dump, _ := smallFleet(t, 8)
	dir := t.TempDir()
	site := fleet.Sites[0].ID
	good := filepath.Join(dir, "records.csv")
	if err := os.WriteFile(good, []byte("unit,when,what\n"+site+",2026-06-05T12:00:00Z,seal leak\nNOWHERE,2026-06-05T12:00:00Z,x\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	code, _, stderr := invoke("run", "--data", dump, "--out", out, "--grid", "6x4", "--epochs", "4", "--quiet",
		"--events", good, "--event-site-col", "unit", "--event-time-col", "when", "--event-label-col", "what", "--event-span", "2d")
	if code != cli.ExitOK {
		t.Fatalf("run: exit status %d:\n%s", code, stderr)
	}
	info, err := os.ReadFile(filepath.Join(out, "run.json"))
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{`"span": 172800000000000`, "NOWHERE", `"label_col": "what"`} {
		if !strings.Contains(string(info), want) {
			t.Errorf("run.json lacks %s", want)
		}
	}
	bad := filepath.Join(dir, "bad.csv")
	if err := os.WriteFile(bad, []byte("site,time\n"+site+",2026-06-05T12:00:00Z\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, stderr = invoke("run", "--data", dump, "--out", filepath.Join(dir, "out2"), "--quiet", "--events", bad)
	if code == cli.ExitOK || !strings.Contains(stderr, "bad.csv") || !strings.Contains(stderr, `column "label"`) {
		t.Errorf("missing label column: exit %d, %s", code, stderr)
	}
	inside := filepath.Join(out, "report.html")
	code, _, stderr = invoke("run", "--data", dump, "--out", out, "--quiet", "--events", inside)
	if code != cli.ExitUsage || !strings.Contains(stderr, "would replace the input") {
		t.Errorf("events file among the outputs: exit %d, %s", code, stderr)
	}
}
