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

// clusteredSample draws g clusters of sizes cycling through sizes, each
// value a normal cluster offset of spread between plus unit normal noise;
// switched clusters (the first of them) move their later values by jump.
func clusteredSample(rng interface{ NormFloat64() float64 }, g int, sizes []int, between float64, switched int, jump float64) ([]float64, []int) {
	var x []float64
	var of []int
	for c := range g {
		offset := between * rng.NormFloat64()
		m := sizes[c%len(sizes)]
		for k := range m {
			v := offset + rng.NormFloat64()
			if c < switched && k >= m/2 {
				v += jump
			}
			x = append(x, v)
			of = append(of, c)
		}
	}
	return x, of
}

// By simulation: on normal values in clusters that share an offset, the
// plain test rejects a true normal model far too often (Gleser and Moore
// 1983), and the clustered one keeps about its level, at most it. Of 2000
// samples of 40 clusters, no more than 2 % fall below p = 0.01 (binomial
// standard error 0.22 %); clusters of one value each give the plain
// statistic.
func TestClusteredADLevelBySimulation(t *testing.T) {
	tests := []struct {
		sizes   []int
		between float64 // spread of the cluster offsets, noise 1
		plain   bool    // whether the plain test rejects too often
	}{
		{[]int{3}, 0, false},
		{[]int{3}, 1, false},
		{[]int{3}, 4, true},
		{[]int{1, 2, 3, 4, 6}, 2, true},
		{[]int{6}, 10, true},
	}
	for _, tt := range tests {
		rng := testRand(21)
		const trials, g = 2000, 40
		var clustered, plain int
		for range trials {
			x, of := clusteredSample(rng, g, tt.sizes, tt.between, 0, 0)
			if normalP(clusteredAD(x, of)) < 0.01 {
				clustered++
			}
			if normalP(andersonDarling(x)) < 0.01 {
				plain++
			}
		}
		if r := float64(clustered) / trials; r > 0.02 {
			t.Errorf("sizes %v, offsets %g: %.4f of clustered normal samples below p = 0.01", tt.sizes, tt.between, r)
		}
		t.Logf("sizes %v, offsets %g: %.4f below p = 0.01 clustered, %.4f plain", tt.sizes, tt.between, float64(clustered)/trials, float64(plain)/trials)
		if r := float64(plain) / trials; tt.plain != (r > 0.03) {
			t.Errorf("sizes %v, offsets %g: the plain test put %.4f below p = 0.01", tt.sizes, tt.between, r)
		}
	}
	x := []float64{0.3, -1.2, 2.5, 0.1, -0.4, 1.7, -2.2, 0.8}
	if got, want := clusteredAD(x, []int{0, 1, 2, 3, 4, 5, 6, 7}), andersonDarling(x); got != want {
		t.Errorf("one value per cluster: %g, want %g", got, want)
	}
}

// Clusters that changed state halfway (a site switching within a segment)
// put their means between the two modes, where they hide the gap; their
// values fall on either side. Of 200 samples of 40 clusters of 3, 15 in
// each state and 10 switching, the clustered test on the values rejects
// one normal more often at p = 1e-4 than the plain test on the cluster
// means.
func TestClusteredADSeesSwitchedClusters(t *testing.T) {
	rng := testRand(22)
	var onValues, onMeans int
	for range 200 {
		x, of := clusteredSample(rng, 40, []int{3}, 1, 10, 8)
		// 15 clusters start in the second state.
		for i := range x {
			if of[i] >= 25 {
				x[i] += 8
			}
		}
		means := make([]float64, 40)
		for i, v := range x {
			means[of[i]] += v / 3
		}
		if normalP(clusteredAD(x, of)) < 1e-4 {
			onValues++
		}
		if normalP(andersonDarling(means)) < 1e-4 {
			onMeans++
		}
	}
	if onValues <= onMeans {
		t.Errorf("p < 1e-4 on %d of 200 samples of values, %d of their means; want more on the values", onValues, onMeans)
	}
	t.Logf("p < 1e-4 on %d of 200 samples of values, %d of their means", onValues, onMeans)
}
