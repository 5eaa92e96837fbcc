package mapper

import (
	"fmt"
	"slices"

	"gonum.org/v1/gonum/mat"
)

// unusedWarning is the share of units winning no window above which Quality
// warns.
const unusedWarning = 0.5

// Assign maps every row of x onto m on up to workers goroutines (0 means all
// cores): its best and second-best units, ties going to the lower unit, and
// its quantization error. A row that lacks some features (NaN components,
// as when a channel the map was trained on is missing from a later dump) is
// placed by the features it has (placePartial); the other rows are placed
// as if it were not there.
func (m *Map) Assign(x *mat.Dense, workers int) []Assignment {
	filled, partial := fillMissing(x)
	n, _ := x.Dims()
	out := make([]Assignment, n)
	newSearcher(m).run(filled, runOptions{workers: workers, out: out})
	m.placePartial(x, partial, out)
	return out
}

// Quality measures the fit of m to the windows of asg: the mean quantization
// error, the topographic error (the share of windows whose best and second
// best units are not lattice neighbours, wrapping round a torus) and the
// share of units that win no window, with a warning when more than half win
// none.
func (m *Map) Quality(asg []Assignment) Quality {
	q := Quality{Warnings: []string{}} // a list in JSON even when empty
	if len(asg) == 0 {
		return q
	}
	nb := make([][]int, m.Units())
	for u := range nb {
		nb[u] = m.Lattice.Neighbours(u)
	}
	hits := m.hits(asg)
	var broken int
	for _, a := range asg {
		q.QE += a.QE
		if a.Second >= 0 && !slices.Contains(nb[a.BMU], a.Second) {
			broken++
		}
	}
	q.QE /= float64(len(asg))
	q.TE = float64(broken) / float64(len(asg))
	var unused int
	for _, h := range hits {
		if h == 0 {
			unused++
		}
	}
	q.Unused = float64(unused) / float64(len(hits))
	if q.Unused > unusedWarning {
		q.Warnings = append(q.Warnings, fmt.Sprintf(
			"mapper: %.0f%% of the %d units win no window, so the winners form thin lines across the map: use a smaller grid or a larger initial neighbourhood width (mapper.Config.Sigma0)",
			100*q.Unused, len(hits)))
	}
	return q
}
