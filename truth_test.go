package kinmap_test

import (
	"path/filepath"
	"testing"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/scenarios"
)

// trainScenario generates the fleet of spec, writes its long Parquet dump
// and register, and runs kinmap.Train on them with the default options.
func trainScenario(t *testing.T, spec scenarios.Spec) (*scenarios.Fleet, *kinmap.Result) {
	t.Helper()
	fleet, o := scenarioOptions(t, spec)
	res, err := kinmap.Train(o)
	if err != nil {
		t.Fatal(err)
	}
	return fleet, res
}

// scenarioOptions generates the fleet of spec, writes its long Parquet dump
// and its register to a temporary folder, and returns the default options
// that read them.
func scenarioOptions(t *testing.T, spec scenarios.Spec) (*scenarios.Fleet, kinmap.Options) {
	t.Helper()
	fleet, err := scenarios.Generate(spec)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	if _, err := fleet.Write(dir, scenarios.FileSites, scenarios.FileLongParquet); err != nil {
		t.Fatal(err)
	}
	o := kinmap.DefaultOptions()
	o.Data = []string{filepath.Join(dir, scenarios.FileLongParquet)}
	o.Sites = filepath.Join(dir, scenarios.FileSites)
	return fleet, o
}

// The pumping-station scenario of the demo, end to end: the regimes kinmap
// finds must agree with the planted ones at an adjusted Rand index of at
// least 0.8, and the switches must be found with precision and recall of at
// least 0.9 within one window.
func TestGroundTruthPumping(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end run")
	}
	r := evaluate(t, "pumping", 1)
	t.Log(r)
	if r.ari < 0.8 {
		t.Errorf("adjusted Rand index %.3f, want at least 0.8", r.ari)
	}
	if p, rec := r.precision(), r.recall(); p < 0.9 || rec < 0.9 {
		t.Errorf("switch precision %.3f and recall %.3f, want both at least 0.9", p, rec)
	}
}

// The mobile scenario with the defaults finds the
// true number of regimes, an adjusted Rand index of at least 0.9 and a
// switch F1 of at least 0.9 within one window. (With the number of regimes
// chosen by the Davies–Bouldin index it found 2 of 5 regimes and 2 of 11
// switches.)
func TestGroundTruthReefers(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end run")
	}
	r := evaluate(t, "reefers", 1)
	t.Log(r)
	if r.k != r.trueK || r.ari < 0.9 || r.f1() < 0.9 {
		t.Errorf("%d regimes (%d planted), ARI %.3f, switch F1 %.3f; want the planted number, at least 0.9 and 0.9", r.k, r.trueK, r.ari, r.f1())
	}
}
