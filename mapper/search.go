package mapper

import (
	"math"
	"slices"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"

	"github.com/kinmap/kinmap/internal/parallel"
	"github.com/kinmap/kinmap/internal/selection"
)

// sqdist is the squared Euclidean distance summed term by term in a fixed
// order. It is the reference every winner search agrees on: the matrix
// product only shortlists candidates and sqdist settles them, so the full
// and the shortcut searches give identical winners and errors.
func sqdist(a, b []float64) float64 {
	b = b[:len(a)]
	var s0, s1, s2, s3 float64
	i := 0
	for ; i+4 <= len(a); i += 4 {
		d0 := a[i] - b[i]
		d1 := a[i+1] - b[i+1]
		d2 := a[i+2] - b[i+2]
		d3 := a[i+3] - b[i+3]
		s0 += d0 * d0
		s1 += d1 * d1
		s2 += d2 * d2
		s3 += d3 * d3
	}
	for ; i < len(a); i++ {
		d := a[i] - b[i]
		s0 += d * d
	}
	return (s0 + s1) + (s2 + s3)
}

// best2 keeps the two best (smallest) squared distances seen, ties going to
// the lower unit.
type best2 struct {
	d1, d2 float64
	u1, u2 int
}

func newBest2() best2 { return best2{math.Inf(1), math.Inf(1), -1, -1} }

func (b *best2) offer(d float64, u int) {
	switch {
	case d < b.d1 || d == b.d1 && u < b.u1:
		b.d2, b.u2 = b.d1, b.u1
		b.d1, b.u1 = d, u
	case u != b.u1 && (d < b.d2 || d == b.d2 && u < b.u2):
		b.d2, b.u2 = d, u
	}
}

func (b *best2) assignment() Assignment {
	return Assignment{BMU: b.u1, Second: b.u2, QE: math.Sqrt(b.d1)}
}

// shortcutSlack widens every pruning test of the shortcut search. The
// distances it compares carry relative rounding errors near D·2⁻⁵³; this
// slack is far above that for any realistic D, so a pruned unit provably
// cannot beat the second best.
const shortcutSlack = 1e-9

// searcher finds best-matching units against one state of a codebook.
type searcher struct {
	units, dim int
	code       []float64      // the map's codebook, aliased
	w          blas64.General // the codebook as a Units × Dim matrix
	ww         []float64      // squared norm of each codebook vector
	maxNorm    float64

	// For the shortcut search: for each unit, the nearest units in codebook
	// space (itself included), ascending by distance; beyond is a lower
	// bound on the distance to any unit not listed.
	nearLen  int
	nearUnit []int32
	nearDist []float64
	beyond   []float64
}

func newSearcher(m *Map) *searcher {
	s := &searcher{
		units: m.Units(), dim: m.Dim, code: m.Codebook,
		w:  blas64.General{Rows: m.Units(), Cols: m.Dim, Stride: m.Dim, Data: m.Codebook},
		ww: make([]float64, m.Units()),
	}
	s.refreshNorms()
	return s
}

// refreshNorms recomputes the norms after the codebook changed.
func (s *searcher) refreshNorms() {
	s.maxNorm = 0
	for j := range s.ww {
		s.refreshNorm(j)
	}
}

func (s *searcher) refreshNorm(j int) {
	v := s.code[j*s.dim : (j+1)*s.dim]
	var n float64
	for _, a := range v {
		n += a * a
	}
	s.ww[j] = n
	s.maxNorm = math.Max(s.maxNorm, math.Sqrt(n))
}

func (s *searcher) vector(j int) []float64 { return s.code[j*s.dim : (j+1)*s.dim] }

// tolerance bounds twice the disagreement between the expanded distance
// ‖x‖² − 2x·w + ‖w‖² as computed through BLAS and sqdist, for any unit.
// Both carry relative errors of about D·2⁻⁵³ of (‖x‖ + ‖w‖)².
func (s *searcher) tolerance(x []float64) float64 {
	var xx float64
	for _, a := range x {
		xx += a * a
	}
	r := math.Sqrt(xx) + s.maxNorm
	return 8 * float64(s.dim+2) * 0x1p-53 * r * r
}

// fullBlock finds the two best units of every row of xb, using c (at least
// xb.Rows × units) for the cross terms. Rows are scored by ‖w‖² − 2x·w from
// one matrix product; every unit within the rounding tolerance of the second
// best is then settled by sqdist.
func (s *searcher) fullBlock(xb blas64.General, c []float64, out []Assignment) {
	cg := blas64.General{Rows: xb.Rows, Cols: s.units, Stride: s.units, Data: c[:xb.Rows*s.units]}
	blas64.Gemm(blas.NoTrans, blas.Trans, 1, xb, s.w, 0, cg)
	for i := range xb.Rows {
		x := xb.Data[i*xb.Stride : i*xb.Stride+s.dim]
		out[i] = s.settle(x, cg.Data[i*s.units:(i+1)*s.units])
	}
}

// settle picks the two best units of x from its row of cross terms.
func (s *searcher) settle(x, cross []float64) Assignment {
	cross = cross[:s.units]
	ww := s.ww[:s.units]
	// The three best scores: usually only the first two need settling.
	v1, v2, v3 := math.Inf(1), math.Inf(1), math.Inf(1)
	j1, j2 := -1, -1
	for j, c := range cross {
		v := ww[j] - 2*c
		if v >= v3 {
			continue
		}
		switch {
		case v < v1:
			v3, v2, j2, v1, j1 = v2, v1, j1, v, j
		case v < v2:
			v3, v2, j2 = v2, v, j
		default:
			v3 = v
		}
	}
	b := newBest2()
	limit := v2 + s.tolerance(x)
	if v3 <= limit {
		for j, c := range cross {
			if ww[j]-2*c <= limit {
				b.offer(sqdist(x, s.vector(j)), j)
			}
		}
		return b.assignment()
	}
	b.offer(sqdist(x, s.vector(j1)), j1)
	if j2 >= 0 {
		b.offer(sqdist(x, s.vector(j2)), j2)
	}
	return b.assignment()
}

// prepareShortcut lists, for every unit, its nearest listLen units in
// codebook space, for the shortcut search. The unit-to-unit distances come
// from one matrix product, ‖a‖² + ‖b‖² − 2a·b, lowered by its rounding
// bound: the search needs lower bounds only, and these are safe ones.
func (s *searcher) prepareShortcut(listLen, workers int) {
	u := s.units
	listLen = min(listLen, u)
	s.nearLen = listLen
	s.nearUnit = make([]int32, u*listLen)
	s.nearDist = make([]float64, u*listLen)
	s.beyond = make([]float64, u)
	gram := make([]float64, u*u)
	blas64.Gemm(blas.NoTrans, blas.Trans, 1, s.w, s.w, 0, blas64.General{Rows: u, Cols: u, Stride: u, Data: gram})
	tol := 8 * float64(s.dim+2) * 0x1p-53 * 4 * s.maxNorm * s.maxNorm
	type cand struct {
		d float64
		u int32
	}
	byDist := func(p, q cand) int {
		if p.d != q.d {
			if p.d < q.d {
				return -1
			}
			return 1
		}
		return int(p.u - q.u)
	}
	type scratch struct {
		dist, sorted []float64
		list         []cand
	}
	newScratch := func() *scratch {
		return &scratch{dist: make([]float64, u), sorted: make([]float64, u), list: make([]cand, 0, listLen)}
	}
	parallel.For(u, workers, newScratch, func(sc *scratch, b int) {
		dist, sorted, list := sc.dist, sc.sorted, sc.list
		g := gram[b*u : (b+1)*u]
		for j := range dist {
			dist[j] = math.Sqrt(math.Max(0, s.ww[b]+s.ww[j]-2*g[j]-tol))
		}
		dist[b] = 0
		// The listLen nearest: those below the cut, then those at it
		// by unit number; every unit left out is at least cut away.
		cut := math.Inf(1)
		if listLen < u {
			copy(sorted, dist)
			selection.Nth(sorted, listLen)
			cut = sorted[listLen]
		}
		list = list[:0]
		for j, d := range dist {
			if d < cut {
				list = append(list, cand{d, int32(j)})
			}
		}
		for j, d := range dist {
			if d == cut && len(list) < listLen {
				list = append(list, cand{d, int32(j)})
			}
		}
		slices.SortFunc(list, byDist)
		for k, c := range list {
			s.nearUnit[b*listLen+k] = c.u
			s.nearDist[b*listLen+k] = c.d
		}
		s.beyond[b] = cut
	})
}

// shortcut finds the two best units of x by looking outwards from unit prev
// (its winner in the previous epoch) in codebook space. By the triangle
// inequality a unit j at distance δ from w_prev is at least δ − r from x,
// where r = ‖x − w_prev‖; once δ − r exceeds the second-best distance found,
// no further unit can enter the best two. It reports false, having done
// nothing useful, when its list ends before that is proven; evals counts the
// distances computed.
func (s *searcher) shortcut(x []float64, prev int) (a Assignment, ok bool, evals int) {
	r := math.Sqrt(sqdist(x, s.vector(prev))) * (1 + shortcutSlack)
	units := s.nearUnit[prev*s.nearLen : (prev+1)*s.nearLen]
	dists := s.nearDist[prev*s.nearLen : (prev+1)*s.nearLen]
	b := newBest2()
	proven := func(delta float64) bool {
		return b.u2 >= 0 && delta*(1-shortcutSlack)-r > math.Sqrt(b.d2)*(1+shortcutSlack)
	}
	for k, j := range units {
		if proven(dists[k]) {
			return b.assignment(), true, k
		}
		b.offer(sqdist(x, s.vector(int(j))), int(j))
	}
	if s.units == 1 || proven(s.beyond[prev]) {
		return b.assignment(), true, len(units)
	}
	return Assignment{}, false, len(units)
}

// maxBoundPairs caps the windows × units for which training keeps the
// bounds of the bounded winner search: 64 MB of them. Larger data take
// the shortcut and full searches, which need no memory per pair.
const maxBoundPairs = 1 << 24

// travelSlack widens a unit's travel, a running sum of its moves, far
// beyond the rounding of the sum, to be subtracted from a bound, and
// narrows it as much where the bound is set.
const travelSlack = 1e-12

// bounds holds, for every row and unit, a lower bound on their distance,
// for the winner search of C. Elkan, "Using the triangle inequality to
// accelerate k-means", ICML 2003: when a unit moves by δ, a distance to it
// shrinks by at most δ, so a unit whose bound exceeds the second-best
// distance found cannot be among the best two and needs no distance. Late
// in training the units move little and most pairs are passed over; the
// winners found are those of the full search. A bound is kept as its
// value plus the unit's travel (all its moves) when it was set, so that a
// move costs no pass over the rows: the bound now is that key less the
// travel now.
type bounds struct {
	units       int
	key         []float32 // rows × units, rounded down
	best, again []int32   // each row's best and second-best unit at the last pass
	code        []float64 // the codebook of the last pass
	set, now    []float64 // each unit's travel, narrowed and widened by travelSlack
}

// newBounds returns the bounds of rows rows for the units of codebook
// code, which have not moved yet. They are set by a first pass that
// refills them.
func newBounds(rows, units int, code []float64) *bounds {
	return &bounds{
		units: units,
		key:   make([]float32, rows*units),
		best:  make([]int32, rows), again: make([]int32, rows),
		code: slices.Clone(code),
		set:  make([]float64, units), now: make([]float64, units),
	}
}

// track adds to every unit's travel how far it moved from the codebook of
// the last pass to code, rounded up, and keeps code for the next.
func (b *bounds) track(code []float64) {
	dim := len(code) / b.units
	for j := range b.now {
		v, w := code[j*dim:(j+1)*dim], b.code[j*dim:(j+1)*dim]
		travel := b.now[j]/(1+travelSlack) + math.Sqrt(sqdist(v, w))*(1+shortcutSlack)
		b.set[j], b.now[j] = travel*(1-travelSlack), travel*(1+travelSlack)
	}
	copy(b.code, code)
}

// down32 returns a float32 at most v ≥ 0: v shrunk by more than float32
// rounds, and 0 below float32's normal range.
func down32(v float64) float32 {
	if v < 0x1p-100 {
		return 0
	}
	return float32(v * (1 - 0x1p-20))
}

// fill sets the bounds of the rows of xb from their cross terms c with the
// codebook, as fullBlock left them, and their winners out: the expanded
// distance less its rounding tolerance.
func (s *searcher) fill(xb blas64.General, c []float64, out []Assignment, key []float32, set []float64, best, again []int32) {
	for i := range xb.Rows {
		x := xb.Data[i*xb.Stride : i*xb.Stride+s.dim]
		var xx float64
		for _, a := range x {
			xx += a * a
		}
		tol := s.tolerance(x)
		row := key[i*s.units : (i+1)*s.units]
		for j, cj := range c[i*s.units : (i+1)*s.units] {
			row[j] = down32(math.Sqrt(math.Max(0, xx+s.ww[j]-2*cj-tol)) + set[j])
		}
		best[i], again[i] = int32(out[i].BMU), int32(out[i].Second)
	}
}

// bounded finds the two best units of x from its row of bounds key, which
// it updates: the best two of the last pass first, then every unit whose
// bound does not exceed the second-best distance found. evals counts the
// distances computed.
func (s *searcher) bounded(x []float64, key []float32, b *bounds, best, again int) (a Assignment, evals int) {
	top := newBest2()
	limit := math.Inf(1) // the second-best distance, widened by the slack
	eval := func(j int) {
		d := sqdist(x, s.vector(j))
		key[j] = down32(math.Sqrt(d)*(1-shortcutSlack) + b.set[j])
		top.offer(d, j)
		if top.u2 >= 0 {
			limit = math.Sqrt(top.d2) * (1 + shortcutSlack)
		}
		evals++
	}
	eval(best)
	if again >= 0 && again != best {
		eval(again)
	}
	now := b.now[:len(key)]
	for j, k := range key {
		if float64(k)-now[j] <= limit && j != best && j != again {
			eval(j)
		}
	}
	return top.assignment(), evals
}

// share estimates, on every sampleStep-th row of x, the share of the
// pairs a bounded pass would compute: those whose bound does not exceed
// the farther of the row's best two units of the last pass, the most the
// search's limit can be.
func (s *searcher) share(x blas64.General, b *bounds) float64 {
	const sampleStep = 16
	var rows, below int
	for i := 0; i < x.Rows; i += sampleStep {
		row := x.Data[i*x.Stride : i*x.Stride+s.dim]
		d := sqdist(row, s.vector(int(b.best[i])))
		if j := int(b.again[i]); j >= 0 {
			d = math.Max(d, sqdist(row, s.vector(j)))
		}
		limit := math.Sqrt(d) * (1 + shortcutSlack)
		for j, k := range b.key[i*s.units : (i+1)*s.units] {
			if float64(k)-b.now[j] <= limit {
				below++
			}
		}
		rows++
	}
	return float64(below) / float64(rows*s.units)
}
