package mapper

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// The quality against its definitions read by brute force: the mean
// Euclidean distance to the nearest codebook vector (T. Kohonen,
// "Self-Organizing Maps", 3rd ed., 2001), the share of windows whose two
// nearest units are not lattice neighbours (K. Kiviluoto, "Topology
// preservation in self-organizing maps", ICNN 1996), with the lattice's
// geometry from package lattice, and the share of units nearest to no window.
func TestQualityByBruteForce(t *testing.T) {
	x, _ := clusterData(600, 4, 3, 6, 0.5, 31)
	m, _, err := Train(x, Config{Cols: 8, Rows: 6, Epochs: 6})
	if err != nil {
		t.Fatal(err)
	}
	asg := m.Assign(x, 0)
	q := m.Quality(asg)
	qe, broken, unused := bruteQuality(*m, x)
	if n := float64(len(asg)); math.Abs(q.QE-qe) > 1e-9*qe || q.TE != float64(broken)/n || q.Unused != unused {
		t.Errorf("quality %+v; brute force: QE %g, TE %g, unused %g", q, qe, float64(broken)/n, unused)
	}
}

// bruteQuality returns the mean distance of the rows of x to their nearest
// unit of m, the number of rows whose nearest and second-nearest units are
// not neighbours by package lattice, and the share of units nearest to no
// row, by comparing every row with every unit.
func bruteQuality(m Map, x *mat.Dense) (qe float64, broken int, unused float64) {
	n, d := x.Dims()
	won := make([]bool, m.Units())
	for i := range n {
		best, second := -1, -1
		var db, ds float64
		for u := range m.Units() {
			var s float64
			for j := range d {
				diff := x.At(i, j) - m.Codebook[u*d+j]
				s += diff * diff
			}
			switch {
			case best < 0 || s < db:
				second, ds = best, db
				best, db = u, s
			case second < 0 || s < ds:
				second, ds = u, s
			}
		}
		qe += math.Sqrt(db)
		won[best] = true
		if math.Abs(m.Lattice.Dist2(best, second)-1) > 1e-9 {
			broken++
		}
	}
	free := 0
	for _, w := range won {
		if !w {
			free++
		}
	}
	return qe / float64(n), broken, float64(free) / float64(len(won))
}
