package timeline

import (
	"math"
	"slices"

	"gonum.org/v1/gonum/stat"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/internal/trend"
)

// Wear moves a site towards another regime by degrees: a bearing warms a
// little more each day. The decoding switches when the windows have come
// nearer the new regime's centroid than the old one's, about halfway, so
// the switch is dated after the drift began. Its onset (Switch.Onset) is
// dated on the site's own windows before the switch, leaving out the last
// one, which may hold part of the change itself (see transition.go): each
// is placed on the line from the old regime's centroid to the new one's
// (0 at the old, 1 at the new), less the median of the same for the
// windows of the old regime's sites at that time, so that a season or a
// spell of weather that moves the regime's sites together is not taken
// for a drift. A two-phase ("broken stick") regression, flat and then
// rising from an onset τ,
//
//	z_i = μ + β · max(0, i − τ + 1),
//
// is fitted for every τ with at least two windows on either side by least
// squares (D. V. Hinkley, "Inference in two-phase regression", Journal of
// the American Statistical Association 66, 1971). The τ of least residual
// sum of squares is the onset when two things hold:
//
//   - its rise β is positive and significant: its one-sided t test, for
//     errors correlated from day to day (trend.Rise) and multiplied by
//     the number of onsets tried (Bonferroni), below onsetLevel;
//   - the rise is the better account of the windows by the Bayesian
//     information criterion, n·ln(RSS/n) + k·ln n for Gaussian errors
//     (G. Schwarz, "Estimating the dimension of a model", The Annals of
//     Statistics 6(2), 1978), than each plain step: no change before the
//     switch (a constant; k = 2 with the variance), whose step is the
//     switch itself, and a step at its own best time τ′ before it,
//     z_i = μ + δ·[i ≥ τ′] (k = 4, as the rise: μ, β, τ and the
//     variance; a change point counts as a parameter, as in Y.-C. Yao,
//     "Estimating the number of change-points via Schwarz' criterion",
//     Statistics & Probability Letters 6(3), 1988).
//
// The second condition is what keeps a step that the decoding dated a few
// windows late from reading as wear: the last windows before the switch
// then sit at the new level, and a rise through them passes the t test
// although a step fits them better. A switch whose windows before it show
// no such rise keeps its onset at its own time. The switch's Time is the
// decoding's, as before: the onset is what the windows before it add.

// onsetLevel is the significance level of the rise, after the Bonferroni
// correction: 1 %, a conventional level (common practice, no source).
const onsetLevel = 0.01

// relative returns where the windows [lo, hi) of site sequence q lie on
// the line from centroid a to centroid b (0 at a, 1 at b), less the median
// of the same for the windows of the sites whose home is regime home at
// the same time: relative to the fleet, so that a season or a spell of
// weather that moves the whole regime is not a drift of the site. NaN
// where a window's projection is.
func (f fleetDays) relative(ws []features.Window, q siteSeq, lo, hi int, a, b []float64, home int) []float64 {
	all := make([]int, len(a))
	for j := range all {
		all[j] = j
	}
	z := make([]float64, hi-lo)
	var peer []float64
	for i := range z {
		j := lo + i
		z[i] = projection(ws[q.idx[j]].Scaled, a, b, all)
		peer = peer[:0]
		for _, r := range f.peers[slot{q.weeks[j], q.phases[j]}][home] {
			if v := projection(ws[r].Scaled, a, b, all); !math.IsNaN(v) {
				peer = append(peer, v)
			}
		}
		if len(peer) > 0 {
			slices.Sort(peer)
			z[i] -= (peer[(len(peer)-1)/2] + peer[len(peer)/2]) / 2
		}
	}
	return z
}

// onsetOf returns the index of the first window of a rise in z (see
// above), or len(z) when it shows none; a NaN anywhere shows none.
func onsetOf(z []float64) int {
	n := len(z)
	if n < 5 || slices.ContainsFunc(z, math.IsNaN) {
		return n // too few windows for a flat part and a rise of two each and a fit
	}
	best, bestRSS := -1, math.Inf(1)
	// The rise starts at window tau, with at least two windows before it
	// and two in it.
	tried := n - 3
	for tau := 2; tau <= n-2; tau++ {
		if _, _, rss := hinge(z, tau); rss < bestRSS {
			best, bestRSS = tau, rss
		}
	}
	h := make([]float64, n)
	for i := range h {
		h[i] = math.Max(0, float64(i-best+1))
	}
	// Days next to each other share weather and load, so the rise's t test
	// takes the residuals as AR(1) errors (trend.Rise).
	if _, beta, p := trend.Rise(h, z); !(beta > 0) || p*float64(tried) >= onsetLevel {
		return n
	}
	// The rise against the plain steps, by BIC (see above).
	flat := stat.Variance(z, nil) * float64(n-1)
	steps := math.Inf(1)
	for tau := 2; tau <= n-2; tau++ {
		steps = min(steps, stepRSS(z, tau))
	}
	if rise := bic(bestRSS, n, 4); rise >= bic(flat, n, 2) || rise >= bic(steps, n, 4) {
		return n
	}
	return best
}

// bic is the Bayesian information criterion of a least-squares fit with
// Gaussian errors: residual sum of squares rss over n values, k
// parameters counting the variance.
func bic(rss float64, n, k int) float64 {
	return float64(n)*math.Log(rss/float64(n)) + float64(k)*math.Log(float64(n))
}

// stepRSS is the residual sum of squares of z_i = mu + delta·[i ≥ tau]
// fitted by least squares: each side about its own mean.
func stepRSS(z []float64, tau int) float64 {
	return stat.Variance(z[:tau], nil)*float64(tau-1) + stat.Variance(z[tau:], nil)*float64(len(z)-tau-1)
}

// hingeMean is the mean of max(0, i − tau + 1) over i in [0, n).
func hingeMean(n, tau int) float64 {
	m := n - tau // windows tau..n-1 carry 1..m
	return float64(m*(m+1)/2) / float64(n)
}

// hinge fits z_i = mu + beta·max(0, i − tau + 1) by least squares and
// returns beta, mu and the residual sum of squares.
func hinge(z []float64, tau int) (beta, mu, rss float64) {
	n := len(z)
	hbar := hingeMean(n, tau)
	zbar := stat.Mean(z, nil)
	var sxy, sxx float64
	for i, v := range z {
		h := math.Max(0, float64(i-tau+1)) - hbar
		sxy += h * (v - zbar)
		sxx += h * h
	}
	beta = sxy / sxx
	mu = zbar - beta*hbar
	for i, v := range z {
		r := v - mu - beta*math.Max(0, float64(i-tau+1))
		rss += r * r
	}
	return beta, mu, rss
}
