package mapper

import (
	"math"

	"github.com/kinmap/kinmap/features"
)

// Units reports the number of units of the map.
func (m *Map) Units() int { return m.Lattice.Units() }

// Vector returns the codebook vector of unit u. The slice aliases the
// codebook.
func (m *Map) Vector(u int) []float64 { return m.Codebook[u*m.Dim : (u+1)*m.Dim] }

// UMatrix returns, for each unit, the mean Euclidean distance between its
// codebook vector and those of its lattice neighbours. High values mark the
// borders between groups of similar units.
func (m *Map) UMatrix() []float64 {
	u := make([]float64, m.Units())
	for i := range u {
		nb := m.Lattice.Neighbours(i)
		if len(nb) == 0 {
			continue
		}
		var s float64
		for _, j := range nb {
			s += math.Sqrt(sqdist(m.Vector(i), m.Vector(j)))
		}
		u[i] = s / float64(len(nb))
	}
	return u
}

// Hits counts the windows of ws won by each unit (see Place).
func (m *Map) Hits(ws []features.Window) []int {
	h := make([]int, m.Units())
	for _, w := range ws {
		h[w.Unit]++
	}
	return h
}

// hits counts the windows of asg won by each unit.
func (m *Map) hits(asg []Assignment) []int {
	h := make([]int, m.Units())
	for _, a := range asg {
		h[a.BMU]++
	}
	return h
}
