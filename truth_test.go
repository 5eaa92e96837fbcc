package kinmap_test

import (
	"math"
	"path/filepath"
	"testing"
	"time"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/scenarios"
	"github.com/kinmap/kinmap/timeline"
)

// adjustedRand is the adjusted Rand index of two labellings of the same
// items (L. Hubert and P. Arabie, "Comparing partitions", Journal of
// Classification 2, 1985, eq. 5): the Rand index corrected for chance, 1 for
// identical partitions and about 0 for independent ones.
func adjustedRand(a, b []int) float64 {
	pairs := func(n float64) float64 { return n * (n - 1) / 2 }
	type cell struct{ a, b int }
	joint, rows, cols := map[cell]float64{}, map[int]float64{}, map[int]float64{}
	for i := range a {
		joint[cell{a[i], b[i]}]++
		rows[a[i]]++
		cols[b[i]]++
	}
	var sumJoint, sumRows, sumCols float64
	for _, n := range joint {
		sumJoint += pairs(n)
	}
	for _, n := range rows {
		sumRows += pairs(n)
	}
	for _, n := range cols {
		sumCols += pairs(n)
	}
	expected := sumRows * sumCols / pairs(float64(len(a)))
	top := (sumRows + sumCols) / 2
	if top == expected {
		return 1
	}
	return (sumJoint - expected) / (top - expected)
}

func TestAdjustedRand(t *testing.T) {
	tests := []struct {
		a, b []int
		want float64
	}{
		// Worked by hand from the definition (Hubert and Arabie 1985):
		// contingency cells 2, 1, 1; Σ C(n_ij, 2) = 1, Σ C(a_i, 2) = 1,
		// Σ C(b_j, 2) = 2, C(4, 2) = 6, so ARI = (1 − 1/3) / (3/2 − 1/3) = 4/7.
		{[]int{0, 0, 1, 2}, []int{0, 0, 1, 1}, 4.0 / 7},
		// The labels' names do not matter: a relabelled partition scores 1.
		{[]int{0, 0, 1, 1}, []int{5, 5, 3, 3}, 1},
		// Cells 1, 1, 1, 1: Σ C(n_ij, 2) = 0, Σ C(a_i, 2) = 2, Σ C(b_j, 2) = 2,
		// expected 4/6, so ARI = (0 − 2/3) / (2 − 2/3) = −1/2.
		{[]int{0, 0, 1, 1}, []int{0, 1, 0, 1}, -0.5},
	}
	for _, tt := range tests {
		if got := adjustedRand(tt.a, tt.b); math.Abs(got-tt.want) > 1e-12 {
			t.Errorf("adjustedRand(%v, %v) = %g, want %g", tt.a, tt.b, got, tt.want)
		}
	}
}

// matchSwitches pairs found switches with true ones of the same site at
// most tolerance apart, each used once, nearest first, and returns the
// number of pairs.
func matchSwitches(found []timeline.Switch, truth []scenarios.Switch, tolerance time.Duration) int {
	used := make([]bool, len(found))
	matched := 0
	for _, tr := range truth {
		best := -1
		var bestGap time.Duration
		for i, f := range found {
			if used[i] || f.Site != tr.Site {
				continue
			}
			gap := f.Time.Sub(tr.Time).Abs()
			if gap <= tolerance && (best < 0 || gap < bestGap) {
				best, bestGap = i, gap
			}
		}
		if best >= 0 {
			used[best] = true
			matched++
		}
	}
	return matched
}

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
	ari := adjustedRand(want, got)

	trueSwitches := fleet.Switches()
	matched := matchSwitches(res.Switches, trueSwitches, fleet.Window)
	precision := float64(matched) / float64(len(res.Switches))
	recall := float64(matched) / float64(len(trueSwitches))
	t.Logf("%d windows, %d regimes found (%d planted): ARI %.3f; switches: %d found, %d planted, %d matched: precision %.3f, recall %.3f",
		len(got), len(res.Model.Regimes), len(fleet.Regimes), ari, len(res.Switches), len(trueSwitches), matched, precision, recall)
	if ari < 0.8 {
		t.Errorf("adjusted Rand index %.3f, want at least 0.8", ari)
	}
	if precision < 0.9 || recall < 0.9 {
		t.Errorf("switch precision %.3f and recall %.3f, want both at least 0.9", precision, recall)
	}
}
