package mapper

import (
	"math"
	"math/rand/v2"
	"slices"

	"github.com/kinmap/kinmap/internal/parallel"
)

// twoGroupIndex returns the share of x's sum of squares left within the
// best split of x into two groups: min over cuts of (W₁ + W₂)/T. On a line
// the best two groups are a lower and an upper run of the sorted values
// (W. D. Fisher, "On grouping for maximum homogeneity", JASA 53, 1958),
// so the cuts are scanned with running sums. It is 1 for a sample without
// spread or of fewer than two values. x is left as it was.
func twoGroupIndex(x []float64) float64 {
	s := slices.Clone(x)
	slices.Sort(s)
	return sortedTwoGroupIndex(s)
}

// sortedTwoGroupIndex is twoGroupIndex of an ascending sample.
func sortedTwoGroupIndex(s []float64) float64 {
	n := len(s)
	if n < 2 {
		return 1
	}
	var mean float64
	for _, v := range s {
		mean += v
	}
	mean /= float64(n)
	// Sums of the centred values keep the subtraction below exact enough.
	var total, total2 float64
	for _, v := range s {
		total += v - mean
		total2 += (v - mean) * (v - mean)
	}
	if !(total2 > 0) {
		return 1
	}
	best := math.Inf(1)
	var c, c2 float64
	for k := 1; k < n; k++ {
		v := s[k-1] - mean
		c += v
		c2 += v * v
		lo, hi := float64(k), float64(n-k)
		w := c2 - c*c/lo + (total2 - c2) - (total-c)*(total-c)/hi
		best = min(best, w)
	}
	return math.Max(best, 0) / total2
}

// Settings of twoGroupNull's Monte Carlo.
const (
	// twoGroupHits is the number of null samples at least as split as
	// the data after which the simulation stops (Besag and Clifford's h).
	// Near the level the draws run to twoGroupDraws, about 10 of which
	// are as split as data at Alpha/2: a p-value there is known to about
	// a third, and a split at the level is decided by the draws.
	twoGroupHits = 10
	// twoGroupDraws is the most null samples drawn: enough that a
	// p-value of Alpha/20 can be told from Alpha.
	twoGroupDraws = 20 / Alpha
)

// twoGroupNull holds, for each sample size n, the two-group indices of
// the normal samples of size n drawn so far, in the order drawn. Sample k
// of size n comes from a generator of its own, seeded by n and k
// (nullSample), so the draws depend on n alone and can be made on every
// core; a p-value is the same whether its draws are new or were made for
// an earlier sample. FindRegimes tests the same regimes at every step,
// and keeping them makes each draw once.
type twoGroupNull map[int][]float64

// nullSample returns the two-group index of normal sample k of size n,
// sorting z, which it fills.
func nullSample(n, k int, z []float64) float64 {
	rng := rand.New(rand.NewPCG(uint64(n)<<32|uint64(k), 0x74776f))
	for i := range z {
		z[i] = rng.NormFloat64()
	}
	slices.Sort(z)
	return sortedTwoGroupIndex(z)
}

// more draws the next block of samples of size n, as many as were drawn
// before (at least 64, at most 4096), so that a test that stops early
// draws at most twice what it needs, on every core: a sample of 600
// values takes some 20 µs, and a test at its floor draws 200 000.
func (null twoGroupNull) more(n int) {
	drawn := null[n]
	block := min(max(len(drawn), 64), 4096)
	null[n] = append(drawn, parallel.Map(block, 0, func() []float64 { return make([]float64, n) }, func(z []float64, k int) float64 {
		return nullSample(n, len(drawn)+k, z)
	})...)
}

// p returns the p-value of a two-group index of n values against normal
// samples of the same size: the chance that n values from one normal
// distribution split into two groups at least as cleanly. This is the
// test for clusters on a line of A. Engelman and J. A. Hartigan
// ("Percentage points of a test for clusters", JASA 64, 1969; from
// memory), whose null distribution depends on n alone, since the index is
// free of location and scale. Its
// percentage points come from a sequential Monte Carlo test (J. Besag and
// P. Clifford, "Sequential Monte Carlo p-values", Biometrika 78, 1991):
// normal samples are drawn until twoGroupHits of them split at least as
// cleanly, giving p = h/draws, or until twoGroupDraws, giving
// (hits + 1)/(draws + 1).
//
// It is the more powerful test against two groups of a few values each:
// two groups of 8 and 7 normal values need a gap of about 16 within-group
// spreads before the Anderson–Darling test reaches p = 10⁻⁴ (its A*²
// tends to about 2.7 however far apart they lie), and about 9 for this
// one (means over 20 draws).
func (null twoGroupNull) p(n int, obs float64) float64 {
	if n < 3 || obs >= 1 {
		return 1
	}
	hits := 0
	for draw := 1; draw <= twoGroupDraws; draw++ {
		if draw > len(null[n]) {
			null.more(n)
		}
		if null[n][draw-1] <= obs {
			hits++
			if hits == twoGroupHits {
				return float64(hits) / float64(draw)
			}
		}
	}
	return float64(hits+1) / (twoGroupDraws + 1)
}

// splitP returns the p-value of a split whose projections x score the
// Anderson–Darling statistic ad: two tests of one normal, each at half the
// level (Bonferroni), the test of normality and the test for two groups on
// a line, so p = 2·min(p₁, p₂), at most 1. The test for two groups, a
// Monte Carlo one, is run only when the test of normality alone does not
// reach Alpha; index is then the two-group index, and 0 otherwise.
func splitP(x []float64, ad float64, null twoGroupNull) (p, index float64) {
	p = 2 * normalP(ad)
	if p < Alpha {
		return p, 0
	}
	index = twoGroupIndex(x)
	return math.Min(1, 2*math.Min(p/2, null.p(len(x), index))), index
}
