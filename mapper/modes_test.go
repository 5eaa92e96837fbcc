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

// The two-normal mixture with a common variance reaches the
// log-likelihood of scikit-learn's GaussianMixture (covariance "tied"),
// fitted from many starts, on samples with two clear modes and on one
// with none.
func TestMixtureAgreesWithScikitLearn(t *testing.T) {
	py := tooltest.Python(t, "sklearn.mixture")
	rng := testRand(5)
	var samples [][]float64
	for _, c := range []struct {
		n     int
		share float64
		gap   float64
	}{{200, 0.5, 4}, {300, 0.1, 5}, {150, 0.3, 3}, {100, 0, 0}} {
		x := make([]float64, c.n)
		for i := range x {
			x[i] = rng.NormFloat64()
			if float64(i) < c.share*float64(c.n) {
				x[i] += c.gap
			}
		}
		samples = append(samples, x)
	}
	want := runPython(t, py, `import sys, numpy as np
from sklearn.mixture import GaussianMixture
for line in sys.stdin:
    x = np.array([float(v) for v in line.split()]).reshape(-1, 1)
    g = GaussianMixture(2, covariance_type="tied", n_init=5, tol=1e-10, max_iter=5000, reg_covar=0, random_state=0).fit(x)
    print(repr(float(g.score(x) * len(x))))`, samples)
	for i, x := range samples {
		got, _ := mixtureLogLik(x)
		// EM stops at a relative gain of 1e-6 per observation, and on the
		// sample without modes the best mixture is barely better than one
		// normal: agree to 1e-3 per observation.
		if math.Abs(got-want[i]) > 1e-3*float64(len(x)) {
			t.Errorf("sample %d: log-likelihood %.6f, scikit-learn %.6f", i, got, want[i])
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
