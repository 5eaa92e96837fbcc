// Package binomial gives the upper tail of the binomial distribution, the
// chance of the tests that count events against a rate (unfamiliar
// windows, windows towards a fault regime, regimes seen together at one
// time).
package binomial

import "gonum.org/v1/gonum/mathext"

// Tail is P(X ≥ k) for X binomial with n trials of probability p: the
// regularized incomplete beta function I_p(k, n − k + 1), which keeps its
// precision in the far tail where 1 − CDF stops at about 10⁻¹⁶ (M.
// Abramowitz and I. A. Stegun, "Handbook of Mathematical Functions",
// 1964, 26.5.24).
func Tail(n, k int, p float64) float64 {
	switch {
	case k <= 0:
		return 1
	case k > n:
		return 0
	}
	return mathext.RegIncBeta(float64(k), float64(n-k+1), p)
}
