package mapper

import (
	"fmt"
	"math"
	"slices"
	"testing"

	"github.com/kinmap/kinmap/lattice"
)

// batchMapStep is one step of Kohonen's batch map written plainly: every
// window goes to its nearest unit c (a plain loop), unit i collecting the
// count n_i and the sum S_i = n_i·x̄_i of its windows, and every unit moves
// to
//
//	w_j = Σ_i h(d_ij) S_i / Σ_i h(d_ij) n_i,  h(d) = exp(−d² / 2σ²),
//
// with d_ij the lattice distance between units i and j (T. Kohonen,
// "Essentials of the self-organizing map", Neural Networks 37, 2013, the
// Batch Map, there written m_i = Σ_j n_j h_ji x̄_j / Σ_j n_j h_ji; and his
// Self-Organizing Maps, Springer, 3rd ed. 2001, the Batch Map; both from
// memory). A unit no window reaches keeps its vector.
func batchMapStep(m *Map, rows [][]float64, sigma float64) [][]float64 {
	u := m.Units()
	counts := make([]float64, u)
	sums := make([][]float64, u)
	for i := range sums {
		sums[i] = make([]float64, m.Dim)
	}
	for _, x := range rows {
		c := bruteAssign(m, x).BMU
		counts[c]++
		for k, v := range x {
			sums[c][k] += v
		}
	}
	out := make([][]float64, u)
	for j := range out {
		num := make([]float64, m.Dim)
		var den float64
		for i := range u {
			h := math.Exp(-m.Lattice.Dist2(i, j) / (2 * sigma * sigma))
			den += h * counts[i]
			for k, v := range sums[i] {
				num[k] += h * v
			}
		}
		out[j] = slices.Clone(m.Vector(j))
		if den > 0 {
			for k := range num {
				out[j][k] = num[k] / den
			}
		}
	}
	return out
}

// One Accumulate and Smooth at σ > 0 is one step of the batch map, on
// lattices that wrap and on planes, with the lattice distance taken
// from package lattice (checked there against cube coordinates), apart
// from mapper's tabulated neighbourhood.
func TestSmoothIsBatchMapStep(t *testing.T) {
	x, _ := clusterData(600, 3, 4, 5, 0.8, 31)
	n, _ := x.Dims()
	rows := make([][]float64, n)
	for i := range rows {
		rows[i] = x.RawRowView(i)
	}
	for _, l := range []lattice.Lattice{
		{Cols: 6, Rows: 4, Hex: true},
		{Cols: 5, Rows: 6, Hex: true},
		{Cols: 7, Rows: 5, Flat: true},
		{Cols: 6, Rows: 5},
		{Cols: 5, Rows: 3, Hex: true, Flat: true},
	} {
		for _, sigma := range []float64{1, 2.5} {
			t.Run(fmt.Sprintf("%+v/σ=%g", l, sigma), func(t *testing.T) {
				m := randomMap(t, x, l, 3)
				copy(m.Vector(2), []float64{1e3, 1e3, 1e3}) // wins nothing: moves by its neighbours' windows only
				want := batchMapStep(m, rows, sigma)
				acc, _ := m.Accumulate(x, 2)
				m.Smooth(acc, sigma)
				for u := range m.Units() {
					for k, v := range m.Vector(u) {
						if math.Abs(v-want[u][k]) > 1e-12*(1+math.Abs(want[u][k])) {
							t.Fatalf("unit %d feature %d is %g, the batch map gives %g", u, k, v, want[u][k])
						}
					}
				}
			})
		}
	}
}
