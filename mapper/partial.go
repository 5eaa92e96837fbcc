package mapper

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// AssignPartial is Assign for windows whose scaled vectors may lack some
// features (NaN components), as when a channel the map was trained on is
// missing from a later dump. Rows without NaN are assigned exactly as by
// Assign. A row with some is placed by the components it has: the
// squared distance to each unit is summed over the present components and
// multiplied by D/P, P of the D components being present, so that it
// estimates the full distance and its square root, the quantization
// error, can be compared with those of complete windows and with the
// unfamiliar threshold. This is the partial-distance search of M. Samad
// and S. A. Harp, "Self-organization with partial data", Network:
// Computation in Neural Systems 3(2), 1992 (and of M. Cottrell and P.
// Letrémy, "Missing values: processing with the Kohonen algorithm", 2005).
// Ties go to the lower unit, as in Assign. A row with no component at all
// is assigned as if every component were at the centre (zero).
func (m *Map) AssignPartial(x *mat.Dense, workers int) []Assignment {
	n, dim := x.Dims()
	var partial []int
	filled := x
	for i := range n {
		row := x.RawRowView(i)
		for _, v := range row {
			if math.IsNaN(v) {
				partial = append(partial, i)
				break
			}
		}
	}
	if len(partial) > 0 {
		filled = mat.DenseCopyOf(x)
		for _, i := range partial {
			row := filled.RawRowView(i)
			for j, v := range row {
				if math.IsNaN(v) {
					row[j] = 0
				}
			}
		}
	}
	out := m.Assign(filled, workers)
	for _, i := range partial {
		if a, ok := m.partialWinner(x.RawRowView(i)[:dim]); ok {
			out[i] = a
		}
	}
	return out
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
