package mapper

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/kinmap/kinmap/lattice"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

// Assign places a window lacking some features as a brute-force search
// does that measures, with gonum's floats.Distance, the distance of its
// present components to the same components of every unit, rescaled by
// √(D/P) (Samad and Harp 1992); complete windows beside them get exactly
// the winners they get without such neighbours.
func TestAssignMissingBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 1))
	const dim, n = 9, 400
	m := &Map{Lattice: lattice.Lattice{Cols: 8, Rows: 6, Hex: true}, Dim: dim}
	m.Codebook = make([]float64, m.Units()*dim)
	for i := range m.Codebook {
		m.Codebook[i] = rng.NormFloat64()
	}
	x := mat.NewDense(n, dim, nil)
	for i := range n {
		for j := range dim {
			x.Set(i, j, rng.NormFloat64())
		}
		if i%3 != 0 { // two rows in three lack up to four components
			for range 1 + rng.IntN(4) {
				x.Set(i, rng.IntN(dim), math.NaN())
			}
		}
	}
	got := m.Assign(x, 2)
	filled := mat.DenseCopyOf(x)
	filled.Apply(func(_, _ int, v float64) float64 {
		if math.IsNaN(v) {
			return 0
		}
		return v
	}, filled)
	full := m.Assign(filled, 2) // no NaN; only its complete rows are compared
	for i := range n {
		row := x.RawRowView(i)
		var keep []int
		for j, v := range row {
			if !math.IsNaN(v) {
				keep = append(keep, j)
			}
		}
		if len(keep) == dim {
			if got[i] != full[i] {
				t.Fatalf("complete row %d: %+v beside incomplete rows, %+v without them", i, got[i], full[i])
			}
			continue
		}
		xs := make([]float64, len(keep))
		for k, j := range keep {
			xs[k] = row[j]
		}
		best, second := -1, -1
		d1, d2 := math.Inf(1), math.Inf(1)
		ws := make([]float64, len(keep))
		for u := range m.Units() {
			for k, j := range keep {
				ws[k] = m.Codebook[u*dim+j]
			}
			d := floats.Distance(xs, ws, 2) * math.Sqrt(float64(dim)/float64(len(keep)))
			switch {
			case d < d1:
				best, second, d1, d2 = u, best, d, d1
			case d < d2:
				second, d2 = u, d
			}
		}
		if got[i].BMU != best || got[i].Second != second || math.Abs(got[i].QE-d1) > 1e-12*d1 {
			t.Fatalf("row %d (%d of %d present): got %+v, brute force BMU %d, second %d, QE %v", i, len(keep), dim, got[i], best, second, d1)
		}
	}
}

// A window whose every component is missing cannot be placed by its
// features; it is placed as a window at the centre, never at a NaN unit.
func TestAssignNothingPresent(t *testing.T) {
	m := &Map{Lattice: lattice.Lattice{Cols: 2, Rows: 1, Flat: true}, Dim: 2, Codebook: []float64{0.1, 0.1, 3, 3}}
	x := mat.NewDense(1, 2, []float64{math.NaN(), math.NaN()})
	a := m.Assign(x, 1)[0]
	if a.BMU != 0 || math.IsNaN(a.QE) {
		t.Fatalf("got %+v, want unit 0 with a finite error", a)
	}
}
