package mapper

import (
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
)

// fillMissing returns x with every NaN component set to zero (a copy, when
// there is one) and the rows that had one.
func fillMissing(x *mat.Dense) (*mat.Dense, []int) {
	n, _ := x.Dims()
	var partial []int
	for i := range n {
		if slices.ContainsFunc(x.RawRowView(i), math.IsNaN) {
			partial = append(partial, i)
		}
	}
	if len(partial) == 0 {
		return x, nil
	}
	filled := mat.DenseCopyOf(x)
	for _, i := range partial {
		row := filled.RawRowView(i)
		for j, v := range row {
			if math.IsNaN(v) {
				row[j] = 0
			}
		}
	}
	return filled, partial
}

// placePartial places the rows of x that lack some features (NaN
// components), listed in partial, by the components they have: the
// squared distance to each unit is summed over the present components and
// multiplied by D/P, P of the D components being present, so that it
// estimates the full distance and its square root, the quantization
// error, can be compared with those of complete windows and with the
// unfamiliar threshold. This is the partial-distance search of M. Samad
// and S. A. Harp, "Self-organization with partial data", Network:
// Computation in Neural Systems 3(2), 1992 (and of M. Cottrell and P.
// Letrémy, "Missing values: processing with the Kohonen algorithm", 2005).
// Ties go to the lower unit, as in the full search. A row with no
// component at all keeps the place out already has for it, that of the
// centre (zero).
func (m *Map) placePartial(x *mat.Dense, partial []int, out []Assignment) {
	_, dim := x.Dims()
	for _, i := range partial {
		if a, ok := m.partialWinner(x.RawRowView(i)[:dim]); ok {
			out[i] = a
		}
	}
}

// partialWinner is the best and second-best unit of x over its present
// components, false when none is present.
func (m *Map) partialWinner(x []float64) (Assignment, bool) {
	present := 0
	for _, v := range x {
		if !math.IsNaN(v) {
			present++
		}
	}
	if present == 0 {
		return Assignment{}, false
	}
	scale := float64(len(x)) / float64(present)
	b := newBest2()
	for u := range m.Units() {
		w := m.Codebook[u*m.Dim : (u+1)*m.Dim]
		var d float64
		for j, v := range x {
			if !math.IsNaN(v) {
				e := v - w[j]
				d += e * e
			}
		}
		b.offer(d*scale, u)
	}
	return b.assignment(), true
}
