package mapper

import (
	"math"
	"testing"

	"github.com/kinmap/kinmap/internal/tooltest"
)

// bruteTwoGroupIndex tries every split of x into two non-empty groups.
func bruteTwoGroupIndex(x []float64) float64 {
	n := len(x)
	ss := func(mask int, in bool) float64 {
		var sum, sum2, k float64
		for i, v := range x {
			if (mask>>i&1 == 1) == in {
				sum += v
				sum2 += v * v
				k++
			}
		}
		if k == 0 {
			return 0
		}
		return sum2 - sum*sum/k
	}
	best := math.Inf(1)
	for mask := 1; mask < 1<<(n-1); mask++ { // the last value always in the second group
		best = min(best, ss(mask, true)+ss(mask, false))
	}
	return best / ss(0, false)
}

// TestTwoGroupIndex checks the scan of sorted cuts against every split of
// small samples (the best two groups on a line are a lower and an upper
// run: W. D. Fisher, JASA 53, 1958) and against scikit-learn's KMeans with
// two clusters, whose inertia over the total sum of squares is the same
// index when it finds the best split.
func TestTwoGroupIndex(t *testing.T) {
	rng := testRand(11)
	var samples [][]float64
	for _, c := range []struct {
		n   int
		gap float64
	}{{5, 0}, {9, 0}, {12, 1}, {12, 4}, {11, 10}, {40, 0}, {60, 3}, {200, 2}} {
		x := make([]float64, c.n)
		for i := range x {
			x[i] = rng.NormFloat64()
			if i%3 == 0 {
				x[i] += c.gap
			}
		}
		samples = append(samples, x)
	}
	for _, x := range samples {
		if len(x) > 12 {
			continue
		}
		if got, want := twoGroupIndex(x), bruteTwoGroupIndex(x); math.Abs(got-want) > 1e-12 {
			t.Errorf("n = %d: index %.15g, every split %.15g", len(x), got, want)
		}
	}
	if got := twoGroupIndex([]float64{3, 3, 3}); got != 1 {
		t.Errorf("a sample without spread: index %g, want 1", got)
	}

	py := tooltest.Python(t, "sklearn.cluster")
	const prog = `import sys, numpy as np
from sklearn.cluster import KMeans
for line in sys.stdin:
    x = np.array([float(v) for v in line.split()]).reshape(-1, 1)
    k = KMeans(2, n_init=50, random_state=0, tol=0).fit(x)
    print(repr(float(k.inertia_ / ((x - x.mean()) ** 2).sum())))`
	want := runPython(t, py, prog, samples)
	for i, x := range samples {
		if got := twoGroupIndex(x); math.Abs(got-want[i]) > 1e-9 {
			t.Errorf("n = %d: index %.12g, scikit-learn KMeans %.12g", len(x), got, want[i])
		}
	}
}

// TestTwoGroupIndexNormal checks the index of a large normal sample
// against its limit: the best cut of a normal distribution is at its
// mean, where each half's mean lies E|Z| = √(2/π) spreads out (the mean of
// the half-normal distribution, a handbook value), so the share left
// within the halves is 1 − 2/π.
func TestTwoGroupIndexNormal(t *testing.T) {
	rng := testRand(12)
	x := make([]float64, 200000)
	for i := range x {
		x[i] = 5 + 3*rng.NormFloat64()
	}
	if got, want := twoGroupIndex(x), 1-2/math.Pi; math.Abs(got-want) > 0.005 {
		t.Errorf("index of 200 000 normal values %.4f, want 1 − 2/π = %.4f", got, want)
	}
}

// TestTwoGroupPLevel checks that the test keeps its level on samples from
// one normal distribution: the share of p-values below 0.05 and 0.01 lies
// within the binomial range of 300 draws (the definition of a test's
// level; bounds about three standard deviations wide).
func TestTwoGroupPLevel(t *testing.T) {
	rng := testRand(13)
	for _, n := range []int{10, 30, 100} {
		below5, below1 := 0, 0
		null := twoGroupNull{}
		for range 300 {
			x := make([]float64, n)
			for i := range x {
				x[i] = rng.NormFloat64()
			}
			p := null.p(n, twoGroupIndex(x))
			if p < 0.05 {
				below5++
			}
			if p < 0.01 {
				below1++
			}
		}
		// 300·0.05 = 15 ± 3.8; 300·0.01 = 3 ± 1.7.
		if below5 < 4 || below5 > 27 || below1 > 9 {
			t.Errorf("n = %d: %d of 300 normal samples below p = 0.05 (want 4 to 27), %d below 0.01 (want at most 9)", n, below5, below1)
		}
	}
}

// TestSplitPGroups checks what the test for two groups adds: two groups of
// 8 and 7 values 10 to 12 within-group spreads apart stay above Alpha by the
// Anderson–Darling test, while the split's p-value falls below it.
func TestSplitPGroups(t *testing.T) {
	rng := testRand(14)
	for _, gap := range []float64{10, 11, 12} {
		x := make([]float64, 15)
		for i := range x {
			x[i] = rng.NormFloat64()
			if i < 8 {
				x[i] += gap
			}
		}
		ad := andersonDarling(x)
		if p := normalP(ad); p < Alpha {
			t.Errorf("gap %g: Anderson–Darling A*² %.2f, p %.2g, want above Alpha = %g", gap, ad, p, Alpha)
		}
		p, index := splitP(x, ad, twoGroupNull{})
		if p >= Alpha || index <= 0 || index > 0.05 {
			t.Errorf("gap %g: split p %.2g with two-group index %.3g, want p below Alpha = %g and an index in (0, 0.05]", gap, p, index, Alpha)
		}
	}
}

// TestTwoGroupNullKept checks that a p-value does not depend on the draws
// kept from earlier samples: the same samples, asked of one twoGroupNull
// in two orders, give the p-values each gets alone.
func TestTwoGroupNullKept(t *testing.T) {
	rng := testRand(15)
	var idx []float64
	for k := range 6 {
		x := make([]float64, 20)
		for i := range x {
			x[i] = rng.NormFloat64()
			if i < 6 {
				x[i] += float64(k) // from no gap to a clear one
			}
		}
		idx = append(idx, twoGroupIndex(x))
	}
	forward, backward := twoGroupNull{}, twoGroupNull{}
	for k := range idx {
		alone := twoGroupNull{}.p(20, idx[k])
		if got := forward.p(20, idx[k]); got != alone {
			t.Errorf("sample %d after %d others: p %g, alone %g", k, k, got, alone)
		}
		j := len(idx) - 1 - k
		if got, alone := backward.p(20, idx[j]), (twoGroupNull{}).p(20, idx[j]); got != alone {
			t.Errorf("sample %d asked in reverse: p %g, alone %g", j, got, alone)
		}
	}
}

// TestTwoGroupNullBlocks checks that drawing the null samples in blocks
// on every core gives the p-values of drawing and scoring one sample at a
// time.
func TestTwoGroupNullBlocks(t *testing.T) {
	for _, tt := range []struct {
		n   int
		obs float64
	}{{10, 0.25}, {10, 0.05}, {40, 0.2}, {40, 0.3}, {200, 0.3}} {
		z := make([]float64, tt.n)
		hits, want := 0, 0.0
		for draw := 1; ; draw++ {
			if draw > twoGroupDraws {
				want = float64(hits+1) / (twoGroupDraws + 1)
				break
			}
			if nullSample(tt.n, draw-1, z) <= tt.obs {
				if hits++; hits == twoGroupHits {
					want = float64(hits) / float64(draw)
					break
				}
			}
		}
		if got := (twoGroupNull{}).p(tt.n, tt.obs); got != want {
			t.Errorf("n = %d, index %g: p %g, one sample at a time %g", tt.n, tt.obs, got, want)
		}
	}
}
