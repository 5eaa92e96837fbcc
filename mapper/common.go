package mapper

import (
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// A regime is a state a site holds relative to the fleet around it. What
// moves every site at once (the weather, the season, a holiday) is no
// regime, yet it can be the largest variation of the windows and so
// decide Ward's top splits. FindRegimes therefore looks for a component
// common to the fleet at each time: the per-slot median of the windows
// (robust to a minority of sites in another regime), whose directions of
// variation over time are found by principal components, each kept while
// the medians move significantly against the spread of the windows within
// slots (slotEffect) and most sites move with them (sharedByMost), both at
// level Alpha. Each window is then taken less its slot's common
// component, and the grouping and the tests see the fleet-relative
// windows: a state keeps its offset from the fleet on the same day, even
// along a direction the weather also moves in, and only the shared
// movement is gone.

// minSlotWindows is the fewest windows a slot needs to stand for the
// fleet at that time.
const minSlotWindows = 8

// commonDirections returns orthonormal directions of the component the
// windows of x share at each slot, strongest first, and that component at
// every slot of at least minSlotWindows windows: along each direction, the
// slot's median less the mean of the slot medians. None when slots is
// nil or no direction is significant.
func commonDirections(x *mat.Dense, slots []int, seqs [][]int) ([][]float64, map[int][]float64) {
	n, d := x.Dims()
	if slots == nil || n == 0 {
		return nil, nil
	}
	bySlot := map[int][]int{}
	for i, s := range slots {
		bySlot[s] = append(bySlot[s], i)
	}
	keys := slices.Sorted(func(yield func(int) bool) {
		for k, v := range bySlot {
			if len(v) >= minSlotWindows && !yield(k) {
				return
			}
		}
	})
	if len(keys) < 3 {
		return nil, nil
	}
	// The slot medians, centred by their mean, weighted by √windows.
	med := mat.NewDense(len(keys), d, nil)
	col := []float64{}
	var total float64
	for r, k := range keys {
		for j := range d {
			col = col[:0]
			for _, i := range bySlot[k] {
				col = append(col, x.At(i, j))
			}
			slices.Sort(col)
			med.Set(r, j, median(col))
		}
		total += float64(len(bySlot[k]))
	}
	for j := range d {
		var m float64
		for r, k := range keys {
			m += float64(len(bySlot[k])) * med.At(r, j)
		}
		m /= total
		for r, k := range keys {
			med.Set(r, j, (med.At(r, j)-m)*math.Sqrt(float64(len(bySlot[k]))))
		}
	}
	var svd mat.SVD
	if !svd.Factorize(med, mat.SVDThinV) {
		return nil, nil
	}
	var v mat.Dense
	svd.VTo(&v)
	_, nv := v.Dims()
	var dirs [][]float64
	common := map[int][]float64{}
	for c := range nv {
		dir := mat.Col(nil, c, &v)
		meds, ok := slotEffect(x, keys, bySlot, dir)
		if !ok || !sharedByMost(x, slots, keys, meds, seqs, dir) {
			break
		}
		dirs = append(dirs, dir)
		var mean float64
		for r, k := range keys {
			mean += float64(len(bySlot[k])) * meds[r]
		}
		mean /= total
		for r, k := range keys {
			if common[k] == nil {
				common[k] = make([]float64, d)
			}
			for j := range d {
				common[k][j] += (meds[r] - mean) * dir[j]
			}
		}
	}
	return dirs, common
}

// slotEffect reports whether the medians of the projections of the
// windows on dir differ between slots beyond what the spread within slots
// allows, at level Alpha. The median of n draws of spread σ varies by
// π·σ²/(2n) about the population's (its asymptotic variance 1/(4n·f(m)²)
// at a normal density f; A. W. van der Vaart, "Asymptotic Statistics",
// 1998, corollary 21.5; from memory), so without a slot effect
// Σ n_s·(m_s − m̄)² / (π·σ²/2) is close to χ² with one degree of freedom
// fewer than slots. σ is the median absolute deviation of the windows
// from their slot's median, times 1.4826 (F. R. Hampel, "The influence
// curve and its role in robust estimation", JASA 69, 1974). Medians and
// their spread are those of the fleet's bulk: a minority of sites
// changing regime on the same day moves neither.
//
// It returns the slot medians, in the order of keys.
func slotEffect(x *mat.Dense, keys []int, bySlot map[int][]int, dir []float64) ([]float64, bool) {
	meds := make([]float64, len(keys))
	var dev, proj []float64
	var m float64
	var n int
	for r, k := range keys {
		proj = proj[:0]
		for _, i := range bySlot[k] {
			proj = append(proj, dot(dir, x.RawRowView(i)))
		}
		slices.Sort(proj)
		meds[r] = median(proj)
		for _, v := range proj {
			dev = append(dev, math.Abs(v-meds[r]))
		}
		m += float64(len(proj)) * meds[r]
		n += len(proj)
	}
	m /= float64(n)
	slices.Sort(dev)
	sigma := 1.4826 * median(dev)
	if !(sigma > 0) {
		return meds, false
	}
	var stat float64
	for r, k := range keys {
		stat += float64(len(bySlot[k])) * (meds[r] - m) * (meds[r] - m)
	}
	stat /= math.Pi / 2 * sigma * sigma
	return meds, distuv.ChiSquared{K: float64(len(keys) - 1)}.Survival(stat) < Alpha
}

// sharedByMost reports whether most sites move with the slot medians meds
// along dir: each site's least-squares slope on the medians, over its
// windows, is counted when it exceeds one half, and the count must exceed
// half the sites by the one-sided sign test at level Alpha (W. J. Dixon
// and A. M. Mood, "The statistical sign test", JASA 41, 1946). Weather
// moves nearly every site with slope near one; a minority of sites that
// change regime over the weeks move the medians a little, and the
// majority, which held its state, has slopes near zero.
func sharedByMost(x *mat.Dense, slots, keys []int, meds []float64, seqs [][]int, dir []float64) bool {
	at := make(map[int]float64, len(keys))
	for r, k := range keys {
		at[k] = meds[r]
	}
	var sites, most int
	for _, seq := range seqs {
		var n, mx, my float64
		for _, i := range seq {
			if m, ok := at[slots[i]]; ok {
				n++
				mx += m
				my += dot(dir, x.RawRowView(i))
			}
		}
		if n < 3 {
			continue
		}
		mx /= n
		my /= n
		var sxy, sxx float64
		for _, i := range seq {
			if m, ok := at[slots[i]]; ok {
				sxy += (m - mx) * (dot(dir, x.RawRowView(i)) - my)
				sxx += (m - mx) * (m - mx)
			}
		}
		if !(sxx > 0) {
			continue
		}
		sites++
		if sxy/sxx > 0.5 {
			most++
		}
	}
	if sites == 0 {
		return false
	}
	// P(X ≥ most) for X binomial(sites, 1/2).
	return distuv.Binomial{N: float64(sites), P: 0.5}.Survival(float64(most)-0.5) < Alpha
}

// median of a sorted slice.
func median(s []float64) float64 {
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

// withoutCommon returns copies of m and win taken relative to the fleet:
// every window less the common component of its slot (common; a slot
// without one keeps its window), and every unit that won windows the mean
// of its windows so taken, so that a state keeps its offset from the
// fleet on the same day and loses only what the fleet shared. Units that
// won nothing weigh nothing and keep their vectors. The quantization
// errors are measured again.
func withoutCommon(m *Map, win *Windows, common map[int][]float64) (*Map, *Windows) {
	n, d := win.X.Dims()
	px := mat.NewDense(n, d, nil)
	for i := range n {
		row := px.RawRowView(i)
		copy(row, win.X.RawRowView(i))
		if c := common[win.Slots[i]]; c != nil {
			for j := range row {
				row[j] -= c[j]
			}
		}
	}
	u := m.Units()
	pm := &Map{Lattice: m.Lattice, Dim: m.Dim, Codebook: slices.Clone(m.Codebook)}
	sums := make([]float64, u*d)
	hits := make([]float64, u)
	for i, a := range win.Assignments {
		hits[a.BMU]++
		for j, v := range px.RawRowView(i) {
			sums[a.BMU*d+j] += v
		}
	}
	for k := range u {
		if hits[k] > 0 {
			for j := range d {
				pm.Codebook[k*d+j] = sums[k*d+j] / hits[k]
			}
		}
	}
	asg := slices.Clone(win.Assignments)
	for i := range asg {
		asg[i].QE = math.Sqrt(sqdist(px.RawRowView(i), pm.Vector(asg[i].BMU)))
	}
	return pm, &Windows{X: px, Assignments: asg, Timelines: win.Timelines}
}
