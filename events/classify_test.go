package events

import (
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/kinmap/kinmap/features"
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
		got := windowsOn(bmu, labels)
		Classify(l, Count(l.Units(), got), got, true, DefaultConfig())
		for i := range bmu {
			want := windowsOn(bmu[i:i+1], labels[i:i+1])
			without := Count(l.Units(), slices.Delete(windowsOn(bmu, labels), i, i+1))
			Classify(l, without, want, false, DefaultConfig())
			if got[i].Condition != want[0].Condition || got[i].ConditionConfidence != want[0].ConditionConfidence {
				t.Fatalf("seed %d: window %d (label %q) classified %s (%.3f) with its own count taken out, %s (%.3f) without it counted",
					seed, i, labels[i], got[i].Condition, got[i].ConditionConfidence, want[0].Condition, want[0].ConditionConfidence)
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
	ws := windowsOn(bmu, labels)
	Classify(l, Count(l.Units(), ws), ws, true, DefaultConfig())
	if ws[0].Condition != "pump" {
		t.Errorf("the lone window is classified %s; its neighbours say pump", ws[0].Condition)
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
			got := windowsOn([]int{tc.at}, []string{""})
			Classify(l, Count(l.Units(), windowsOn(tc.bmu, tc.labels)), got, false, DefaultConfig())
			if got[0].Condition != tc.want {
				t.Errorf("got %s (%.3f), want %s", got[0].Condition, got[0].ConditionConfidence, tc.want)
			}
		})
	}
}

// TestClassifyFewVotes: one vote among four classes has a confidence of
// (1+1)/(1+4) = 0.4 by the rule of succession, below one half.
func TestClassifyFewVotes(t *testing.T) {
	l := lattice.Lattice{Cols: 2, Rows: 2, Flat: true}
	c := &model.Conditions{Labels: []string{"a", "b", "c"}, Counts: [][]int{{1, 0, 0, 0}, {0, 0, 0, 0}, {0, 0, 0, 0}, {0, 0, 0, 0}}}
	votes := make([]int, len(c.Labels)+1)
	got := classify(l, c, &features.Window{Unit: 3}, false, map[int][]int{}, votes, DefaultConfig())
	if got.label != Unknown || got.votes != 1 || got.confidence != 0.4 {
		t.Errorf("got %+v, want unknown with 1 vote and confidence 0.4", got)
	}
}

// windowsOn returns windows on the units bmu marked with labels.
func windowsOn(bmu []int, labels []string) []features.Window {
	ws := make([]features.Window, len(bmu))
	for i, u := range bmu {
		ws[i] = features.Window{Unit: u, Marked: labels[i]}
	}
	return ws
}
