package mapper

import (
	"math"
	"slices"

	"github.com/kinmap/kinmap/internal/parallel"
)

// The split test of G-means asks whether a sample is normal, and any
// non-normal shape fails it: a population spread lognormally (the
// ratings of a fleet's sites, and every feature that scales with them)
// is skewed but has one mode, and is no reason for two regimes. So a
// split must also be preferred by a model choice in which skew costs
// nothing: one normal against a mixture of two normals, each on the
// sample after the Yeo–Johnson power transform that suits it best
// (I.-K. Yeo and R. A. Johnson, "A new family of power transformations to
// improve normality or symmetry", Biometrika 87, 2000), compared by the
// Bayesian information criterion (G. Schwarz, "Estimating the dimension
// of a model", Annals of Statistics 6, 1978), and the mixture must give
// the data two modes. A power transform straightens a skewed mode, but not two
// modes with a gap between them. The mixture's components may share a
// variance or have their own: a regime's sub-state can be much tighter
// than the rest (a stuck probe's segments beside working ones), and a
// common variance makes such a minority the tail of one skewed mode.

// Transform powers tried, over the range in which a power straightens a
// skew either way; the sample is standardised first, so that the powers
// mean the same at any scale.
const (
	minPower, maxPower, powerStep = -1.0, 3.0, 0.25
	// emRounds bounds the EM iterations of one mixture fit; emTol stops
	// them once the log-likelihood gains less than that per observation.
	emRounds = 200
	emTol    = 1e-6
	// minSpreadRatio is the least ratio of the smaller component's
	// standard deviation to the larger's in a mixture with a variance of
	// each component's own (Hathaway 1985, under whose bound the estimate
	// is consistent whenever the true ratio keeps it): a sub-state may be
	// an order of magnitude tighter than the rest, as a stuck or iced
	// instrument's days beside working ones, but no component may fit a
	// few close values alone.
	minSpreadRatio = 0.1
	// modeSteps is the number of steps on which a mixture's modes are
	// counted.
	modeSteps = 4000
)

// mixtureGain returns the Bayesian information criterion's preference
// for two modes in x over one, ΔBIC = 2·(ℓ₂ − ℓ₁) − k·ln n: ℓ₁ the
// log-likelihood of one normal and ℓ₂ that of the two-normal mixture the
// criterion prefers, each maximised over the Yeo–Johnson power (Jacobian
// included) and the normals' parameters. Two mixtures are weighed, as
// model-based clustering weighs its covariance models (C. Fraley and
// A. E. Raftery, "Model-based clustering, discriminant analysis, and
// density estimation", JASA 97, 2002; from memory): one with a common
// variance (k = 2 more parameters: the second mean and the weight) and
// one with a variance of each component's own (k = 3), held to a least
// ratio of spreads (fitMixture). A common variance reads a tight
// minority beside a wide majority, such as a stuck instrument among
// working ones, as the tail of one skewed mode; only the second model
// sees it. two reports whether the density that the preferred mixture
// gives the data, before the transform, has two modes or more (modes),
// over the sample's range and half of it again either side. Positive
// gains favour two modes. A sample without spread, or
// of fewer than four values, returns −Inf.
//
// When the preferred mixture of two has one mode, a mixture of three
// normals with a common variance (k = 4) is fitted too, and taken when
// the criterion prefers it: two normals fit three groups (a bulk with a
// group either side) as a tight component inside a wide one, whose
// density has one mode, and model-based clustering chooses the number of
// components by the same criterion (Fraley and Raftery 2002). It is
// consulted only then, since it can only turn a refusal for want of a
// second mode into a split.
func mixtureGain(x []float64) (gain float64, two bool) {
	fit := func(common bool) func([]float64) (density, bool) {
		return func(z []float64) (density, bool) { return fitMixture(z, common), true }
	}
	gain, two = powerGain(x, fit(true), fit(false))
	if two || math.IsInf(gain, -1) {
		return gain, two
	}
	g3, more := powerGain(x, func(z []float64) (density, bool) { return fitTied(z, 3) })
	if g3 > gain {
		return g3, more
	}
	return gain, false
}

// density is a mixture of normals fitted to a sample after a power
// transform.
type density interface {
	// logLik is the log-likelihood of the transformed sample.
	logLik() float64
	// extra is the number of free parameters beyond one normal's.
	extra() int
	// modes is the number of modes of the density it gives the sample
	// before the transform with power lam, counted over [lo, hi].
	modes(lam, lo, hi float64) int
}

// powerGain is the comparison of mixtureGain with the mixtures fitted by
// fits, each of which reports false when it has none for z: two normals
// fitted freely with a common variance or each its own, three with a
// common one (mixtureGain), or two taken from the split's own groups
// (cutGain). two reports whether the preferred mixture has two modes or
// more. The powers of its grid are fitted on every core, so the fits may
// share nothing; the result is that of fitting them in turn.
func powerGain(x []float64, fits ...func(z []float64) (density, bool)) (gain float64, two bool) {
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
	transform := func(lam float64, z []float64) float64 { // fills z, returns the log-Jacobian
		jac := 0.0
		for i, v := range std {
			z[i] = yeoJohnson(v, lam)
			jac += yeoJohnsonLogSlope(v, lam)
		}
		return jac
	}
	var lams []float64
	for lam := minPower; lam <= maxPower+1e-9; lam += powerStep {
		lams = append(lams, lam)
	}
	// The fits at each power: one normal, then each mixture of fits.
	type fitted struct {
		one  float64
		mix  []density // nil where a fit had none
		bics []float64
	}
	logN := math.Log(float64(n))
	grid := parallel.Map(len(lams), 0, func() []float64 { return make([]float64, n) }, func(z []float64, k int) fitted {
		jac := transform(lams[k], z)
		r := fitted{one: normalLogLik(z) + jac, mix: make([]density, len(fits)), bics: make([]float64, len(fits))}
		for c, fit := range fits {
			if f, ok := fit(z); ok {
				r.mix[c], r.bics[c] = f, 2*(f.logLik()+jac)-float64(f.extra())*logN
			}
		}
		return r
	})
	best1, best2, at, fitAt := math.Inf(-1), math.Inf(-1), 0.0, 0.0
	var best density
	for k, r := range grid {
		if r.one > best1 {
			best1, at = r.one, lams[k]
		}
		for c, f := range r.mix {
			if f != nil && r.bics[c] > best2 {
				best2, best, fitAt = r.bics[c], f, lams[k]
			}
		}
	}
	if math.IsInf(best2, -1) {
		return best2, false
	}
	// One normal is cheap to fit: refine its power between the grid's
	// neighbours of the best, so that the grid does not favour two modes.
	z := make([]float64, n)
	one := func(lam float64) float64 { return normalLogLik(z) + transform(lam, z) }
	best1 = math.Max(best1, goldenMax(one, at-powerStep, at+powerStep))
	lo, hi := slices.Min(std), slices.Max(std)
	return best2 - 2*best1, best.modes(fitAt, lo-(hi-lo)/2, hi+(hi-lo)/2) >= 2
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

// yeoJohnsonLogSlope is the logarithm of the slope of the Yeo–Johnson
// transform with power lam at v, the log-Jacobian that a density taken
// through the transform gains.
func yeoJohnsonLogSlope(v, lam float64) float64 {
	return (lam - 1) * math.Copysign(math.Log1p(math.Abs(v)), v)
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

// mixture is a two-normal mixture fitted to a sample: the first
// component's weight p, the means and the variances, and the
// log-likelihood ll of the sample.
type mixture struct {
	p, m1, m2, v1, v2 float64
	ll                float64
	common            bool // fitted with one variance for both components
}

func (f mixture) logLik() float64 { return f.ll }

// extra counts the second mean and the weight, and with a variance of
// each component's own the second variance.
func (f mixture) extra() int {
	if f.common {
		return 2
	}
	return 3
}

// iterateEM runs rounds of EM, step making one M and one E step and
// returning the log-likelihood (false when the M step has no mixture),
// until a round gains less than emTol per observation of the n or
// emRounds have run.
func iterateEM(n int, step func() (float64, bool)) {
	prev := math.Inf(-1)
	for range emRounds {
		ll, ok := step()
		if !ok || ll-prev < emTol*float64(n) {
			return
		}
		prev = ll
	}
}

// fitMixture fits a two-normal mixture to z by EM (A. P. Dempster,
// N. M. Laird and D. B. Rubin, "Maximum likelihood from incomplete data
// via the EM algorithm", JRSS B 39, 1977), the best of five starts that
// cut the sorted sample at its deciles 1, 2.5, 5, 7.5 and 9. With common
// set both components share one variance; otherwise each has its own,
// and the smaller spread is held to at least minSpreadRatio of the larger,
// the constrained likelihood of R. J. Hathaway ("A constrained
// formulation of maximum-likelihood estimation for normal mixture
// distributions", Annals of Statistics 13, 1985), which is bounded where
// the free one grows without limit on a component shrinking onto one
// value. A fit whose component holds less than one observation is not a
// mixture: when every start ends so, the result is one normal (p = 1).
func fitMixture(z []float64, common bool) mixture {
	n := len(z)
	mean, sd := meanSD(z)
	best := mixture{p: 1, m1: mean, m2: mean, v1: sd * sd, v2: sd * sd, ll: normalLogLik(z), common: common}
	sorted := slices.Sorted(slices.Values(z))
	resp := make([]float64, n) // responsibility of the second component
	for _, q := range []float64{0.1, 0.25, 0.5, 0.75, 0.9} {
		cut := sorted[min(n-1, int(q*float64(n)))]
		for i, v := range z {
			resp[i] = 0
			if v >= cut {
				resp[i] = 1
			}
		}
		iterateEM(n, func() (float64, bool) {
			f, ok := mStep(z, resp, common)
			if !ok {
				return 0, false
			}
			f.ll = eStep(z, f, resp)
			if f.ll > best.ll {
				best = f
			}
			return f.ll, true
		})
	}
	return best
}

// mStep returns the mixture that maximises the expected log-likelihood
// given the responsibilities resp of the second component, or false when
// a component holds less than one observation or has no spread. Under
// Hathaway's constraint the variances are the free ones when their ratio
// keeps it; otherwise the constraint binds, and with v₁ = c²·v₂ (c the
// least ratio of spreads) the maximum is at v₂ = (S₁/c² + S₂)/n, S the
// weighted sums of squares, and the same the other way round.
func mStep(z, resp []float64, common bool) (mixture, bool) {
	n := float64(len(z))
	var w2, m1, m2 float64
	for i, v := range z {
		w2 += resp[i]
		m1 += (1 - resp[i]) * v
		m2 += resp[i] * v
	}
	w1 := n - w2
	if w1 < 1 || w2 < 1 {
		return mixture{}, false
	}
	m1 /= w1
	m2 /= w2
	var s1, s2 float64
	for i, v := range z {
		s1 += (1 - resp[i]) * (v - m1) * (v - m1)
		s2 += resp[i] * (v - m2) * (v - m2)
	}
	f := mixture{p: w1 / n, m1: m1, m2: m2, common: common}
	c2 := minSpreadRatio * minSpreadRatio
	switch {
	case common:
		f.v1 = (s1 + s2) / n
		f.v2 = f.v1
	case s1/w1 < c2*s2/w2:
		f.v2 = (s1/c2 + s2) / n
		f.v1 = c2 * f.v2
	case s2/w2 < c2*s1/w1:
		f.v1 = (s2/c2 + s1) / n
		f.v2 = c2 * f.v1
	default:
		f.v1, f.v2 = s1/w1, s2/w2
	}
	return f, f.v1 > 0 && f.v2 > 0
}

// eStep returns the log-likelihood of z under f and sets resp to each
// value's responsibility of the second component.
func eStep(z []float64, f mixture, resp []float64) float64 {
	la := math.Log(f.p) - 0.5*math.Log(2*math.Pi*f.v1)
	lb := math.Log(1-f.p) - 0.5*math.Log(2*math.Pi*f.v2)
	var ll float64
	for i, v := range z {
		a := la - (v-f.m1)*(v-f.m1)/(2*f.v1)
		b := lb - (v-f.m2)*(v-f.m2)/(2*f.v2)
		// log(e^a + e^b) and e^b/(e^a + e^b) from one exponential
		e := math.Exp(-math.Abs(a - b))
		ll += math.Max(a, b) + math.Log1p(e)
		if b >= a {
			resp[i] = 1 / (1 + e)
		} else {
			resp[i] = e / (1 + e)
		}
	}
	return ll
}

// modes returns the number of modes of the density that the mixture,
// fitted after the Yeo–Johnson transform with power lam, gives the sample
// before it: f(y(s))·y′(s), y the transform. The modes are those of the
// data, not of the transformed scale, where a power that bounds a long
// tail (any lam < 0 bounds the right one) piles the tail up into a peak
// that the data do not have. They are counted as the turns from rising
// to falling on modeSteps even steps over [lo, hi], which should reach
// well into both tails. With lam = 1 (no transform) every mode and
// antimode of two normals lies between their means (R. Ray and B. G.
// Lindsay, "The topography of multivariate normal mixtures", Annals of
// Statistics 33, 2005; from memory). A dip narrower than a step is
// missed; it would be no valley a regime could be told by.
func (f mixture) modes(lam, lo, hi float64) int {
	if !(f.p > 0 && f.p < 1) {
		return 1
	}
	la := math.Log(f.p) - 0.5*math.Log(f.v1)
	lb := math.Log(1-f.p) - 0.5*math.Log(f.v2)
	return countModes(func(s float64) float64 { // less ln √(2π)
		y := yeoJohnson(s, lam)
		a := la - (y-f.m1)*(y-f.m1)/(2*f.v1)
		b := lb - (y-f.m2)*(y-f.m2)/(2*f.v2)
		return math.Max(a, b) + math.Log1p(math.Exp(-math.Abs(a-b))) + yeoJohnsonLogSlope(s, lam)
	}, lo, hi)
}

// countModes counts the modes of the log-density logDensity on [lo, hi]:
// the turns from rising to falling on modeSteps even steps, and a last
// rise at hi.
func countModes(logDensity func(float64) float64, lo, hi float64) int {
	modes, up := 0, true
	prev := logDensity(lo)
	for i := 1; i <= modeSteps; i++ {
		cur := logDensity(lo + (hi-lo)*float64(i)/modeSteps)
		if r := cur > prev; r != up {
			if up {
				modes++
			}
			up = r
		}
		prev = cur
	}
	if up {
		modes++ // still rising at hi: a mode beyond it
	}
	return modes
}
