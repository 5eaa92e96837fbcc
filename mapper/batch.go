package mapper

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"

	"github.com/kinmap/kinmap/internal/parallel"
	"github.com/kinmap/kinmap/lattice"
)

// Accumulator holds the per-unit statistics of one batch epoch: how many
// windows each unit won and the sum of those windows. It is an associative
// reduction: accumulators of disjoint sets of windows merge into the
// accumulator of their union, in any order, up to floating-point
// reassociation. Its fields are exported so that a distributed runner can
// encode it.
type Accumulator struct {
	Units, Dim int
	Counts     []float64 // windows won by each unit
	Sums       []float64 // Units × Dim, row-major: sum of the windows won
}

// NewAccumulator returns an empty accumulator for a map of units units of
// dimension dim.
func NewAccumulator(units, dim int) *Accumulator {
	return &Accumulator{Units: units, Dim: dim, Counts: make([]float64, units), Sums: make([]float64, units*dim)}
}

// Add records window x as won by unit.
func (a *Accumulator) Add(x []float64, unit int) {
	a.Counts[unit]++
	s := a.Sums[unit*a.Dim : (unit+1)*a.Dim]
	for i, v := range x[:a.Dim] {
		s[i] += v
	}
}

// Merge adds other into a. It panics if their shapes differ.
func (a *Accumulator) Merge(other *Accumulator) {
	if a.Units != other.Units || a.Dim != other.Dim {
		panic(fmt.Sprintf("mapper: merging a %d×%d accumulator into a %d×%d one", other.Units, other.Dim, a.Units, a.Dim))
	}
	for u, n := range other.Counts {
		if n == 0 {
			continue // its sums are zero: adding them changes nothing
		}
		a.Counts[u] += n
		s := a.Sums[u*a.Dim : (u+1)*a.Dim]
		for i, v := range other.Sums[u*a.Dim : (u+1)*a.Dim] {
			s[i] += v
		}
	}
}

// reset empties a, touching only the units that won something.
func (a *Accumulator) reset() {
	for u, n := range a.Counts {
		if n != 0 {
			a.Counts[u] = 0
			clear(a.Sums[u*a.Dim : (u+1)*a.Dim])
		}
	}
}

// Accumulate finds the best-matching unit of every row of x on up to workers
// goroutines (0 means all cores) and returns the accumulator of the rows and
// the sum of their quantization errors. The rows are taken in fixed blocks
// whose accumulators are merged in block order, so the result does not
// depend on workers.
func (m *Map) Accumulate(x *mat.Dense, workers int) (*Accumulator, float64) {
	r := newSearcher(m).run(x, runOptions{workers: workers, accumulate: true})
	return r.acc, r.qe
}

// Smooth replaces the codebook by the batch-map update for the statistics in
// acc and the neighbourhood width sigma (in lattice units):
//
//	w_j = Σ_i h_ji S_i / Σ_i h_ji n_i,  h_ji = exp(−d_ji² / 2σ²),
//
// where n_i and S_i are the count and sum of unit i and d_ji is the lattice
// distance, the short way round on a torus. A unit whose denominator is zero
// keeps its vector. Sigma 0 is the limit of no neighbourhood: each unit moves
// to the mean of the windows it won, a k-means step. It panics if acc does
// not fit the map or sigma is negative or not a number.
func (m *Map) Smooth(acc *Accumulator, sigma float64) {
	u, d := m.Units(), m.Dim
	if acc.Units != u || acc.Dim != d {
		panic(fmt.Sprintf("mapper: smoothing a %d×%d map with a %d×%d accumulator", u, d, acc.Units, acc.Dim))
	}
	if !(sigma >= 0) {
		panic(fmt.Sprintf("mapper: neighbourhood width %g is not a non-negative number", sigma))
	}
	h := neighbourhood(m.Lattice, sigma)
	hg := blas64.General{Rows: u, Cols: u, Stride: u, Data: h}
	num := make([]float64, u*d)
	blas64.Gemm(blas.NoTrans, blas.NoTrans, 1, hg,
		blas64.General{Rows: u, Cols: d, Stride: d, Data: acc.Sums}, 0,
		blas64.General{Rows: u, Cols: d, Stride: d, Data: num})
	den := make([]float64, u)
	blas64.Gemv(blas.NoTrans, 1, hg, blas64.Vector{N: u, Inc: 1, Data: acc.Counts}, 0, blas64.Vector{N: u, Inc: 1, Data: den})
	for j, q := range den {
		if q > 0 {
			w := m.Vector(j)
			for k, v := range num[j*d : (j+1)*d] {
				w[k] = v / q
			}
		}
	}
}

// neighbourhood returns the Units × Units Gaussian weights of the lattice
// for width sigma.
func neighbourhood(l lattice.Lattice, sigma float64) []float64 {
	return l.Pairwise(func(d2 float64) float64 { return kernel(d2, sigma) })
}

// neighbourhoodRow fills the weights of unit j for width sigma.
func neighbourhoodRow(l lattice.Lattice, sigma float64, j int, h []float64) {
	for i := range h {
		h[i] = kernel(l.Dist2(j, i), sigma)
	}
}

// kernel is the Gaussian weight exp(−d2 / 2σ²) of a squared lattice
// distance, 1 at distance 0 even for σ = 0. Weights that would be
// subnormal are set to zero, so a unit reached only by such weights keeps
// its vector rather than take one computed at reduced precision.
func kernel(d2, sigma float64) float64 {
	if d2 == 0 {
		return 1
	}
	if sigma == 0 {
		return 0
	}
	v := math.Exp(-d2 / (2 * sigma * sigma))
	if v < 0x1p-1022 {
		return 0
	}
	return v
}

// blockRows is the number of rows in one block of a pass over the data. It
// is fixed so that the order in which block results are combined, and so
// every floating-point sum, is the same for any number of workers.
const blockRows = 256

// runOptions says what a pass over the data computes.
type runOptions struct {
	workers    int
	accumulate bool         // build the accumulator
	out        []Assignment // when set, receives every row's assignment
	prev       []int        // when set with a prepared shortcut, each row's previous winner, updated in place
	// bounds, when set, are those of the bounded search, which the pass
	// uses, or, with refill, sets from a full search.
	bounds *bounds
	refill bool
}

// runResult is what a pass over the data produced.
type runResult struct {
	acc       *Accumulator
	qe        float64 // sum of quantization errors, in block order
	fallbacks int     // rows for which the shortcut could not prove its winner
	evals     int     // distances computed by the shortcut or the bounded search
}

// blockResult is the contribution of one block.
type blockResult struct {
	acc              *Accumulator
	qe               float64
	fallbacks, evals int
}

// blockScratch is one worker's memory.
type blockScratch struct {
	cross []float64    // blockRows × units cross terms
	rows  []float64    // rows gathered for a fallback search
	asg   []Assignment // the block's assignments when not kept
	index []int        // block rows that fell back
	fall  []Assignment // their assignments
}

// run makes one pass over the rows of x in blocks of blockRows.
func (s *searcher) run(x *mat.Dense, opt runOptions) runResult {
	n, d := x.Dims()
	if d != s.dim {
		panic(fmt.Sprintf("mapper: %d features for a map of dimension %d", d, s.dim))
	}
	raw := x.RawMatrix()
	blocks := (n + blockRows - 1) / blockRows
	workers := max(1, min(parallel.Workers(opt.workers), blocks))
	ahead := 2 * workers // blocks out at once, each holding an accumulator

	// Accumulators circulate through pool: a block takes one and gives it
	// back once merged, so at most ahead exist.
	var pool chan *Accumulator
	if opt.accumulate {
		pool = make(chan *Accumulator, ahead)
		for range ahead {
			pool <- NewAccumulator(s.units, s.dim)
		}
	}
	res := runResult{}
	if opt.accumulate {
		res.acc = NewAccumulator(s.units, s.dim)
	}
	type job struct {
		b   int
		acc *Accumulator
	}
	parallel.Stream(workers, ahead,
		func() *blockScratch {
			return &blockScratch{cross: make([]float64, blockRows*s.units), asg: make([]Assignment, blockRows)}
		},
		func(b int) (job, bool) {
			j := job{b: b}
			if pool != nil && b < blocks {
				j.acc = <-pool
			}
			return j, b < blocks
		},
		func(sc *blockScratch, j job) blockResult { return s.block(raw, j.b, j.acc, sc, opt) },
		func(_ int, p blockResult) bool {
			res.qe += p.qe
			res.fallbacks += p.fallbacks
			res.evals += p.evals
			if p.acc != nil {
				res.acc.Merge(p.acc)
				pool <- p.acc
			}
			return true
		})
	return res
}

// block processes block b of the rows.
func (s *searcher) block(raw blas64.General, b int, acc *Accumulator, sc *blockScratch, opt runOptions) blockResult {
	lo := b * blockRows
	hi := min(lo+blockRows, raw.Rows)
	row := func(i int) []float64 { return raw.Data[i*raw.Stride : i*raw.Stride+s.dim] }
	out := sc.asg[:hi-lo]
	if opt.out != nil {
		out = opt.out[lo:hi]
	}
	res := blockResult{acc: acc}
	bd := opt.bounds
	switch {
	case bd != nil && opt.refill:
		xb := blas64.General{Rows: hi - lo, Cols: s.dim, Stride: raw.Stride, Data: raw.Data[lo*raw.Stride:]}
		s.fullBlock(xb, sc.cross, out)
		s.fill(xb, sc.cross, out, bd.key[lo*s.units:hi*s.units], bd.set, bd.best[lo:hi], bd.again[lo:hi])
	case bd != nil:
		for i := lo; i < hi; i++ {
			a, evals := s.bounded(row(i), bd.key[i*s.units:(i+1)*s.units], bd, int(bd.best[i]), int(bd.again[i]))
			out[i-lo] = a
			bd.best[i], bd.again[i] = int32(a.BMU), int32(a.Second)
			res.evals += evals
		}
	case opt.prev != nil && s.nearLen > 0:
		sc.index = sc.index[:0]
		for i := lo; i < hi; i++ {
			a, ok, evals := s.shortcut(row(i), opt.prev[i])
			res.evals += evals
			if ok {
				out[i-lo] = a
			} else {
				sc.index = append(sc.index, i)
			}
		}
		if k := len(sc.index); k > 0 {
			res.fallbacks = k
			if sc.rows == nil {
				sc.rows = make([]float64, blockRows*s.dim)
				sc.fall = make([]Assignment, blockRows)
			}
			for t, i := range sc.index {
				copy(sc.rows[t*s.dim:(t+1)*s.dim], row(i))
			}
			s.fullBlock(blas64.General{Rows: k, Cols: s.dim, Stride: s.dim, Data: sc.rows}, sc.cross, sc.fall)
			for t, i := range sc.index {
				out[i-lo] = sc.fall[t]
			}
		}
	default:
		s.fullBlock(blas64.General{Rows: hi - lo, Cols: s.dim, Stride: raw.Stride, Data: raw.Data[lo*raw.Stride:]}, sc.cross, out)
	}
	if acc != nil {
		acc.reset()
	}
	for i := lo; i < hi; i++ {
		a := out[i-lo]
		res.qe += a.QE
		if acc != nil {
			acc.Add(row(i), a.BMU)
		}
		if opt.prev != nil {
			opt.prev[i] = a.BMU
		}
	}
	return res
}
