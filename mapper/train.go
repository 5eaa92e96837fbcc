package mapper

import (
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"
)

// pcaSpan is how far the principal-component initialisation reaches along
// each axis, in standard deviations of the data along it.
const pcaSpan = 2

// Train trains a map on the rows of x (windows × features, already scaled)
// with the settings cfg, whose unset fields get the defaults of WithDefaults,
// and returns it with the complete settings.
// The batch map is deterministic: the same data and settings give the same
// codebook for any number of workers. InitMap followed by one Accumulate and
// Smooth(acc, Sigma(cfg, e)) per epoch e reaches the same codebook.
func Train(x *mat.Dense, cfg Config) (*Map, Config, error) {
	m, cfg, err := InitMap(x, cfg)
	if err != nil {
		return nil, cfg, err
	}
	train(m, x, cfg)
	return m, cfg, nil
}

// TrainFrom continues training from the codebook of m, which it leaves
// unchanged, and returns the new map and the complete settings: on the
// same lattice, with Init ignored, and unset Sigma0 and SigmaEnd meaning 1
// lattice unit and Sigma0, a neighbourhood small enough to keep the map's
// layout. The grid fields of cfg must be zero or agree with m's lattice;
// Hex and Flat are taken from m.
func TrainFrom(m *Map, x *mat.Dense, cfg Config) (*Map, Config, error) {
	if err := checkData(x); err != nil {
		return nil, cfg, err
	}
	if _, d := x.Dims(); d != m.Dim {
		return nil, cfg, fmt.Errorf("mapper: the data have %d features, the map %d", d, m.Dim)
	}
	l := m.Lattice
	if (cfg.Cols != 0 || cfg.Rows != 0) && (cfg.Cols != l.Cols || cfg.Rows != l.Rows) {
		return nil, cfg, fmt.Errorf("mapper: grid %dx%d asked of a %dx%d map", cfg.Cols, cfg.Rows, l.Cols, l.Rows)
	}
	cfg.Cols, cfg.Rows, cfg.Hex, cfg.Flat = l.Cols, l.Rows, l.Hex, l.Flat
	if cfg.Sigma0 == 0 {
		cfg.Sigma0 = 1
	}
	if cfg.SigmaEnd == 0 {
		cfg.SigmaEnd = cfg.Sigma0
	}
	n, _ := x.Dims()
	cfg = cfg.WithDefaults(n, 0, 0)
	if err := cfg.Validate(); err != nil {
		return nil, cfg, err
	}
	out := &Map{Lattice: l, Dim: m.Dim, Codebook: append([]float64(nil), m.Codebook...)}
	if len(out.Codebook) != l.Units()*m.Dim {
		return nil, cfg, fmt.Errorf("mapper: codebook has %d values, want %d×%d", len(out.Codebook), l.Units(), m.Dim)
	}
	train(out, x, cfg)
	return out, cfg, nil
}

// InitMap checks the data and the settings, fills the unset settings (the
// default grid needs the data's singular values) and returns the initial map
// with the complete settings. With Init "pca" the codebook spans ±2 standard
// deviations along the first two principal axes of the data, laid out by
// the units' planar positions; with "random" it holds distinct data rows
// drawn with cfg.Seed (drawn with replacement when there are more units than
// rows).
func InitMap(x *mat.Dense, cfg Config) (*Map, Config, error) {
	if err := checkData(x); err != nil {
		return nil, cfg, err
	}
	n, d := x.Dims()
	var pc principal
	if cfg.Init == "" || cfg.Init == InitPCA || cfg.Cols == 0 && cfg.Rows == 0 {
		var err error
		if pc, err = principalAxes(x); err != nil {
			return nil, cfg, err
		}
	}
	cfg = cfg.WithDefaults(n, pc.sv[0], pc.sv[1])
	if err := cfg.Validate(); err != nil {
		return nil, cfg, err
	}
	m := &Map{Lattice: cfg.Lattice(), Dim: d, Codebook: make([]float64, cfg.Cols*cfg.Rows*d)}
	if cfg.Init == InitPCA {
		pcaInit(m, pc, n)
	} else {
		randomInit(m, x, cfg.Seed)
	}
	return m, cfg, nil
}

// checkData refuses data a map cannot be trained on.
func checkData(x *mat.Dense) error {
	if x == nil || x.IsEmpty() {
		return fmt.Errorf("mapper: no training windows")
	}
	n, _ := x.Dims()
	if n < 2 {
		return fmt.Errorf("mapper: training needs at least 2 windows, got %d", n)
	}
	for i := range n {
		for j, v := range x.RawRowView(i) {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("mapper: window %d, feature %d: %v is not a finite number", i, j, v)
			}
		}
	}
	return nil
}

// principal holds the mean of the data and its first two principal axes.
type principal struct {
	mean []float64
	sv   [2]float64   // leading singular values of the centred data
	axes [2][]float64 // unit vectors; nil beyond the rank
}

// principalAxes computes the SVD of the centred data (gonum mat.SVD).
func principalAxes(x *mat.Dense) (principal, error) {
	n, d := x.Dims()
	pc := principal{mean: make([]float64, d)}
	for i := range n {
		for j, v := range x.RawRowView(i) {
			pc.mean[j] += v
		}
	}
	for j := range pc.mean {
		pc.mean[j] /= float64(n)
	}
	c := mat.NewDense(n, d, nil)
	for i := range n {
		r := c.RawRowView(i)
		for j, v := range x.RawRowView(i) {
			r[j] = v - pc.mean[j]
		}
	}
	var svd mat.SVD
	if !svd.Factorize(c, mat.SVDThinV) {
		return pc, fmt.Errorf("mapper: the singular value decomposition of the data did not converge")
	}
	vals := svd.Values(nil)
	var v mat.Dense
	svd.VTo(&v)
	for k := 0; k < 2 && k < len(vals); k++ {
		pc.sv[k] = vals[k]
		axis := mat.Col(nil, k, &v)
		// The sign of a singular vector is arbitrary: fix it so that the
		// largest component is positive, for a layout that does not depend
		// on the library's choice.
		big := 0
		for j := range axis {
			if math.Abs(axis[j]) > math.Abs(axis[big]) {
				big = j
			}
		}
		if axis[big] < 0 {
			for j := range axis {
				axis[j] = -axis[j]
			}
		}
		pc.axes[k] = axis
	}
	return pc, nil
}

// pcaInit lays the codebook out on the plane of the first two principal
// axes, the units' planar positions mapped onto ±pcaSpan standard deviations.
func pcaInit(m *Map, pc principal, n int) {
	l := m.Lattice
	minX, maxX, minY, maxY := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	for u := range l.Units() {
		px, py := l.Position(u)
		minX, maxX = math.Min(minX, px), math.Max(maxX, px)
		minY, maxY = math.Min(minY, py), math.Max(maxY, py)
	}
	scaled := func(p, lo, hi float64) float64 {
		if hi == lo {
			return 0
		}
		return 2*(p-lo)/(hi-lo) - 1
	}
	coef := [2]float64{}
	for k := range coef {
		coef[k] = pcaSpan * pc.sv[k] / math.Sqrt(float64(n-1))
	}
	for u := range l.Units() {
		px, py := l.Position(u)
		t := [2]float64{scaled(px, minX, maxX), scaled(py, minY, maxY)}
		w := m.Vector(u)
		copy(w, pc.mean)
		for k, axis := range pc.axes {
			for j, a := range axis {
				w[j] += t[k] * coef[k] * a
			}
		}
	}
}

// newRand returns the generator of a seed.
func newRand(seed int64) *rand.Rand {
	return rand.New(rand.NewPCG(uint64(seed), 0x6b696e6d6170))
}

// randomInit fills the codebook with data rows drawn with seed.
func randomInit(m *Map, x *mat.Dense, seed int64) {
	n, _ := x.Dims()
	rng := newRand(seed)
	u := m.Units()
	var rows []int
	if u <= n {
		rows = rng.Perm(n)[:u]
	} else {
		rows = make([]int, u)
		for i := range rows {
			rows[i] = rng.IntN(n)
		}
	}
	for j, i := range rows {
		copy(m.Vector(j), x.RawRowView(i))
	}
}

// train runs the epochs of complete settings on m.
func train(m *Map, x *mat.Dense, cfg Config) {
	if cfg.Rule == RuleOnline {
		trainOnline(m, x, cfg)
		return
	}
	trainBatch(m, x, cfg)
}

// trainBatch runs Kohonen's batch map: with the bounded winner search
// where the bounds of every window and unit fit in maxBoundPairs, with the
// shortcut search otherwise. Every search finds the same winners.
func trainBatch(m *Map, x *mat.Dense, cfg Config) {
	if n, _ := x.Dims(); n*m.Units() <= maxBoundPairs {
		trainBounded(m, x, cfg)
		return
	}
	trainShortcut(m, x, cfg)
}

// trainBounded runs the batch map with Elkan's bounded search, which it
// starts with a full search that fills the bounds, and fills them again so
// whenever a sample says that a bounded pass would compute more than
// maxBoundShare of the distances.
func trainBounded(m *Map, x *mat.Dense, cfg Config) {
	n, _ := x.Dims()
	s := newSearcher(m)
	bd := newBounds(n, m.Units(), m.Codebook)
	for e := range cfg.Epochs {
		bd.track(m.Codebook)
		refill := e == 0 || s.share(x.RawMatrix(), bd) > maxBoundShare
		r := s.run(x, runOptions{workers: cfg.Workers, accumulate: true, bounds: bd, refill: refill})
		epochDone(m, s, r, cfg, e, n)
	}
}

// trainShortcut runs the batch map trying the shortcut winner search from
// the second epoch on; shortcutPolicy stops trying while the shortcut does
// not pay.
func trainShortcut(m *Map, x *mat.Dense, cfg Config) {
	n, _ := x.Dims()
	s := newSearcher(m)
	prev := make([]int, n)
	var policy shortcutPolicy
	for e := range cfg.Epochs {
		use := e > 0 && policy.try()
		s.nearLen = 0
		if use {
			s.prepareShortcut(shortcutList(m.Units()), cfg.Workers)
		}
		r := s.run(x, runOptions{workers: cfg.Workers, accumulate: true, prev: prev})
		if use {
			policy.record(r, n, m.Units())
		}
		epochDone(m, s, r, cfg, e, n)
	}
}

// epochDone ends batch epoch e with the pass r over the n windows: it
// smooths the codebook and reports progress.
func epochDone(m *Map, s *searcher, r runResult, cfg Config, e, n int) {
	m.Smooth(r.acc, Sigma(cfg, e))
	s.refreshNorms()
	if cfg.Progress != nil {
		cfg.Progress(e, r.qe/float64(n))
	}
}

// maxBoundShare is the share of the window–unit distances above which a
// bounded pass costs more than a full one: on the demo fleet a full pass
// (matrix product, settling and refilling the bounds) took about as long
// as a bounded pass computing 55 % of the distances.
const maxBoundShare = 0.5

// shortcutList is how many nearby units the shortcut search may examine
// before it falls back to the full search.
func shortcutList(units int) int { return min(units, max(16, units/8)) }

// shortcutPolicy decides when the shortcut search is worth trying: after an
// epoch in which it cost more than three quarters of a full search, it waits
// 1, 2, then at most 4 epochs before trying again.
type shortcutPolicy struct{ wait, backoff int }

func (p *shortcutPolicy) try() bool {
	if p.wait > 0 {
		p.wait--
		return false
	}
	return true
}

// record weighs an epoch's shortcut cost in distance evaluations (one costs
// about two pairs of the matrix product, plus the unit-to-unit table)
// against the full search's n·units pairs.
func (p *shortcutPolicy) record(r runResult, n, units int) {
	cost := 2*(r.evals+units*units) + r.fallbacks*units
	if 4*cost > 3*n*units {
		p.backoff = min(max(1, 2*p.backoff), 4)
		p.wait = p.backoff
		return
	}
	p.backoff = 0
}

// trainOnline runs the online rule: samples in a random order drawn with
// cfg.Seed; the learning rate and the neighbourhood width decay
// exponentially with every sample, from Eta0 and Sigma0 at the first to
// EtaEnd and SigmaEnd at the last.
func trainOnline(m *Map, x *mat.Dense, cfg Config) {
	n, _ := x.Dims()
	u := m.Units()
	s := newSearcher(m)
	rng := newRand(cfg.Seed)
	total := cfg.Epochs * n
	h := make([]float64, u)
	cross := make([]float64, u)
	step := 0
	for e := range cfg.Epochs {
		var qe float64
		for _, i := range rng.Perm(n) {
			xi := x.RawRowView(i)
			sigma := decay(cfg.Sigma0, cfg.SigmaEnd, step, total)
			eta := decay(cfg.Eta0, cfg.EtaEnd, step, total)
			step++
			blas64.Gemv(blas.NoTrans, 1, s.w, blas64.Vector{N: m.Dim, Inc: 1, Data: xi}, 0, blas64.Vector{N: u, Inc: 1, Data: cross})
			a := s.settle(xi, cross)
			qe += a.QE
			neighbourhoodRow(m.Lattice, sigma, a.BMU, h)
			for j, hj := range h {
				if hj == 0 {
					continue
				}
				f := eta * hj
				w := m.Vector(j)
				for k, v := range xi {
					w[k] += f * (v - w[k])
				}
				s.refreshNorm(j)
			}
		}
		if cfg.Progress != nil {
			cfg.Progress(e, qe/float64(n))
		}
	}
}
