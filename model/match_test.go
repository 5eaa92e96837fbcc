package model

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/kinmap/kinmap/mapper"
)

// bruteAssignment returns the least total cost of pairing every row of
// cost with a distinct column, or every column with a distinct row when
// rows outnumber columns, by trying every injective map.
func bruteAssignment(cost [][]float64, cols int) float64 {
	if len(cost) > cols {
		t := make([][]float64, cols)
		for j := range t {
			for i := range cost {
				t[j] = append(t[j], cost[i][j])
			}
		}
		return bruteAssignment(t, len(cost))
	}
	best := math.Inf(1)
	used := make([]bool, cols)
	var walk func(i int, total float64)
	walk = func(i int, total float64) {
		if i == len(cost) {
			best = math.Min(best, total)
			return
		}
		for j := range cols {
			if !used[j] {
				used[j] = true
				walk(i+1, total+cost[i][j])
				used[j] = false
			}
		}
	}
	walk(0, 0)
	return best
}

// The Hungarian assignment is as cheap as the best of all assignments,
// found by brute force, on random square and rectangular matrices.
func TestHungarianMatchesBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 7))
	for trial := range 300 {
		rows, cols := 1+rng.IntN(6), 1+rng.IntN(6)
		cost := make([][]float64, rows)
		for i := range cost {
			cost[i] = make([]float64, cols)
			for j := range cost[i] {
				cost[i][j] = rng.Float64() * 10
				if trial%3 == 0 {
					cost[i][j] = float64(rng.IntN(4)) // many ties
				}
			}
		}
		got := hungarian(cost, cols)
		var total float64
		seen := make(map[int]bool)
		assigned := 0
		for i, j := range got {
			if j < 0 {
				continue
			}
			if seen[j] {
				t.Fatalf("%dx%d: column %d used twice", rows, cols, j)
			}
			seen[j] = true
			assigned++
			total += cost[i][j]
		}
		if assigned != min(rows, cols) {
			t.Fatalf("%dx%d: %d pairs, want %d", rows, cols, assigned, min(rows, cols))
		}
		if want := bruteAssignment(cost, cols); math.Abs(total-want) > 1e-9 {
			t.Fatalf("%dx%d: total %g, brute force %g (%v)", rows, cols, total, want, cost)
		}
	}
}

// regimesAt returns regimes with the given IDs and one-dimensional
// centroids.
func regimesAt(ids []int, centroids ...float64) []mapper.Regime {
	r := make([]mapper.Regime, len(ids))
	for i := range r {
		r[i] = mapper.Regime{ID: ids[i], Centroid: []float64{centroids[i], 0}}
	}
	return r
}

func TestMatchRegimes(t *testing.T) {
	prev := regimesAt([]int{1, 2, 3}, 0, 10, 20)
	for _, tc := range []struct {
		name    string
		next    []mapper.Regime
		ids     []int
		changes []RegimeChange
	}{
		{"same, shuffled", regimesAt([]int{1, 2, 3}, 20.1, 0.2, 9.9), []int{3, 1, 2}, []RegimeChange{
			{ChangeRenumbered, []int{1}, []int{3}},
			{ChangeRenumbered, []int{2}, []int{1}},
			{ChangeRenumbered, []int{3}, []int{2}},
		}},
		{"unchanged", regimesAt([]int{1, 2, 3}, 0, 10, 20), []int{1, 2, 3}, nil},
		// The new regime takes the next free number; only matched regimes
		// count as renumbered.
		{"a split", regimesAt([]int{1, 2, 3, 4}, 0, 9, 11.5, 20), []int{1, 2, 4, 3}, []RegimeChange{
			{ChangeRenumbered, []int{4}, []int{3}},
			{ChangeNew, nil, []int{4}},
			{ChangeSplit, []int{2}, []int{2, 4}},
		}},
		{"a merge", regimesAt([]int{1, 2}, 0, 15), []int{1, 2}, []RegimeChange{
			{ChangeGone, []int{3}, nil},
			{ChangeMerged, []int{2, 3}, []int{2}},
		}},
		{"all new", nil, []int{}, []RegimeChange{
			{ChangeGone, []int{1}, nil}, {ChangeGone, []int{2}, nil}, {ChangeGone, []int{3}, nil},
		}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			ids, changes, err := matchRegimes(prev, tc.next)
			if err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(ids, tc.ids) {
				t.Errorf("ids %v, want %v", ids, tc.ids)
			}
			if !slices.EqualFunc(changes, tc.changes, func(a, b RegimeChange) bool {
				return a.Kind == b.Kind && slices.Equal(a.From, b.From) && slices.Equal(a.To, b.To)
			}) {
				t.Errorf("changes %v, want %v", changes, tc.changes)
			}
		})
	}
	ids, _, err := matchRegimes(nil, regimesAt([]int{1, 2}, 0, 1))
	if err != nil || !slices.Equal(ids, []int{1, 2}) {
		t.Errorf("no previous regimes: %v, %v", ids, err)
	}
	if _, _, err := matchRegimes(prev, []mapper.Regime{{ID: 1, Centroid: []float64{1}}}); err == nil {
		t.Error("centroids of another dimension accepted")
	}
}
