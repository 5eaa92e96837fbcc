package mapper

import (
	"math"
	"slices"
)

// minSegments is the smallest sample the normality test takes: the
// modified statistic and its p-values hold from 8 observations on
// (M. A. Stephens, "EDF statistics for goodness of fit and some
// comparisons", JASA 69, 1974; from memory).
const minSegments = 8

// andersonDarling returns the Anderson–Darling statistic of x against the
// normal distribution whose mean and variance are estimated from x, with
// Stephens's modification for estimated parameters,
// A*² = A²·(1 + 0.75/n + 2.25/n²), where
// A² = −n − (1/n)·Σ (2i−1)·[ln F(x_(i)) + ln(1 − F(x_(n+1−i)))]
// over the sorted sample (T. W. Anderson and D. A. Darling, "A test of
// goodness of fit", JASA 49, 1954; R. B. D'Agostino and M. A. Stephens,
// "Goodness-of-Fit Techniques", 1986, section 4.8). A sample without
// spread returns 0. x is left as it was.
func andersonDarling(x []float64) float64 {
	n := len(x)
	s := slices.Clone(x)
	slices.Sort(s)
	var mean float64
	for _, v := range s {
		mean += v
	}
	mean /= float64(n)
	var ss float64
	for _, v := range s {
		ss += (v - mean) * (v - mean)
	}
	sd := math.Sqrt(ss / float64(n-1))
	if !(sd > 0) {
		return 0
	}
	// ln F and ln(1−F) from the complementary error function, which keeps
	// the far tails finite.
	logCDF := func(v float64) float64 { return math.Log(0.5 * math.Erfc(-(v-mean)/(sd*math.Sqrt2))) }
	logSF := func(v float64) float64 { return math.Log(0.5 * math.Erfc((v-mean)/(sd*math.Sqrt2))) }
	var sum float64
	for i := range n {
		sum += float64(2*i+1) * (logCDF(s[i]) + logSF(s[n-1-i]))
	}
	a2 := -float64(n) - sum/float64(n)
	nf := float64(n)
	return a2 * (1 + 0.75/nf + 2.25/(nf*nf))
}

// normalP returns the p-value of the modified statistic a = A*² of
// andersonDarling: the chance that a sample from a normal distribution
// scores at least a. It uses the approximation of D'Agostino and Stephens
// ("Goodness-of-Fit Techniques", 1986, table 4.9), in four pieces; beyond
// a = 10 the p-value is below 10⁻²³ and is reported at that bound.
func normalP(a float64) float64 {
	switch {
	case a < 0.2:
		return 1 - math.Exp(-13.436+101.14*a-223.73*a*a)
	case a < 0.34:
		return 1 - math.Exp(-8.318+42.796*a-59.938*a*a)
	case a < 0.6:
		return math.Exp(0.9177 - 4.279*a - 1.38*a*a)
	default:
		a = math.Min(a, 10)
		return math.Exp(1.2937 - 5.709*a + 0.0186*a*a)
	}
}
