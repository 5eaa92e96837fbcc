package kinmap_test

import (
	"math"
	"testing"
	"time"

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

// The mobile scenario with the defaults reaches the bar of issue 14: the
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
