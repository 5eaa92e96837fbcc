package timeline

import (
	"math"
	"strings"

	"github.com/kinmap/kinmap/internal/viterbi"
)

// A switch during a window (a set point ramped over half a day, a unit
// changed at noon) leaves one window that is partly in each regime. Its
// spread, range and shape are unlike either regime's, and often decide
// which side its distances favour, though they say nothing about how much
// of it each regime holds. The means of its channels do: a window's mean
// is the time-weighted mean of its parts, so its mean features lie on the
// line between the two regimes' means, at the share of the window after
// the change. This is the linear mixing model of spectral unmixing, with
// the two regimes as end members (N. Keshava and J. F. Mustard, "Spectral
// unmixing", IEEE Signal Processing Magazine 19(1), 2002). It is the view
// of a segment model too, which scores where a boundary falls inside its
// segments rather than window by window (M. Ostendorf, V. Digalakis and
// O. Kimball, "From HMMs to segment models", IEEE Transactions on Speech
// and Audio Processing 4(5), 1996; quoted from memory).
//
// Each switch the decoding finds is therefore checked at its two boundary
// windows, the last of the old regime and the first of the new, when they
// are unfamiliar (their quantization error above the model's threshold):
// a window like the training windows is judged by all its features, as
// everywhere else, but one unlike all of them, as a window that holds a
// change mostly is, is not described by the regimes' centroids. Its share
// after the change is read from its mean features, projected on
// the line from the old regime's centroid to the new one's and placed
// against the site's own windows on either side (up to boundaryReference
// each, not the boundary windows), so that a site that runs above or below
// its regime's centroid is measured against itself. The boundary moves by
// one window when that window holds more of the other side: the switch is
// then dated at the first window the new regime holds most of, as the
// truth of a switch in mid-window is kept. It moves only where the site's
// own windows tell the regimes apart on that line, at a sensitivity index
// d′ = (μ_new − μ_old)/σ (the separation of the two in units of their
// pooled spread, as in signal detection theory; D. M. Green and J. A.
// Swets, "Signal detection theory and psychophysics", 1966) of at least
// boundarySeparation, and never below the minimum dwell.

// boundaryReference is the most windows on each side of a switch used as
// the site's reference: a week of daily windows.
const boundaryReference = 7

// boundarySeparation is the least d′ at which a boundary window is judged
// by its mean features: a window exactly between the two regimes is then
// placed on the wrong side of the midpoint with probability
// Φ(−d′/2) = 1 %, a conventional level (common practice, no source).
const boundarySeparation = 4.65

// meanFeatures are the indices of the scaled features that are channel
// means (named "channel.mean").
func meanFeatures(names []string) []int {
	var out []int
	for j, n := range names {
		if strings.HasSuffix(n, ".mean") {
			out = append(out, j)
		}
	}
	return out
}

// projection is where x lies on the line from a to b over the components
// idx where x is not NaN: 0 at a, 1 at b; NaN when a and b do not differ
// there.
func projection(x, a, b []float64, idx []int) float64 {
	var num, den float64
	for _, j := range idx {
		if math.IsNaN(x[j]) {
			continue
		}
		d := b[j] - a[j]
		num += (x[j] - a[j]) * d
		den += d * d
	}
	if den == 0 {
		return math.NaN()
	}
	return num / den
}

// refineBoundaries moves each change of state of path by one window where
// the boundary window is odd (unfamiliar) and holds more of the other side
// (see above). xs are the scaled windows of the path, centroids the
// states' centroids, means the mean features, and minDwell and from the
// dwell rule of the decoding.
func refineBoundaries(path []int, xs, centroids [][]float64, odd []bool, means []int, minDwell int, from viterbi.Start) {
	if len(means) == 0 {
		return
	}
	minDwell = max(minDwell, 1)
	for t := 1; t < len(path); t++ {
		a, b := path[t-1], path[t]
		if a == b {
			continue
		}
		p := t - 1 // start of the old segment
		for p > 0 && path[p-1] == a {
			p--
		}
		n := t + 1 // end of the new segment
		for n < len(path) && path[n] == b {
			n++
		}
		before := t - p
		if p == 0 && a == from.State {
			before += from.Dwell
		}
		proj := func(i int) float64 { return projection(xs[i], centroids[a], centroids[b], means) }
		mu0, mu1, sd, ok := separation(proj, max(p, t-1-boundaryReference), t-1, t+1, min(n, t+1+boundaryReference))
		if !ok || (mu1-mu0) < boundarySeparation*sd {
			continue
		}
		share := func(i int) float64 { return (proj(i) - mu0) / (mu1 - mu0) }
		switch {
		case odd[t-1] && before-1 >= minDwell && share(t-1) >= 0.5:
			path[t-1] = b
		case odd[t] && n-t-1 >= minDwell && share(t) < 0.5:
			path[t] = a
			t++ // the next window starts the new segment
		}
	}
}

// separation returns the means of proj over the windows [lo0, hi0) and
// [lo1, hi1) and their pooled standard deviation; ok is false when a side
// has fewer than two windows or a projection is NaN.
func separation(proj func(int) float64, lo0, hi0, lo1, hi1 int) (mu0, mu1, sd float64, ok bool) {
	n0, n1 := hi0-lo0, hi1-lo1
	if n0 < 2 || n1 < 2 {
		return 0, 0, 0, false
	}
	side := func(lo, hi int) (mean, ss float64) {
		for i := lo; i < hi; i++ {
			mean += proj(i)
		}
		mean /= float64(hi - lo)
		for i := lo; i < hi; i++ {
			d := proj(i) - mean
			ss += d * d
		}
		return mean, ss
	}
	mu0, ss0 := side(lo0, hi0)
	mu1, ss1 := side(lo1, hi1)
	sd = math.Sqrt((ss0 + ss1) / float64(n0+n1-2))
	if math.IsNaN(mu0) || math.IsNaN(mu1) || math.IsNaN(sd) {
		return 0, 0, 0, false
	}
	return mu0, mu1, sd, true
}
