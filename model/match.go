package model

import (
	"fmt"
	"math"
	"slices"

	"github.com/kinmap/kinmap/mapper"
	"gonum.org/v1/gonum/floats"
)

// Kinds of RegimeChange.
const (
	ChangeRenumbered = "renumbered" // a regime took the number of the previous regime it matches
	ChangeNew        = "new"        // a regime matches no previous one and got a new number
	ChangeGone       = "gone"       // a previous regime matches no new one
	ChangeSplit      = "split"      // a previous regime is the nearest of several new ones
	ChangeMerged     = "merged"     // a new regime is the nearest of several previous ones
)

// RegimeChange is one line of the report of Update. From holds
// previous regime numbers, To the numbers after matching; for "renumbered",
// From holds the number the new regime was derived with.
type RegimeChange struct {
	Kind string
	From []int
	To   []int
}

// matchRegimes keeps regime numbers stable from one map to the next. It
// pairs the regimes of next with those of prev so that the total distance
// between paired centroids is least (the Hungarian algorithm: H. W. Kuhn,
// "The Hungarian method for the assignment problem", Naval Research
// Logistics Quarterly 2, 1955), and returns the number each regime of next
// should carry: the ID of its partner, or for a regime left without one a
// new number counting up from the largest previous ID. The changes list
// every renumbering, new and vanished regime, and the splits and merges
// seen through nearest centroids: a previous regime nearest to several new
// ones split, a new regime nearest to several previous ones merged them.
func matchRegimes(prev, next []mapper.Regime) ([]int, []RegimeChange, error) {
	dim := -1
	for _, rs := range [][]mapper.Regime{prev, next} {
		for _, r := range rs {
			if dim >= 0 && len(r.Centroid) != dim {
				return nil, nil, fmt.Errorf("model: regime %d has a centroid of dimension %d, others %d", r.ID, len(r.Centroid), dim)
			}
			dim = len(r.Centroid)
		}
	}
	cost := make([][]float64, len(next))
	for i, r := range next {
		cost[i] = make([]float64, len(prev))
		for j, p := range prev {
			cost[i][j] = floats.Distance(r.Centroid, p.Centroid, 2)
		}
	}
	partner := hungarian(cost, len(prev))
	ids := make([]int, len(next))
	newID := 1
	for _, p := range prev {
		newID = max(newID, p.ID+1)
	}
	var changes []RegimeChange
	matched := make([]bool, len(prev))
	for i, j := range partner {
		if j < 0 {
			continue
		}
		matched[j] = true
		ids[i] = prev[j].ID
		if next[i].ID != ids[i] {
			changes = append(changes, RegimeChange{Kind: ChangeRenumbered, From: []int{next[i].ID}, To: []int{ids[i]}})
		}
	}
	for i, j := range partner {
		if j < 0 {
			ids[i] = newID
			newID++
			changes = append(changes, RegimeChange{Kind: ChangeNew, To: []int{ids[i]}})
		}
	}
	for j, ok := range matched {
		if !ok {
			changes = append(changes, RegimeChange{Kind: ChangeGone, From: []int{prev[j].ID}})
		}
	}
	if len(prev) > 0 && len(next) > 0 {
		children := make([][]int, len(prev))
		for i := range next {
			j := argmin(len(prev), func(j int) float64 { return cost[i][j] })
			children[j] = append(children[j], ids[i])
		}
		for j, c := range children {
			if len(c) > 1 {
				changes = append(changes, RegimeChange{Kind: ChangeSplit, From: []int{prev[j].ID}, To: slices.Sorted(slices.Values(c))})
			}
		}
		parents := make([][]int, len(next))
		for j := range prev {
			i := argmin(len(next), func(i int) float64 { return cost[i][j] })
			parents[i] = append(parents[i], prev[j].ID)
		}
		for i, p := range parents {
			if len(p) > 1 {
				changes = append(changes, RegimeChange{Kind: ChangeMerged, From: slices.Sorted(slices.Values(p)), To: []int{ids[i]}})
			}
		}
	}
	return ids, changes, nil
}

// argmin returns the i in [0, n) of least f(i), the lowest on a tie.
func argmin(n int, f func(int) float64) int {
	best := 0
	for i := 1; i < n; i++ {
		if f(i) < f(best) {
			best = i
		}
	}
	return best
}

// hungarian solves the assignment problem for a rows × cols cost matrix
// (rows = len(cost)): it returns the column of every row, -1 for rows left
// over when rows > cols, such that the total cost is least. It is the
// shortest-augmenting-path form with row and column potentials, O(n²m).
func hungarian(cost [][]float64, cols int) []int {
	rows := len(cost)
	if rows > cols {
		// Assign the columns to rows instead.
		t := make([][]float64, cols)
		for j := range t {
			t[j] = make([]float64, rows)
			for i := range rows {
				t[j][i] = cost[i][j]
			}
		}
		out := make([]int, rows)
		for i := range out {
			out[i] = -1
		}
		for j, i := range hungarian(t, rows) {
			out[i] = j
		}
		return out
	}
	// 1-based, row 0 and column 0 are the sentinels of the algorithm.
	u := make([]float64, rows+1)
	v := make([]float64, cols+1)
	owner := make([]int, cols+1) // row owning each column, 0 for none
	way := make([]int, cols+1)
	minv := make([]float64, cols+1)
	used := make([]bool, cols+1)
	for i := 1; i <= rows; i++ {
		owner[0] = i
		j0 := 0
		for j := range minv {
			minv[j] = math.Inf(1)
			used[j] = false
		}
		for {
			used[j0] = true
			i0, delta, j1 := owner[j0], math.Inf(1), 0
			for j := 1; j <= cols; j++ {
				if used[j] {
					continue
				}
				if c := cost[i0-1][j-1] - u[i0] - v[j]; c < minv[j] {
					minv[j], way[j] = c, j0
				}
				if minv[j] < delta || j1 == 0 {
					delta, j1 = minv[j], j
				}
			}
			for j := 0; j <= cols; j++ {
				if used[j] {
					u[owner[j]] += delta
					v[j] -= delta
				} else {
					minv[j] -= delta
				}
			}
			j0 = j1
			if owner[j0] == 0 {
				break
			}
		}
		for j0 != 0 {
			j1 := way[j0]
			owner[j0] = owner[j1]
			j0 = j1
		}
	}
	out := make([]int, rows)
	for j := 1; j <= cols; j++ {
		if owner[j] != 0 {
			out[owner[j]-1] = j - 1
		}
	}
	return out
}
