package attention

import (
	"math"
	"slices"
	"time"

	"gonum.org/v1/gonum/floats"

	"github.com/kinmap/kinmap/internal/binomial"
	"github.com/kinmap/kinmap/internal/quantile"
)

// approach is a site that switched into a regime and whose windows since
// lie towards a regime marked fault or watch, further than its regime's
// windows do (see the package documentation, Nearing).
type approach struct {
	towards int       // the regime they lie towards
	since   time.Time // start of the stay: the switch into the site's last regime
	windows int       // the site's windows since
	beyond  int       // of them, those further towards it than the regime's quantile
	p       float64   // binomial chance of as many
}

// share is where x lies on the line from centroid a to centroid b: 0 at
// a, 1 at b, ½ where it is as near one as the other; NaN when x has a
// missing feature or a and b coincide.
func share(x, a, b []float64) float64 {
	da, db, ab := floats.Distance(x, a, 2), floats.Distance(x, b, 2), floats.Distance(a, b, 2)
	if ab == 0 {
		return math.NaN()
	}
	return (da*da - db*db + ab*ab) / (2 * ab * ab)
}

// nearing returns, by site, the regimes marked fault or watch that its
// windows since its switch into its last regime lie towards (see the
// package documentation).
func nearing(in Input, cfg Config) map[string][]approach {
	var targets []int
	for id, st := range in.Status {
		if marked(st) && in.Centroids[id] != nil {
			targets = append(targets, id)
		}
	}
	if len(targets) == 0 {
		return nil
	}
	slices.Sort(targets)
	// Each window's share of the way from its regime towards each target,
	// less the median of the same over its regime's windows of that time,
	// so that weather that moves a regime's sites together cancels.
	type key struct {
		start    time.Time
		from, to int
	}
	shares := make([][]float64, len(in.Windows))
	day := map[key][]float64{}
	for i, w := range in.Windows {
		c := in.Centroids[w.Regime]
		if c == nil || in.Status[w.Regime] == StatusFault || w.Scaled == nil {
			continue
		}
		shares[i] = make([]float64, len(targets))
		for j, f := range targets {
			shares[i][j] = math.NaN()
			if f != w.Regime {
				shares[i][j] = share(w.Scaled, c, in.Centroids[f])
			}
			if !math.IsNaN(shares[i][j]) {
				k := key{w.Start, w.Regime, f}
				day[k] = append(day[k], shares[i][j])
			}
		}
	}
	median := map[key]float64{}
	for k, v := range day {
		slices.Sort(v)
		median[k] = quantile.Sorted(v, 0.5)
	}
	// The relative shares of each regime's settled windows towards each
	// target (those of a site's first stay, which began with its record),
	// from which a site's threshold is taken without its own.
	type pair struct{ from, to int }
	all := map[pair][]float64{}
	settled := make([]bool, len(in.Windows))
	for i, w := range in.Windows {
		settled[i] = i == 0 || w.Site != in.Windows[i-1].Site || settled[i-1] && w.Regime == in.Windows[i-1].Regime
		for j, f := range targets {
			if shares[i] != nil && !math.IsNaN(shares[i][j]) {
				shares[i][j] -= median[key{w.Start, w.Regime, f}]
				if !settled[i] {
					continue
				}
				all[pair{w.Regime, f}] = append(all[pair{w.Regime, f}], shares[i][j])
			}
		}
	}
	for _, v := range all {
		slices.Sort(v)
	}

	out := map[string][]approach{}
	for i := 0; i < len(in.Windows); {
		j := i + 1
		for j < len(in.Windows) && in.Windows[j].Site == in.Windows[i].Site {
			j++
		}
		// The site's stay in its last regime, when a switch in the run
		// began it.
		lo := j - 1
		for lo > i && in.Windows[lo-1].Regime == in.Windows[j-1].Regime {
			lo--
		}
		last := in.Windows[j-1]
		// Tested: a stay that a switch in the run began, out of a regime
		// not marked fault or watch; a site that comes out of such a
		// regime (repaired, or at the end of a transition) lies towards
		// it, or a regime like it, for a while as a matter of course,
		// and its switch out is listed as a switch.
		if lo == i || shares[j-1] == nil || marked(in.Status[in.Windows[lo-1].Regime]) {
			i = j
			continue
		}
		for t, f := range targets {
			var own, since []float64
			for k, v := range shares[i:j] {
				if in.Windows[i+k].Regime == last.Regime && v != nil && !math.IsNaN(v[t]) {
					if settled[i+k] {
						own = append(own, v[t])
					}
					if i+k >= lo {
						since = append(since, v[t])
					}
				}
			}
			slices.Sort(own)
			limit := without(all[pair{last.Regime, f}], own, 1-cfg.UnfamiliarRate)
			k := 0
			for _, v := range since {
				if v > limit {
					k++
				}
			}
			if p := binomial.Tail(len(since), k, cfg.UnfamiliarRate); k > 0 && p < cfg.UnfamiliarAlpha {
				out[last.Site] = append(out[last.Site], approach{towards: f, since: in.Windows[lo].Start, windows: len(since), beyond: k, p: p})
			}
		}
		i = j
	}
	return out
}

// without returns quantile q of the ascending values all less the
// ascending values own, which are among them (quantile.Sorted of the
// rest), walking down from the top; NaN when nothing is left.
func without(all, own []float64, q float64) float64 {
	n := len(all) - len(own)
	if n < 1 {
		return math.NaN()
	}
	at, f := quantile.Position(n, q)
	lo, hi := math.NaN(), math.NaN()
	k, r := len(own)-1, n-1 // the next own value to pass over; the rank of the next value kept
	for j := len(all) - 1; j >= 0 && r >= at; j-- {
		if k >= 0 && all[j] == own[k] {
			k--
			continue
		}
		switch r {
		case at + 1:
			hi = all[j]
		case at:
			lo = all[j]
		}
		r--
	}
	if f == 0 {
		return lo
	}
	return lo + f*(hi-lo)
}
