package main

import (
	"bytes"
	"context"
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/kinmap/kinmap/beam/internal/beamtest"
	"github.com/kinmap/kinmap/internal/cli"
	"github.com/kinmap/kinmap/model"
)

func TestMain(m *testing.M) { os.Exit(beamtest.Main(m)) }

func parse(t *testing.T, args ...string) (*cmdline, error) {
	t.Helper()
	fs := flag.NewFlagSet("kinmap-beam", flag.ContinueOnError)
	fs.SetOutput(new(bytes.Buffer))
	c := newCLI(fs)
	return c, c.parse(args, new(bytes.Buffer))
}

func TestFlags(t *testing.T) {
	c, err := parse(t, "--data", "a.parquet", "--data", "gs://b/*.parquet", "--channels", "flow, pressure",
		"--window", "1w", "--stride", "1d12h", "--grid", "30x20", "--cells", "square", "--surface", "plane", "--seed", "42",
		"--weights", "flow.mean=2,vibration.p95=0.5", "--scale", "robust", "--site-col", "station",
		"--out", "o", "--work", "gs://b/tmp", "--shards", "8", "c.parquet")
	if err != nil {
		t.Fatal(err)
	}
	o, err := c.finish()
	if err != nil {
		t.Fatal(err)
	}
	for _, check := range []struct {
		name string
		ok   bool
	}{
		{"data", strings.Join(o.Data, " ") == "a.parquet gs://b/*.parquet c.parquet"},
		{"channels", strings.Join(o.Ingest.Channels, " ") == "flow pressure"},
		{"window", o.Features.Window == 7*24*time.Hour && o.Features.Stride == 36*time.Hour},
		{"grid", o.Map.Cols == 30 && o.Map.Rows == 20 && !o.Map.Hex && o.Map.Flat},
		{"seed", o.Map.Seed == 42},
		{"weights", len(o.Weights) == 2 && o.Weights["flow.mean"] == 2 && o.Weights["vibration.p95"] == 0.5},
		{"scale", o.Scaling == "robust"},
		{"register key follows the site column", o.Register.Key == "station" && o.Ingest.SiteCol == "station"},
		{"work", o.Work == "gs://b/tmp" && o.Shards == 8},
	} {
		if !check.ok {
			t.Errorf("%s: options %+v", check.name, o)
		}
	}

	for _, bad := range [][]string{{"--grid", "30"}, {"--cells", "tri"}, {"--surface", "sheet"}, {"--lattice", "hex"}, {"--sheet"}, {"--window", "3x"}, {"--weights", "flow.mean"}} {
		if _, err := parse(t, bad...); err == nil {
			t.Errorf("%v: no error", bad)
		}
	}
	if _, err := parse(t, "--sheet"); err == nil || !strings.Contains(err.Error(), "--sheet is now --surface plane") {
		t.Errorf("--sheet: error %v, want one naming --surface plane", err)
	}
}

// The command trains on Prism in this process, writes the output folder of
// "kinmap run" and the model, and says so; a missing --out is a usage error.
func TestRun(t *testing.T) {
	dump, register := beamtest.Fleet(t, "pumping", 8, 1)
	out := filepath.Join(t.TempDir(), "map")
	modelPath := filepath.Join(t.TempDir(), "copy.model")
	c, err := parse(t, "--data", dump, "--sites", register,
		"--epochs", "4", "--out", out, "--model", modelPath, "--quiet")
	if err != nil {
		t.Fatal(err)
	}
	var stdout, stderr bytes.Buffer
	if code := c.run(context.Background(), &stdout, &stderr); code != cli.ExitOK {
		t.Fatalf("exit %d: %s", code, stderr.String())
	}
	if !strings.HasPrefix(stdout.String(), "8 sites, 56 windows, ") || !strings.Contains(stdout.String(), "outputs in "+out) {
		t.Errorf("stdout %q", stdout.String())
	}
	for _, name := range []string{"sites.geojson", "regimes.geojson", "timeline.parquet", "timeline.csv", "switches.csv", "features.parquet", "model", "run.json", "report.html"} {
		if _, err := os.Stat(filepath.Join(out, name)); err != nil {
			t.Error(err)
		}
	}
	m, err := model.ReadFile(modelPath)
	if err != nil {
		t.Fatal(err)
	}
	if !m.Map.Lattice.Hex || m.Training.Epochs != 4 || m.Windows != 56 {
		t.Errorf("model: lattice %+v, %d epochs, %d windows; want the hexagonal default, 4 epochs, 56 windows", m.Map.Lattice, m.Training.Epochs, m.Windows)
	}

	c, _ = parse(t, "--data", dump)
	stderr.Reset()
	if code := c.run(context.Background(), &stdout, &stderr); code != cli.ExitUsage || !strings.Contains(stderr.String(), "--out") {
		t.Errorf("without --out: exit %d, %q; want %d and a word on --out", code, stderr.String(), cli.ExitUsage)
	}
}
