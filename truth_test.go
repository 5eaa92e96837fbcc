package kinmap_test

import (
	"path/filepath"
	"testing"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/scenarios"
	"github.com/kinmap/kinmap/score"
)

// trainScenario generates the fleet of spec, writes its long Parquet dump
// and register, and runs kinmap.Train on them with the default options.
func trainScenario(t *testing.T, spec scenarios.Spec) (*scenarios.Fleet, *kinmap.Result) {
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
	res, err := kinmap.Train(o)
	if err != nil {
		t.Fatal(err)
	}
	return fleet, res
}

// The pumping-station scenario of the demo, end to end: the regimes kinmap
// finds must agree with the planted ones at an adjusted Rand index of at
// least 0.8, and the switches must be found with precision and recall of at
// least 0.9 within one window.
func TestGroundTruthPumping(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end run")
	}
	spec, err := scenarios.DefaultSpec("pumping")
	if err != nil {
		t.Fatal(err)
	}
	fleet, res := trainScenario(t, spec)

	truth := map[string][]int{}
	for _, s := range fleet.Sites {
		truth[s.ID] = s.Regimes
	}
	var want, got []int
	for _, e := range res.Entries {
		i := int(e.Start.Sub(fleet.WindowStart(0)) / fleet.Window)
		want = append(want, truth[e.Site][i])
		got = append(got, e.Regime)
	}
	ari := score.ARI(want, got)

	var trueSwitches, found []score.Event
	for _, sw := range fleet.Switches() {
		trueSwitches = append(trueSwitches, score.Event{Site: sw.Site, Time: sw.Time})
	}
	for _, sw := range res.Switches {
		found = append(found, score.Event{Site: sw.Site, Time: sw.Time})
	}
	m := score.Switches(trueSwitches, found, fleet.Window)
	matched, precision, recall := m.TP, m.Precision, m.Recall
	t.Logf("%d windows, %d regimes found (%d planted): ARI %.3f; switches: %d found, %d planted, %d matched: precision %.3f, recall %.3f",
		len(got), len(res.Model.Regimes), len(fleet.Regimes), ari, len(res.Switches), len(trueSwitches), matched, precision, recall)
	if ari < 0.8 {
		t.Errorf("adjusted Rand index %.3f, want at least 0.8", ari)
	}
	if precision < 0.9 || recall < 0.9 {
		t.Errorf("switch precision %.3f and recall %.3f, want both at least 0.9", precision, recall)
	}
}
