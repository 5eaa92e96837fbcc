package score

import (
	"math"
	"math/rand/v2"
	"testing"
)

func TestCoveringWorked(t *testing.T) {
	tests := []struct {
		name        string
		truth, pred []int
		want        float64
	}{
		// True segments [0,4) and [4,10), found [0,6) and [6,10). [0,4)
		// overlaps [0,6) with Jaccard 4/6; [4,10) overlaps [0,6) with 2/10
		// and [6,10) with 4/6. C = (4·2/3 + 6·2/3) / 10 = 2/3.
		{"late change", []int{0, 0, 0, 0, 1, 1, 1, 1, 1, 1}, []int{5, 5, 5, 5, 5, 5, 7, 7, 7, 7}, 2.0 / 3},
		// No change found: each true segment's best overlap is with the
		// whole, |A|/T, so C = (4² + 6²)/10² = 0.52.
		{"no change found", []int{0, 0, 0, 0, 1, 1, 1, 1, 1, 1}, []int{3, 3, 3, 3, 3, 3, 3, 3, 3, 3}, 0.52},
		// The same segments, other labels.
		{"relabelled", []int{0, 0, 1, 1, 0}, []int{2, 2, 0, 0, 2}, 1},
		// A spurious change halves the true segment: C = 5·(3/5)/5 = 0.6.
		{"spurious change", []int{1, 1, 1, 1, 1}, []int{1, 1, 1, 2, 2}, 0.6},
		{"empty", nil, nil, 1},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := Covering(tt.truth, tt.pred); math.Abs(got-tt.want) > 1e-12 {
				t.Errorf("Covering(%v, %v) = %.15g, want %.15g", tt.truth, tt.pred, got, tt.want)
			}
		})
	}
}

// The covering agrees with the definition taken literally: segments as
// sets of windows, every true segment against every found one.
func TestCoveringDefinition(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 9))
	for trial := range 300 {
		n := 1 + r.IntN(60)
		truth, pred := make([]int, n), make([]int, n)
		for i := range n {
			truth[i], pred[i] = runs(r, truth, i, 0.15), runs(r, pred, i, 0.25)
		}
		got, want := Covering(truth, pred), literalCovering(truth, pred)
		if math.Abs(got-want) > 1e-12 {
			t.Fatalf("trial %d: Covering(%v, %v) = %.15g, literal %.15g", trial, truth, pred, got, want)
		}
	}
}

// runs keeps the label of the window before i, or draws one of 3 with
// probability p, so that labels come in runs and may repeat after a change.
func runs(r *rand.Rand, labels []int, i int, p float64) int {
	if i > 0 && r.Float64() >= p {
		return labels[i-1]
	}
	return r.IntN(3)
}

// literalCovering computes the covering from sets of window indices.
func literalCovering(truth, pred []int) float64 {
	sets := func(labels []int) []map[int]bool {
		var s []map[int]bool
		for i := range labels {
			if i == 0 || labels[i] != labels[i-1] {
				s = append(s, map[int]bool{})
			}
			s[len(s)-1][i] = true
		}
		return s
	}
	sum := 0.0
	for _, a := range sets(truth) {
		best := 0.0
		for _, b := range sets(pred) {
			inter, union := 0, len(b)
			for i := range a {
				if b[i] {
					inter++
				} else {
					union++
				}
			}
			best = math.Max(best, float64(inter)/float64(union))
		}
		sum += float64(len(a)) * best
	}
	return sum / float64(len(truth))
}
