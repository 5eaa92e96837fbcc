package mapper

import (
	"math"
	"slices"
)

// The split test of G-means asks whether a sample is normal, and any
// non-normal shape fails it: a population spread lognormally (the
// ratings of a fleet's sites, and every feature that scales with them)
// is skewed but has one mode, and is no reason for two regimes. So a
// split must also be preferred by a model choice in which skew costs
// nothing: one normal against a mixture of two normals with a common
// variance, each on the sample after the Yeo–Johnson power transform
// that suits it best (I.-K. Yeo and R. A. Johnson, "A new family of power
// transformations to improve normality or symmetry", Biometrika 87,
// 2000), compared by the Bayesian information criterion (G. Schwarz,
// "Estimating the dimension of a model", Annals of Statistics 6, 1978).
// A power transform straightens a skewed mode, but not two modes with a
// gap between them.

// Transform powers tried, over the range in which a power straightens a
// skew either way; the sample is standardised first, so that the powers
// mean the same at any scale.
const (
	minPower, maxPower, powerStep = -1.0, 3.0, 0.25
	// emRounds bounds the EM iterations of one mixture fit; emTol stops
	// them once the log-likelihood gains less than that per observation.
	emRounds = 200
	emTol    = 1e-6
)

// mixtureGain returns the Bayesian information criterion's preference
// for two modes in x over one, ΔBIC = 2·(ℓ₂ − ℓ₁) − 2·ln n: ℓ₁ the
// log-likelihood of one normal and ℓ₂ that of a two-normal mixture with a
// common variance (two more parameters: the second mean and the weight),
// each maximised over the Yeo–Johnson power (Jacobian included) and the
// normals' parameters. Positive values favour two modes. A sample
// without spread, or of fewer than four values, returns −Inf.
func mixtureGain(x []float64) (gain float64, two bool) {
	n := len(x)
	if n < 4 {
		return math.Inf(-1), false
	}
	mean, sd := meanSD(x)
	if !(sd > 0) {
		return math.Inf(-1), false
	}
	std := make([]float64, n)
	for i, v := range x {
		std[i] = (v - mean) / sd
	}
	z := make([]float64, n)
	transform := func(lam float64) float64 { // fills z, returns the log-Jacobian
		jac := 0.0
		for i, v := range std {
			z[i] = yeoJohnson(v, lam)
			jac += (lam - 1) * math.Copysign(math.Log1p(math.Abs(v)), v)
		}
		return jac
	}
	one := func(lam float64) float64 { return normalLogLik(z) + transform(lam) }
	best1, best2, at := math.Inf(-1), math.Inf(-1), 0.0
	for lam := minPower; lam <= maxPower+1e-9; lam += powerStep {
		jac := transform(lam)
		if l := normalLogLik(z) + jac; l > best1 {
			best1, at = l, lam
		}
		if l, b := mixtureLogLik(z); l+jac > best2 {
			best2, two = l+jac, b
		}
	}
	// One normal is cheap to fit: refine its power between the grid's
	// neighbours of the best, so that the grid does not favour two modes.
	best1 = math.Max(best1, goldenMax(one, at-powerStep, at+powerStep))
	return 2*(best2-best1) - 2*math.Log(float64(n)), two
}

// goldenMax returns the largest value of f found by a golden-section
// search of [a, b] (J. Kiefer, "Sequential minimax search for a maximum",
// Proc. AMS 4, 1953), to a width of 10⁻⁴.
func goldenMax(f func(float64) float64, a, b float64) float64 {
	g := (math.Sqrt(5) - 1) / 2
	c, d := b-g*(b-a), a+g*(b-a)
	fc, fd := f(c), f(d)
	for b-a > 1e-4 {
		if fc >= fd {
			b, d, fd = d, c, fc
			c = b - g*(b-a)
			fc = f(c)
		} else {
			a, c, fc = c, d, fd
			d = a + g*(b-a)
			fd = f(d)
		}
	}
	return math.Max(fc, fd)
}

// yeoJohnson is the transform of Yeo and Johnson (2000) with power lam.
func yeoJohnson(v, lam float64) float64 {
	if v >= 0 {
		if math.Abs(lam) < 1e-12 {
			return math.Log1p(v)
		}
		return (math.Pow(v+1, lam) - 1) / lam
	}
	if math.Abs(lam-2) < 1e-12 {
		return -math.Log1p(-v)
	}
	return -(math.Pow(1-v, 2-lam) - 1) / (2 - lam)
}

// meanSD returns the mean and the maximum-likelihood (denominator n)
// standard deviation of x.
func meanSD(x []float64) (float64, float64) {
	var mean float64
	for _, v := range x {
		mean += v
	}
	mean /= float64(len(x))
	var ss float64
	for _, v := range x {
		ss += (v - mean) * (v - mean)
	}
	return mean, math.Sqrt(ss / float64(len(x)))
}

// normalLogLik is the maximised log-likelihood of one normal for z.
func normalLogLik(z []float64) float64 {
	_, sd := meanSD(z)
	if !(sd > 0) {
		return math.Inf(-1)
	}
	n := float64(len(z))
	return -n / 2 * (math.Log(2*math.Pi*sd*sd) + 1)
}

// mixtureLogLik is the log-likelihood of a two-normal mixture with a
// common variance fitted to z by EM (A. P. Dempster, N. M. Laird and
// D. B. Rubin, "Maximum likelihood from incomplete data via the EM
// algorithm", JRSS B 39, 1977), the best of five starts that cut the
// sorted sample at its deciles 1, 2.5, 5, 7.5 and 9. A fit whose
// component shrinks below one observation is not a mixture and counts as
// one normal.
func mixtureLogLik(z []float64) (float64, bool) {
	n := len(z)
	sorted := slices.Sorted(slices.Values(z))
	best, bi := normalLogLik(z), false
	resp := make([]float64, n) // responsibility of the second component
	for _, q := range []float64{0.1, 0.25, 0.5, 0.75, 0.9} {
		cut := sorted[min(n-1, int(q*float64(n)))]
		for i, v := range z {
			resp[i] = 0
			if v >= cut {
				resp[i] = 1
			}
		}
		prev := math.Inf(-1)
		for range emRounds {
			var w2, m1, m2 float64
			for i, v := range z {
				w2 += resp[i]
				m1 += (1 - resp[i]) * v
				m2 += resp[i] * v
			}
			w1 := float64(n) - w2
			if w1 < 1 || w2 < 1 {
				break
			}
			m1 /= w1
			m2 /= w2
			var ss float64
			for i, v := range z {
				ss += (1-resp[i])*(v-m1)*(v-m1) + resp[i]*(v-m2)*(v-m2)
			}
			vr := ss / float64(n)
			if !(vr > 0) {
				break
			}
			la, lb := math.Log(w1/float64(n)), math.Log(w2/float64(n))
			norm := -0.5 * math.Log(2*math.Pi*vr)
			var ll float64
			for i, v := range z {
				a := la + norm - (v-m1)*(v-m1)/(2*vr)
				b := lb + norm - (v-m2)*(v-m2)/(2*vr)
				// log(e^a + e^b) and e^b/(e^a + e^b) from one exponential
				e := math.Exp(-math.Abs(a - b))
				ll += math.Max(a, b) + math.Log1p(e)
				if b >= a {
					resp[i] = 1 / (1 + e)
				} else {
					resp[i] = e / (1 + e)
				}
			}
			if ll > best {
				best, bi = ll, bimodal(w1/float64(n), math.Abs(m1-m2)/math.Sqrt(vr))
			}
			if ll-prev < emTol*float64(n) {
				break
			}
			prev = ll
		}
	}
	return best, bi
}

// bimodal reports whether a mixture of two normals with a common variance,
// weights p and 1−p and means D standard deviations apart, has two modes:
// never when D ≤ 2, and otherwise when
// |ln(1−p) − ln p| < 2·ln(d − √(d²−1)) + 2d·√(d²−1), with d = D/2
// (I. Robertson and J. G. Fryer, "Some descriptive properties of normal
// mixtures", Skandinavisk Aktuarietidskrift 52, 1969; from memory). A
// mixture fitted to a skewed sample with one mode bends its shape with
// two overlapping components, and has one mode.
func bimodal(p, sep float64) bool {
	d := sep / 2
	if !(d > 1) || p <= 0 || p >= 1 {
		return false
	}
	r := math.Sqrt(d*d - 1)
	return math.Abs(math.Log(1-p)-math.Log(p)) < 2*math.Log(d-r)+2*d*r
}
