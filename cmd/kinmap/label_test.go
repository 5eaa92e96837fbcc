package main

import (
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/kinmap/kinmap/internal/cli"
	"github.com/kinmap/kinmap/model"
)

// kinmap label prints the labels to start from, applies an edited file,
// refuses a bad one naming its row without touching the model, and the
// next assign shows the labels and the units given.
func TestLabelCommand(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end run")
	}
	_, dump, _ := smallFleet(t, 12)
	dir := t.TempDir()
	modelFile := smallModel(t, dir, dump, "--regimes", "2", "--units", "flow=m3/h")
	code, stdout, stderr := invoke("label", "--model", modelFile)
	if code != cli.ExitOK {
		t.Fatalf("label: exit status %d:\n%s", code, stderr)
	}
	recs, err := csv.NewReader(strings.NewReader(stdout)).ReadAll()
	if err != nil || len(recs) != 3 || strings.Join(recs[0], ",") != "regime,name,status,description" || recs[1][0] != "1" || recs[2][0] != "2" {
		t.Fatalf("label printed %q (%v), want a header and regimes 1 and 2", stdout, err)
	}
	// The descriptions are those of the run's outputs: levels first.
	b, err := os.ReadFile(filepath.Join(dir, "train", "regimes.geojson"))
	if err != nil {
		t.Fatal(err)
	}
	var fc struct {
		Features []struct {
			Properties struct {
				Regime      int
				Description string
			}
		}
	}
	if err := json.Unmarshal(b, &fc); err != nil {
		t.Fatal(err)
	}
	for _, f := range fc.Features {
		p := f.Properties
		if got := recs[p.Regime][3]; got != p.Description || !strings.Contains(got, "median") || !strings.Contains(got, "m3/h") {
			t.Errorf("label describes regime %d as %q, the outputs as %q", p.Regime, got, p.Description)
		}
	}

	before, err := os.ReadFile(modelFile)
	if err != nil {
		t.Fatal(err)
	}
	bad := filepath.Join(dir, "bad.csv")
	os.WriteFile(bad, []byte("regime,name,status\n1,baseline,normal\n2,worn,faulty\n"), 0o644)
	code, _, stderr = invoke("label", "--model", modelFile, "--file", bad)
	if code != cli.ExitData || !strings.Contains(stderr, bad+": row 3: column \"status\"") {
		t.Errorf("a bad status: exit status %d, %s", code, stderr)
	}
	if after, _ := os.ReadFile(modelFile); string(after) != string(before) {
		t.Error("a refused labels file changed the model")
	}

	recs[1][1], recs[1][2] = "baseline", "normal"
	recs[2][1], recs[2][2] = "wet well", "watch"
	good := filepath.Join(dir, "regimes.csv")
	f, err := os.Create(good)
	if err != nil {
		t.Fatal(err)
	}
	csv.NewWriter(f).WriteAll(recs)
	f.Close()
	code, stdout, stderr = invoke("label", "--model", modelFile, "--file", good)
	if code != cli.ExitOK || !strings.Contains(stdout, `regime 1: "baseline" normal (was unlabelled)`) {
		t.Fatalf("label: exit status %d:\n%s%s", code, stdout, stderr)
	}
	// Written through a transaction: no lock, journal or temporary file
	// stays beside the model.
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		if strings.HasPrefix(e.Name(), ".kinmap") {
			t.Errorf("%s left beside the model", e.Name())
		}
	}
	m, err := model.ReadFile(modelFile)
	if err != nil {
		t.Fatal(err)
	}
	if g := m.Regimes; g[0].Name != "baseline" || g[1].Status != model.StatusWatch || m.Units["flow"] != "m3/h" {
		t.Errorf("model regimes %+v, units %v", g, m.Units)
	}

	out := filepath.Join(dir, "assigned")
	code, _, stderr = invoke("assign", "--model", modelFile, "--data", dump, "--out", out, "--units", "vibration=mm/s", "--quiet")
	if code != cli.ExitOK {
		t.Fatalf("assign: exit status %d:\n%s", code, stderr)
	}
	regimes, err := os.ReadFile(filepath.Join(out, "regimes.geojson"))
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{`"regime_name":"baseline","regime_status":"normal"`, `"regime_name":"wet well","regime_status":"watch"`, "m3/h", "mm/s"} {
		if !strings.Contains(string(regimes), want) {
			t.Errorf("regimes.geojson lacks %s:\n%s", want, regimes)
		}
	}
	report, err := os.ReadFile(filepath.Join(out, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"Regimes in engineering terms", "wet well", "What the statistics mean"} {
		if !strings.Contains(string(report), want) {
			t.Errorf("report.html lacks %q", want)
		}
	}
}

func TestHelpFeatures(t *testing.T) {
	code, stdout, _ := invoke("help", "features")
	if code != cli.ExitOK {
		t.Fatalf("exit status %d", code)
	}
	for _, want := range []string{"flat ", "stuck sensor", "trend ", "slope per hour", "corr "} {
		if !strings.Contains(stdout, want) {
			t.Errorf("help features lacks %q:\n%s", want, stdout)
		}
	}
}
