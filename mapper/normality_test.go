package mapper

import (
	"fmt"
	"maps"
	"math"
	"slices"
	"testing"

	"github.com/kinmap/kinmap/internal/tooltest"
)

// The statistic against scipy.stats.anderson, an independent
// implementation, which returns the unmodified A² (sample standard
// deviation with denominator n−1, as here).
func TestAndersonDarlingAgreesWithSciPy(t *testing.T) {
	py := tooltest.Python(t, "scipy.stats")
	rng := testRand(11)
	samples := map[string][]float64{}
	for _, n := range []int{8, 30, 200} {
		normal, uniform, skewed := make([]float64, n), make([]float64, n), make([]float64, n)
		for i := range n {
			normal[i] = 3 + 2*rng.NormFloat64()
			uniform[i] = rng.Float64()
			skewed[i] = math.Exp(rng.NormFloat64())
		}
		samples[fmt.Sprint("normal ", n)] = normal
		samples[fmt.Sprint("uniform ", n)] = uniform
		samples[fmt.Sprint("lognormal ", n)] = skewed
	}
	names := slices.Sorted(maps.Keys(samples))
	var ordered [][]float64
	for _, name := range names {
		ordered = append(ordered, samples[name])
	}
	stats := runPython(t, py, "import sys, scipy.stats\nfor line in sys.stdin: print(repr(scipy.stats.anderson([float(v) for v in line.split()], 'norm').statistic))", ordered)
	for i, name := range names {
		x := samples[name]
		want := stats[i]
		n := float64(len(x))
		if got := andersonDarling(x) / (1 + 0.75/n + 2.25/(n*n)); math.Abs(got-want) > 1e-9*math.Max(1, want) {
			t.Errorf("%s: A² %.12g, scipy %.12g", name, got, want)
		}
	}
}

// The p-values at the critical points of the modified statistic for a
// normal sample with estimated mean and variance: 0.631, 0.752, 0.873 and
// 1.035 at 10, 5, 2.5 and 1 % (R. B. D'Agostino and M. A. Stephens,
// "Goodness-of-Fit Techniques", 1986, table 4.7; from memory).
func TestNormalPAtCriticalValues(t *testing.T) {
	for _, tt := range []struct{ a, p float64 }{{0.631, 0.10}, {0.752, 0.05}, {0.873, 0.025}, {1.035, 0.01}} {
		if got := normalP(tt.a); math.Abs(got-tt.p) > 0.02*tt.p {
			t.Errorf("p(%g) = %.4g, want %g within 2 %%", tt.a, got, tt.p)
		}
	}
	// The pieces join and the p-value falls as the statistic grows.
	prev := 1.0
	for a := 0.01; a < 12; a += 0.01 {
		p := normalP(a)
		if p > prev+1e-3 || p < 0 {
			t.Fatalf("p(%.2f) = %g after %g", a, p, prev)
		}
		prev = p
	}
}

// By simulation: under the null hypothesis the test rejects at its level.
// Of 4000 normal samples of 40, about 5 % exceed the 5 % point and 1 % the
// 1 % point (binomial standard errors 0.34 % and 0.16 %).
func TestAndersonDarlingLevelBySimulation(t *testing.T) {
	rng := testRand(12)
	const trials, n = 4000, 40
	var at5, at1 int
	x := make([]float64, n)
	for range trials {
		for i := range x {
			x[i] = rng.NormFloat64()
		}
		p := normalP(andersonDarling(x))
		if p < 0.05 {
			at5++
		}
		if p < 0.01 {
			at1++
		}
	}
	if r := float64(at5) / trials; math.Abs(r-0.05) > 0.012 {
		t.Errorf("%.4f of normal samples below p = 0.05", r)
	}
	if r := float64(at1) / trials; math.Abs(r-0.01) > 0.006 {
		t.Errorf("%.4f of normal samples below p = 0.01", r)
	}
}
