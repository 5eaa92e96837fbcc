package mapper

import (
	"fmt"
	"math"
	"os/exec"
	"strconv"
	"strings"
	"testing"

	"github.com/kinmap/kinmap/internal/tooltest"
)

// runPython runs prog with the samples, one to a line, on its standard
// input and returns the numbers it prints, one per sample.
func runPython(t *testing.T, py, prog string, samples [][]float64) []float64 {
	t.Helper()
	var in strings.Builder
	for _, x := range samples {
		for _, v := range x {
			fmt.Fprintf(&in, "%s ", strconv.FormatFloat(v, 'g', 17, 64))
		}
		in.WriteString("\n")
	}
	cmd := exec.Command(py, "-c", prog)
	cmd.Stdin = strings.NewReader(in.String())
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("python: %v", err)
	}
	fields := strings.Fields(string(out))
	if len(fields) != len(samples) {
		t.Fatalf("python printed %d values for %d samples", len(fields), len(samples))
	}
	got := make([]float64, len(fields))
	for i, f := range fields {
		if got[i], err = strconv.ParseFloat(f, 64); err != nil {
			t.Fatal(err)
		}
	}
	return got
}

// The one-normal log-likelihood after the Yeo–Johnson transform, with its
// Jacobian, is scipy.stats.yeojohnson_llf, an independent implementation
// of the same profile likelihood (Yeo and Johnson 2000).
func TestYeoJohnsonAgreesWithSciPy(t *testing.T) {
	py := tooltest.Python(t, "scipy.stats")
	rng := testRand(3)
	var samples [][]float64
	var lams []float64
	for _, lam := range []float64{-1, 0, 0.5, 1, 2, 2.75} {
		x := make([]float64, 50)
		for i := range x {
			x[i] = math.Exp(0.7*rng.NormFloat64()) - 1.2 // both signs, skewed
		}
		samples = append(samples, x)
		lams = append(lams, lam)
	}
	var prog strings.Builder
	prog.WriteString("import sys, scipy.stats\nlams = [")
	for _, l := range lams {
		fmt.Fprintf(&prog, "%g, ", l)
	}
	prog.WriteString("]\nfor lam, line in zip(lams, sys.stdin): print(repr(float(scipy.stats.yeojohnson_llf(lam, [float(v) for v in line.split()]))))")
	want := runPython(t, py, prog.String(), samples)
	for i, x := range samples {
		z := make([]float64, len(x))
		jac := 0.0
		for j, v := range x {
			z[j] = yeoJohnson(v, lams[i])
			jac += (lams[i] - 1) * math.Copysign(math.Log1p(math.Abs(v)), v)
		}
		// scipy leaves out the constant −n/2·(ln 2π + 1).
		n := float64(len(x))
		got := normalLogLik(z) + jac + n/2*(math.Log(2*math.Pi)+1)
		if math.Abs(got-want[i]) > 1e-8*math.Max(1, math.Abs(want[i])) {
			t.Errorf("λ = %g: log-likelihood %.10g, scipy %.10g", lams[i], got, want[i])
		}
	}
}

// sklearnLogLik returns the log-likelihood of each sample under
// scikit-learn's GaussianMixture of k components with covariance type
// cov, fitted from 10 starts without regularisation.
func sklearnLogLik(t *testing.T, k int, cov string, samples [][]float64) []float64 {
	t.Helper()
	py := tooltest.Python(t, "sklearn.mixture")
	return runPython(t, py, fmt.Sprintf(`import sys, numpy as np
from sklearn.mixture import GaussianMixture
for line in sys.stdin:
    x = np.array([float(v) for v in line.split()]).reshape(-1, 1)
    g = GaussianMixture(%d, covariance_type=%q, n_init=10, tol=1e-10, max_iter=5000, reg_covar=0, random_state=0).fit(x)
    print(repr(float(g.score(x) * len(x))))`, k, cov), samples)
}

// mixtureSamples draws the samples the mixture fits are checked on: n
// standard normal values, of which a share is moved by gap and scaled to
// the standard deviation spread.
func mixtureSamples(seed uint64, cases []struct {
	n                  int
	share, gap, spread float64
}) [][]float64 {
	rng := testRand(seed)
	var samples [][]float64
	for _, c := range cases {
		x := make([]float64, c.n)
		for i := range x {
			x[i] = rng.NormFloat64()
			if float64(i) < c.share*float64(c.n) {
				x[i] = c.gap + c.spread*x[i]
			}
		}
		samples = append(samples, x)
	}
	return samples
}

// Both two-normal mixtures reach the log-likelihood of scikit-learn's
// GaussianMixture, fitted from many starts without regularisation: the
// one with a common variance that of covariance "tied", on samples with
// two clear modes and on one with none, and the one with a variance of
// each component's own that of covariance "full" (in one dimension a
// variance per component), on samples whose spreads differ by less than
// Hathaway's bound, so that the bound does not bind (scikit-learn 1.2.1
// of Debian).
func TestMixtureAgreesWithScikitLearn(t *testing.T) {
	for _, tt := range []struct {
		name   string
		common bool
		cases  []struct {
			n                  int
			share, gap, spread float64
		}
	}{
		{"tied", true, []struct {
			n                  int
			share, gap, spread float64
		}{{200, 0.5, 4, 1}, {300, 0.1, 5, 1}, {150, 0.3, 3, 1}, {100, 0, 0, 1}}},
		// The minority a fifth to a half as spread as the majority, as a
		// stuck instrument's segments beside working ones.
		{"full", false, []struct {
			n                  int
			share, gap, spread float64
		}{{200, 0.5, 4, 0.5}, {300, 0.1, 5, 0.3}, {150, 0.3, 3, 2}, {400, 0.08, 4, 0.2}}},
	} {
		samples := mixtureSamples(5, tt.cases)
		want := sklearnLogLik(t, 2, tt.name, samples)
		for i, x := range samples {
			got := fitMixture(x, tt.common).ll
			// EM stops at a relative gain of 1e-6 per observation, and on
			// the sample without modes the best mixture is barely better
			// than one normal: agree to 1e-3 per observation.
			if math.Abs(got-want[i]) > 1e-3*float64(len(x)) {
				t.Errorf("%s, sample %d: log-likelihood %.6f, scikit-learn %.6f", tt.name, i, got, want[i])
			}
		}
	}
}

// Where Hathaway's bound binds (a tenth of the sample packed a hundred
// times tighter than the rest), the fit with a variance of each
// component's own reaches the constrained maximum that a general-purpose
// optimiser finds: scipy.optimize.minimize (L-BFGS-B) of the negative
// log-likelihood over the weight's logit, the means, the log of one
// spread and the log-ratio of the other, bounded by ±ln minSpreadRatio,
// from many starts.
func TestMixtureConstrainedAgreesWithSciPy(t *testing.T) {
	py := tooltest.Python(t, "scipy.optimize")
	samples := mixtureSamples(9, []struct {
		n                  int
		share, gap, spread float64
	}{{300, 0.1, 4, 0.01}, {200, 0.05, -3, 0.02}, {500, 0.2, 2, 0.05}})
	want := runPython(t, py, fmt.Sprintf(`import sys, itertools, numpy as np
from scipy.optimize import minimize
from scipy.special import logsumexp
c = np.log(%g)
def nll(t, x):
    p = 1 / (1 + np.exp(-t[0])); s1 = np.exp(t[3]); s2 = s1 * np.exp(t[4])
    a = np.log(p) - np.log(s1) - 0.5 * ((x - t[1]) / s1) ** 2
    b = np.log1p(-p) - np.log(s2) - 0.5 * ((x - t[2]) / s2) ** 2
    return -np.sum(logsumexp([a, b], axis=0)) + len(x) * 0.5 * np.log(2 * np.pi)
for line in sys.stdin:
    x = np.array([float(v) for v in line.split()])
    best = np.inf
    for q1, q2, d in itertools.product([0.1, 0.5, 0.9], [0.02, 0.1, 0.5, 0.9, 0.98], [c, 0, -c]):
        t0 = [0, np.quantile(x, q1), np.quantile(x, q2), np.log(np.std(x)), d]
        r = minimize(nll, t0, args=(x,), method="L-BFGS-B", bounds=[(-10, 10), (None, None), (None, None), (None, None), (c, -c)])
        best = min(best, r.fun)
    print(repr(float(-best)))`, minSpreadRatio), samples)
	for i, x := range samples {
		f := fitMixture(x, false)
		// Our fit must bind: the free maximum would have spreads further
		// apart than the bound.
		if r := math.Sqrt(min(f.v1, f.v2) / max(f.v1, f.v2)); math.Abs(r-minSpreadRatio) > 1e-9 {
			t.Errorf("sample %d: ratio of spreads %.4f; the bound %g was meant to bind", i, r, minSpreadRatio)
		}
		if math.Abs(f.ll-want[i]) > 1e-3*float64(len(x)) {
			t.Errorf("sample %d: log-likelihood %.6f, scipy's constrained optimum %.6f", i, f.ll, want[i])
		}
	}
}

// The modes counted on a mixture agree with those of its density counted
// by numpy on a grid of 400,001 points, and with two published
// conditions: with a
// common variance, two modes exactly when the condition of Robertson and
// Fryer (1969, below) holds, and, with any variances, one mode whenever
// the means are at most twice the smaller standard deviation apart
// (J. Behboodian, "On the modes of a mixture of two normal
// distributions", Technometrics 12, 1970; from memory).
func TestMixtureModes(t *testing.T) {
	var fits []mixture
	for _, p := range []float64{0.5, 0.3, 0.1, 0.03} {
		for _, gap := range []float64{1, 1.9, 2.2, 2.6, 3, 4, 6} {
			for _, s2 := range []float64{1, 0.5, 0.2, 0.1} {
				fits = append(fits, mixture{p: p, m1: 0, m2: gap, v1: 1, v2: s2 * s2})
			}
		}
	}
	for i, f := range fits {
		want := 0
		d := (f.m2 - f.m1) / 2
		switch {
		case f.v1 == f.v2 && d <= 1:
			want = 1
		case f.v1 == f.v2:
			// I. Robertson and J. G. Fryer, "Some descriptive properties
			// of normal mixtures", Skandinavisk Aktuarietidskrift 52,
			// 1969 (from memory): with means D standard deviations apart
			// and d = D/2 > 1, two modes when
			// |ln(1−p) − ln p| < 2·ln(d − √(d²−1)) + 2d·√(d²−1).
			r := math.Sqrt(d*d - 1)
			lhs, rhs := math.Abs(math.Log(1-f.p)-math.Log(f.p)), 2*math.Log(d-r)+2*d*r
			if math.Abs(lhs-rhs) < 0.05 {
				continue // too near the boundary for a grid of either count
			}
			want = 1
			if lhs < rhs {
				want = 2
			}
		case f.m2-f.m1 <= 2*math.Sqrt(min(f.v1, f.v2)):
			want = 1
		}
		if want != 0 {
			if got := f.modes(1, -20, 30); got != want {
				t.Errorf("fit %d %+v: %d modes, the published condition says %d", i, f, got, want)
			}
		}
	}
	py := tooltest.Python(t, "numpy")
	var in [][]float64
	for _, f := range fits {
		in = append(in, []float64{f.p, f.m1, f.m2, math.Sqrt(f.v1), math.Sqrt(f.v2)})
	}
	want := runPython(t, py, `import sys, numpy as np
for line in sys.stdin:
    p, m1, m2, s1, s2 = (float(v) for v in line.split())
    x = np.linspace(min(m1, m2) - 6 * max(s1, s2), max(m1, m2) + 6 * max(s1, s2), 400001)
    f = p / s1 * np.exp(-0.5 * ((x - m1) / s1) ** 2) + (1 - p) / s2 * np.exp(-0.5 * ((x - m2) / s2) ** 2)
    print(int(np.sum((f[1:-1] > f[:-2]) & (f[1:-1] >= f[2:]))))`, in)
	for i, f := range fits {
		if got := f.modes(1, -20, 30); float64(got) != want[i] {
			t.Errorf("fit %d %+v: %d modes, numpy counts %g", i, f, got, want[i])
		}
	}

	// Fitted after a power transform, the modes are those of the density
	// of the data: numpy's count of the local maxima of the mixture's
	// density at scipy.stats.yeojohnson(s, λ), times the transform's slope
	// taken by numpy.gradient, over s in [−4, 12], where the density is
	// above 10⁻⁹ of its peak (numpy's rounding makes ripples below), a
	// density still rising at an end counting a mode beyond it. With λ = −0.5 the
	// transform squeezes the right tail towards its bound at 2, and two
	// modes on the transformed scale can be one in the data.
	in, fits = in[:0], fits[:0]
	var lams []float64
	for _, lam := range []float64{-0.5, 0.5, 2} {
		for _, p := range []float64{0.5, 0.2, 0.05} {
			for _, gap := range []float64{0.5, 0.9, 1.5} {
				for _, s2 := range []float64{0.3, 0.1, 0.03} {
					f := mixture{p: p, m1: 0, m2: gap, v1: 0.09, v2: s2 * s2}
					fits, lams = append(fits, f), append(lams, lam)
					in = append(in, []float64{lam, f.p, f.m1, f.m2, math.Sqrt(f.v1), math.Sqrt(f.v2)})
				}
			}
		}
	}
	want = runPython(t, tooltest.Python(t, "numpy", "scipy.stats"), `import sys, numpy as np, scipy.stats
x = np.linspace(-4, 12, 400001)
for line in sys.stdin:
    lam, p, m1, m2, s1, s2 = (float(v) for v in line.split())
    y = scipy.stats.yeojohnson(x, lam)
    f = (p / s1 * np.exp(-0.5 * ((y - m1) / s1) ** 2) + (1 - p) / s2 * np.exp(-0.5 * ((y - m2) / s2) ** 2)) * np.gradient(y, x)
    peak = (f[1:-1] > f[:-2]) & (f[1:-1] >= f[2:]) & (f[1:-1] > 1e-9 * f.max())
    edges = (f[0] > f[1]) + (f[-1] > f[-2] and f[-1] > 1e-9 * f.max())
    print(int(np.sum(peak) + edges))`, in)
	for i, f := range fits {
		if got := f.modes(lams[i], -4, 12); float64(got) != want[i] {
			t.Errorf("fit %+v after λ = %g: %d modes, numpy counts %g", f, lams[i], got, want[i])
		}
	}
}

// A tight minority beside a wide, skewed majority is two modes: the
// segments of a stuck instrument (6 % of them, a twentieth as spread)
// far out in the tail of working ones spread lognormally. A common
// variance reads them as the tail of one skewed mode; a variance of each
// component's own does not.
func TestMixtureGainTightMinority(t *testing.T) {
	rng := testRand(13)
	for _, n := range []int{100, 300} {
		x := make([]float64, n)
		for i := range x {
			x[i] = math.Exp(0.6 * rng.NormFloat64())
			if float64(i) < 0.06*float64(n) {
				x[i] = 6 + 0.05*rng.NormFloat64()
			}
		}
		if p := normalP(andersonDarling(x)); p >= Alpha {
			t.Errorf("n = %d: Anderson–Darling p = %.2g; the sample was meant to fail normality", n, p)
		}
		if g, bi := mixtureGain(x); g <= 0 || !bi {
			t.Errorf("n = %d: BIC gain %.2f, bimodal fit %v; want two modes", n, g, bi)
		}
	}
}

// A skewed sample with one mode does not favour two, however large; two
// skewed modes do. The sample is the spread of site ratings the way
// fleets have it, lognormal, with and without a tenth of the sites
// raised 3.5 times.
func TestMixtureGainSkew(t *testing.T) {
	rng := testRand(7)
	for _, c := range []struct {
		name  string
		sigma float64
		n     int
		share float64
		two   bool
	}{
		{"lognormal σ 0.25", 0.25, 600, 0, false},
		{"lognormal σ 0.5", 0.5, 600, 0, false},
		{"lognormal σ 0.25, reflected", -0.25, 2000, 0, false},
		{"two lognormal modes", 0.25, 600, 0.1, true},
		{"two lognormal modes, reflected", -0.25, 600, 0.1, true},
	} {
		x := make([]float64, c.n)
		for i := range x {
			x[i] = math.Exp(math.Abs(c.sigma) * rng.NormFloat64())
			if float64(i) < c.share*float64(c.n) {
				x[i] *= 3.5
			}
			if c.sigma < 0 {
				x[i] = -x[i]
			}
		}
		if g, bi := mixtureGain(x); (g > 0 && bi) != c.two {
			t.Errorf("%s: BIC gain %.2f, bimodal fit %v, want two modes %v", c.name, g, bi, c.two)
		}
		if p := normalP(andersonDarling(x)); c.n >= 600 && p >= Alpha {
			t.Errorf("%s: Anderson–Darling p = %.2g; the sample was meant to fail normality", c.name, p)
		}
	}
	if g, _ := mixtureGain([]float64{1, 1, 1, 1, 1}); !math.IsInf(g, -1) {
		t.Errorf("a sample without spread: gain %g, want −Inf", g)
	}
}

// A lognormal spread of site ratings (σ = 0.25, 600 sites), which the
// normality test rejects, gets no split in any of twenty draws, although
// the mixture with a variance of each component's own can bend to a skew
// that one with a common variance cannot.
func TestMixtureGainLognormalDraws(t *testing.T) {
	rng := testRand(21)
	rejected := 0
	for draw := range 20 {
		x := make([]float64, 600)
		for i := range x {
			x[i] = math.Exp(0.25 * rng.NormFloat64())
		}
		if normalP(andersonDarling(x)) < Alpha {
			rejected++
		}
		if g, bi := mixtureGain(x); g > 0 && bi {
			t.Errorf("draw %d: BIC gain %.2f with a bimodal fit; a lognormal sample has one mode", draw, g)
		}
	}
	if rejected < 15 {
		t.Errorf("the normality test rejected %d of 20 draws; the samples were meant to fail it", rejected)
	}
}
