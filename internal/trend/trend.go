// Package trend tests a least-squares slope for a rise, with errors
// correlated from one window to the next.
package trend

import (
	"math"

	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"
)

// Rise fits z = a + b·x by least squares and returns a, b and the
// one-sided p-value of b > 0: its t test with the residuals taken as AR(1)
// errors of their lag-1 correlation ρ when ρ > 0, the variance of b
// multiplied by (1+ρ)/(1−ρ) and n(1−ρ)/(1+ρ) − 2 degrees of freedom
// (G. V. Bayley and J. M. Hammersley, "The effective number of
// independent observations in an autocorrelated time series", Supplement
// to the Journal of the Royal Statistical Society 8(2), 1946). Windows
// next to each other share weather and load, so their residuals are
// correlated, and a plain t test would find rises in noise. p is 1 when
// fewer than one degree of freedom remains or x does not vary, and 0 for
// a positive slope that fits z exactly. x and z have the same length, in
// the order the residuals follow each other.
func Rise(x, z []float64) (a, b, p float64) {
	n := len(z)
	if n < 3 {
		return math.NaN(), math.NaN(), 1
	}
	xbar := stat.Mean(x, nil)
	var sxx float64
	for _, v := range x {
		sxx += (v - xbar) * (v - xbar)
	}
	if sxx == 0 {
		return math.NaN(), math.NaN(), 1
	}
	a, b = stat.LinearRegression(x, z, nil, false)
	var num, den, prev float64
	for i, v := range z {
		r := v - a - b*x[i]
		if i > 0 {
			num += r * prev
		}
		den += r * r
		prev = r
	}
	inflate := 1.0
	if den > 0 && num > 0 {
		rho := min(num/den, 0.99)
		inflate = (1 + rho) / (1 - rho)
	}
	df := float64(n)/inflate - 2
	if df < 1 {
		return a, b, 1
	}
	se := math.Sqrt(inflate * den / float64(n-2) / sxx)
	if se == 0 {
		if b > 0 {
			return a, b, 0
		}
		return a, b, 1
	}
	return a, b, distuv.StudentsT{Mu: 0, Sigma: 1, Nu: df}.Survival(b / se)
}
