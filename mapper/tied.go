package mapper

import (
	"math"
	"slices"
)

// tied is a mixture of normals with one variance: the weights w, the
// means m, the common variance v and the log-likelihood ll of the sample
// it was fitted to.
type tied struct {
	w, m  []float64
	v, ll float64
}

func (f tied) logLik() float64 { return f.ll }

// extra counts the means, the weights but one, and the variance, less a
// normal's mean and variance.
func (f tied) extra() int { return 2*len(f.m) - 2 }

// modes is mixture.modes for k normals with one variance.
func (f tied) modes(lam, lo, hi float64) int {
	terms := make([]float64, len(f.m))
	return countModes(func(s float64) float64 { // less ln √(2πv)
		y := yeoJohnson(s, lam)
		for j, m := range f.m {
			terms[j] = math.Log(f.w[j]) - (y-m)*(y-m)/(2*f.v)
		}
		return logSumExp(terms) + yeoJohnsonLogSlope(s, lam)
	}, lo, hi)
}

// fitTied fits a mixture of k normals with one variance to z by EM
// (Dempster, Laird and Rubin 1977), the best of starts that cut the
// sorted sample into k runs: at even shares, and with the middle runs
// narrowed to the central half and widened towards the tails. It reports
// false when every start leaves a component less than one observation.
func fitTied(z []float64, k int) (density, bool) {
	n := len(z)
	sorted := slices.Sorted(slices.Values(z))
	resp := make([][]float64, n) // responsibilities
	for i := range resp {
		resp[i] = make([]float64, k)
	}
	var best tied
	found := false
	for _, spread := range []float64{1, 0.5, 1.5} {
		// Cut points at shares (j/k − ½)·spread + ½ of the sample.
		cuts := make([]float64, k-1)
		for j := range cuts {
			q := min(max((float64(j+1)/float64(k)-0.5)*spread+0.5, 0.02), 0.98)
			cuts[j] = sorted[min(n-1, int(q*float64(n)))]
		}
		for i, v := range z {
			c, _ := slices.BinarySearch(cuts, v)
			clear(resp[i])
			resp[i][c] = 1
		}
		iterateEM(n, func() (float64, bool) {
			f, ok := tiedMStep(z, resp)
			if !ok {
				return 0, false
			}
			f.ll = tiedEStep(z, f, resp)
			if !found || f.ll > best.ll {
				best, found = f, true
			}
			return f.ll, true
		})
	}
	return best, found
}

// tiedMStep returns the mixture that maximises the expected
// log-likelihood given the responsibilities, or false when a component
// holds less than one observation or the sample has no spread.
func tiedMStep(z []float64, resp [][]float64) (tied, bool) {
	k := len(resp[0])
	f := tied{w: make([]float64, k), m: make([]float64, k)}
	for i, v := range z {
		for j, r := range resp[i] {
			f.w[j] += r
			f.m[j] += r * v
		}
	}
	for j := range f.m {
		if f.w[j] < 1 {
			return tied{}, false
		}
		f.m[j] /= f.w[j]
	}
	var ss float64
	for i, v := range z {
		for j, r := range resp[i] {
			ss += r * (v - f.m[j]) * (v - f.m[j])
		}
	}
	n := float64(len(z))
	for j := range f.w {
		f.w[j] /= n
	}
	f.v = ss / n
	return f, f.v > 0
}

// tiedEStep returns the log-likelihood of z under f and sets the
// responsibilities.
func tiedEStep(z []float64, f tied, resp [][]float64) float64 {
	c := -0.5 * math.Log(2*math.Pi*f.v)
	var ll float64
	for i, v := range z {
		for j, m := range f.m {
			resp[i][j] = math.Log(f.w[j]) + c - (v-m)*(v-m)/(2*f.v)
		}
		l := logSumExp(resp[i])
		for j := range resp[i] {
			resp[i][j] = math.Exp(resp[i][j] - l)
		}
		ll += l
	}
	return ll
}

// logSumExp returns ln Σ exp(a_j) without overflow.
func logSumExp(a []float64) float64 {
	top := slices.Max(a)
	var s float64
	for _, v := range a {
		s += math.Exp(v - top)
	}
	return top + math.Log(s)
}
