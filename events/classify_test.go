package events

import (
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/kinmap/kinmap/lattice"
	"github.com/kinmap/kinmap/model"
)

// TestClassifyNoLeak checks that a window's own label never takes part in
// its classification: classifying every window of a random labelling with
// its own count taken out must give exactly what a knowledge built without
// that window gives.
func TestClassifyNoLeak(t *testing.T) {
	for _, seed := range []uint64{1, 2} {
		rng := rand.New(rand.NewPCG(seed, 7))
		l := lattice.Lattice{Cols: 6, Rows: 6, Hex: true}
		names := []string{"", "", "bearing", "blocked", "recalibrated"}
		n := 120
		bmu, labels := make([]int, n), make([]string, n)
		for i := range bmu {
			bmu[i] = rng.IntN(l.Units())
			labels[i] = names[rng.IntN(len(names))]
		}
		c := Count(l.Units(), bmu, labels)
		got := Classify(l, c, bmu, labels, DefaultConfig())
		for i := range bmu {
			without := Count(l.Units(), slices.Delete(slices.Clone(bmu), i, i+1), slices.Delete(slices.Clone(labels), i, i+1))
			want := Classify(l, without, bmu[i:i+1], nil, DefaultConfig())[0]
			if got[i] != want {
				t.Fatalf("seed %d: window %d (label %q) classified %+v with its own count taken out, %+v without it counted", seed, i, labels[i], got[i], want)
			}
		}
	}
}

// TestClassifyOwnLabelIsNotEvidence checks the leak from the other side: a
// lone labelled window among windows of another label is classified by
// its neighbours, not by itself.
func TestClassifyOwnLabelIsNotEvidence(t *testing.T) {
	l := lattice.Lattice{Cols: 4, Rows: 4}
	bmu := []int{5, 5, 5, 5, 5, 5, 6}
	labels := []string{"lone", "pump", "pump", "pump", "pump", "pump", "pump"}
	got := Classify(l, Count(l.Units(), bmu, labels), bmu, labels, DefaultConfig())
	if got[0].Label != "pump" {
		t.Errorf("the lone window is classified %+v; its neighbours say pump", got[0])
	}
}

func TestClassifyThinEvidence(t *testing.T) {
	l := lattice.Lattice{Cols: 4, Rows: 4}
	tests := []struct {
		name   string
		bmu    []int
		labels []string
		at     int
		want   string
	}{
		{"tie", []int{0, 0, 0, 0, 0, 0}, []string{"a", "a", "a", "b", "b", "b"}, 0, Unknown},
		{"mostly unmarked", []int{0, 0, 0, 0, 0, 0}, []string{"a", "", "", "", "", ""}, 0, Unlabelled},
		{"far ring reached", []int{10, 10, 10, 10, 10}, []string{"a", "a", "a", "a", "a"}, 0, "a"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got := Classify(l, Count(l.Units(), tc.bmu, tc.labels), []int{tc.at}, nil, DefaultConfig())[0]
			if got.Label != tc.want {
				t.Errorf("got %+v, want %s", got, tc.want)
			}
		})
	}
}

// TestClassifyFewVotes: one vote among four classes has a confidence of
// (1+1)/(1+4) = 0.4 by the rule of succession, below one half.
func TestClassifyFewVotes(t *testing.T) {
	l := lattice.Lattice{Cols: 2, Rows: 2, Flat: true}
	c := &model.Conditions{Labels: []string{"a", "b", "c"}, Counts: [][]int{{1, 0, 0, 0}, {0, 0, 0, 0}, {0, 0, 0, 0}, {0, 0, 0, 0}}}
	got := Classify(l, c, []int{3}, nil, DefaultConfig())[0]
	if got.Label != Unknown || got.Votes != 1 || got.Confidence != 0.4 {
		t.Errorf("got %+v, want unknown with 1 vote and confidence 0.4", got)
	}
}
