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
// variation over time are found by principal components, and each kept
// while the variance between slots along it is significant against the
// spread of the windows within slots (slotEffect, at level Alpha). The kept directions are projected out of the codebook and
// the windows before regimes are grouped and tested, so that regimes
// differ in what the fleet does not share.

// minSlotWindows is the fewest windows a slot needs to stand for the
// fleet at that time.
const minSlotWindows = 8

// commonDirections returns orthonormal directions of the component the
// windows of x share at each slot, strongest first; none when slots is
// nil or no direction is significant.
func commonDirections(x *mat.Dense, slots []int, seqs [][]int) [][]float64 {
	n, d := x.Dims()
	if slots == nil || n == 0 {
		return nil
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
		return nil
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
		return nil
	}
	var v mat.Dense
	svd.VTo(&v)
	_, nv := v.Dims()
	var dirs [][]float64
	for c := range nv {
		dir := mat.Col(nil, c, &v)
		meds, ok := slotEffect(x, keys, bySlot, dir)
		if !ok || !sharedByMost(x, slots, keys, meds, seqs, dir) {
			break
		}
		dirs = append(dirs, dir)
	}
	return dirs
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

// projectOut returns v less its components along the orthonormal dirs.
func projectOut(v []float64, dirs [][]float64) []float64 {
	out := slices.Clone(v)
	for _, dir := range dirs {
		c := dot(dir, out)
		for j := range out {
			out[j] -= c * dir[j]
		}
	}
	return out
}

// withoutCommon returns copies of m and win with dirs projected out of
// the codebook and the windows, and the quantization errors measured
// again in what is left.
func withoutCommon(m *Map, win *Windows, dirs [][]float64) (*Map, *Windows) {
	u := m.Units()
	pm := &Map{Lattice: m.Lattice, Dim: m.Dim, Codebook: make([]float64, 0, len(m.Codebook))}
	for i := range u {
		pm.Codebook = append(pm.Codebook, projectOut(m.Vector(i), dirs)...)
	}
	n, d := win.X.Dims()
	px := mat.NewDense(n, d, nil)
	asg := slices.Clone(win.Assignments)
	for i := range n {
		row := projectOut(win.X.RawRowView(i), dirs)
		px.SetRow(i, row)
		asg[i].QE = math.Sqrt(sqdist(row, pm.Vector(asg[i].BMU)))
	}
	return pm, &Windows{X: px, Assignments: asg, Timelines: win.Timelines}
}
