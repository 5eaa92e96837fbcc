package mapper

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/kinmap/kinmap/lattice"
	"gonum.org/v1/gonum/mat"
)

// testRand returns a generator for test data.
func testRand(seed uint64) *rand.Rand { return rand.New(rand.NewPCG(seed, 7)) }

// uniformData returns n rows of d features uniform on [0, 1).
func uniformData(n, d int, seed uint64) *mat.Dense {
	return drawData(n, d, seed, (*rand.Rand).Float64)
}

// noiseData returns n rows of d standard normal features.
func noiseData(n, d int, seed uint64) *mat.Dense {
	return drawData(n, d, seed, (*rand.Rand).NormFloat64)
}

// drawData returns n rows of d independent draws.
func drawData(n, d int, seed uint64, draw func(*rand.Rand) float64) *mat.Dense {
	rng := testRand(seed)
	x := mat.NewDense(n, d, nil)
	for i := range n {
		for j := range d {
			x.Set(i, j, draw(rng))
		}
	}
	return x
}

// clusterData returns n rows of d features drawn from k spherical Gaussian
// clusters of standard deviation sd around centres drawn uniformly from a
// cube of side spread, with the cluster of every row.
func clusterData(n, d, k int, spread, sd float64, seed uint64) (*mat.Dense, []int) {
	rng := testRand(seed)
	centres := make([][]float64, k)
	for c := range centres {
		centres[c] = make([]float64, d)
		for j := range centres[c] {
			centres[c][j] = spread * rng.Float64()
		}
	}
	x := mat.NewDense(n, d, nil)
	label := make([]int, n)
	for i := range n {
		c := rng.IntN(k)
		label[i] = c
		for j := range d {
			x.Set(i, j, centres[c][j]+sd*rng.NormFloat64())
		}
	}
	return x, label
}

// manifoldData returns n rows of d features on a two-dimensional curved
// sheet embedded in d dimensions, plus a little noise.
func manifoldData(n, d int, noise float64, seed uint64) *mat.Dense {
	rng := testRand(seed)
	freq := make([][2]float64, d)
	phase := make([]float64, d)
	for j := range d {
		freq[j] = [2]float64{rng.Float64()*2 - 1, rng.Float64()*2 - 1}
		phase[j] = 2 * math.Pi * rng.Float64()
	}
	x := mat.NewDense(n, d, nil)
	for i := range n {
		a, b := rng.Float64()*math.Pi, rng.Float64()*math.Pi
		for j := range d {
			x.Set(i, j, math.Sin(freq[j][0]*a+freq[j][1]*b+phase[j])+noise*rng.NormFloat64())
		}
	}
	return x
}

// torusData returns n points of the surface of a torus: two uniform angles
// embedded in four dimensions as (cos a, sin a, cos b, sin b).
func torusData(n int, seed uint64) *mat.Dense {
	rng := testRand(seed)
	x := mat.NewDense(n, 4, nil)
	for i := range n {
		a, b := 2*math.Pi*rng.Float64(), 2*math.Pi*rng.Float64()
		x.SetRow(i, []float64{math.Cos(a), math.Sin(a), math.Cos(b), math.Sin(b)})
	}
	return x
}

// featureNames returns d names f0, f1, ….
func featureNames(d int) []string {
	names := make([]string, d)
	for j := range names {
		names[j] = fmt.Sprintf("f%d", j)
	}
	return names
}

// bruteAssign finds the best two units of x by a plain loop over all units,
// ties to the lower unit.
func bruteAssign(m *Map, x []float64) Assignment {
	b1, b2 := -1, -1
	d1, d2 := math.Inf(1), math.Inf(1)
	for u := range m.Units() {
		var d float64
		for j, v := range m.Vector(u) {
			d += (x[j] - v) * (x[j] - v)
		}
		switch {
		case d < d1:
			b2, d2 = b1, d1
			b1, d1 = u, d
		case d < d2:
			b2, d2 = u, d
		}
	}
	return Assignment{BMU: b1, Second: b2, QE: math.Sqrt(d1)}
}

// components counts the connected components of a set of units on the
// lattice.
func components(l lattice.Lattice, set []bool) int {
	seen := make([]bool, len(set))
	var count int
	for u := range set {
		if !set[u] || seen[u] {
			continue
		}
		count++
		stack := []int{u}
		seen[u] = true
		for len(stack) > 0 {
			v := stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			for _, w := range l.Neighbours(v) {
				if set[w] && !seen[w] {
					seen[w] = true
					stack = append(stack, w)
				}
			}
		}
	}
	return count
}

// cloneMap returns a copy of m with its own codebook.
func cloneMap(m *Map) *Map {
	return &Map{Lattice: m.Lattice, Dim: m.Dim, Codebook: slices.Clone(m.Codebook)}
}

// initAndTrain returns the initial map of cfg and the map Train makes from
// it.
func initAndTrain(t *testing.T, x *mat.Dense, cfg Config) (start, trained *Map) {
	t.Helper()
	start, _, err := InitMap(x, cfg)
	if err != nil {
		t.Fatal(err)
	}
	trained, _, err = Train(x, cfg)
	if err != nil {
		t.Fatal(err)
	}
	return start, trained
}
