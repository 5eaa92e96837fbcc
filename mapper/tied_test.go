package mapper

import (
	"math"
	"testing"
)

// threeGroups returns n values: a bulk of standard normals with a share
// moved by lo and the next share by hi, both scaled to spread.
func threeGroups(seed uint64, n int, lo, hi, shareLo, shareHi, spread float64) []float64 {
	x := mixtureSamples(seed, []struct {
		n                  int
		share, gap, spread float64
	}{{n, shareLo, lo, spread}})[0]
	for i := int(shareLo * float64(n)); float64(i) < (shareLo+shareHi)*float64(n); i++ {
		x[i] = hi + spread*x[i]
	}
	return x
}

// The three-normal mixture with one variance reaches the log-likelihood
// of scikit-learn's GaussianMixture with three components and covariance
// "tied", fitted from many starts without regularisation (scikit-learn
// of Debian), on samples of three groups, of two, and of none.
func TestTiedAgreesWithScikitLearn(t *testing.T) {
	samples := [][]float64{
		threeGroups(21, 150, -8, 30, 0.12, 0.11, 1),
		threeGroups(22, 300, -4, 4, 0.3, 0.3, 1),
		threeGroups(23, 200, 6, 6, 0.2, 0, 1),
		threeGroups(24, 120, 0, 0, 0, 0, 1),
	}
	want := sklearnLogLik(t, 3, "tied", samples)
	for i, x := range samples {
		f, ok := fitTied(x, 3)
		if !ok {
			t.Errorf("sample %d: no fit", i)
			continue
		}
		// As for two normals: EM stops at a relative gain of 1e-6 per
		// observation; agree to 1e-3 per observation.
		if got := f.logLik(); math.Abs(got-want[i]) > 1e-3*float64(len(x)) {
			t.Errorf("sample %d: log-likelihood %.6f, scikit-learn %.6f", i, got, want[i])
		}
	}
}

// A bulk with a group either side, which two normals fit as a tight
// component inside a wide one with one mode, is found to have several
// modes once three normals are weighed; the projections are those of a
// turbine fleet's first split (a bulk of 95 segments at −6, 18 at −14 and
// 16 at +33 with a tail towards the bulk), drawn anew. Samples with one
// mode stay refused: a normal, a lognormal of σ 0.25 and a Student t₃,
// whose tails three normals fit no better than two with one mode.
func TestMixtureGainThreeGroups(t *testing.T) {
	x := threeGroups(31, 150, -8, 38, 0.12, 0.12, 1.5)
	for i := 130; i < 140; i++ { // the tail towards the bulk
		x[i] = 10 + 2*float64(i-130)
	}
	gain, two := mixtureGain(x)
	if !two || gain <= 0 {
		t.Errorf("three groups: gain %.1f, two modes %v; want a positive gain and two modes or more", gain, two)
	}
	rng := testRand(32)
	for _, tt := range []struct {
		name string
		draw func() float64
	}{
		{"normal", rng.NormFloat64},
		{"lognormal σ 0.25", func() float64 { return math.Exp(0.25 * rng.NormFloat64()) }},
		{"Student t₃", func() float64 {
			z := rng.NormFloat64()
			var c float64
			for range 3 {
				v := rng.NormFloat64()
				c += v * v
			}
			return z / math.Sqrt(c/3)
		}},
	} {
		y := make([]float64, 300)
		for i := range y {
			y[i] = tt.draw()
		}
		if g, two := mixtureGain(y); g > 0 && two {
			t.Errorf("%s: gain %.1f with two modes; want no split", tt.name, g)
		}
	}
}
