package attention

import (
	"math"
	"slices"
	"time"

	"gonum.org/v1/gonum/floats"

	"github.com/kinmap/kinmap/internal/trend"
)

// approach is a site's steady move towards a regime marked fault or watch
// (see the package documentation, Nearing).
type approach struct {
	towards int     // the regime it moves towards
	windows int     // its windows in its own regime that the trend is fitted on
	rate    float64 // share of the way it comes nearer a window
	p       float64 // one-sided chance level of the rise
	within  float64 // windows after its last until past halfway at that rate; 0 or less: past it already
}

// share is where x lies on the line from centroid a to centroid b: 0 at
// a, 1 at b, ½ where it is as near one as the other; NaN when x has a
// missing feature.
func share(x, a, b []float64) float64 {
	da, db, ab := floats.Distance(x, a, 2), floats.Distance(x, b, 2), floats.Distance(a, b, 2)
	if ab == 0 {
		return math.NaN()
	}
	return (da*da - db*db + ab*ab) / (2 * ab * ab)
}

// nearing returns, by site, the regimes marked fault or watch that its
// last windows in its current regime move towards (see the package
// documentation).
func nearing(in Input, cfg Config) map[string][]approach {
	var targets []int
	for id, st := range in.Status {
		if (st == StatusFault || st == StatusWatch) && in.Centroids[id] != nil {
			targets = append(targets, id)
		}
	}
	if len(targets) == 0 {
		return nil
	}
	slices.Sort(targets)
	// Each window's share of the way from its regime towards each target,
	// and the median of the same over its regime's windows of that time.
	type key struct {
		start    time.Time
		from, to int
	}
	shares := make([][]float64, len(in.Windows))
	peers := map[key][]float64{}
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
				peers[k] = append(peers[k], shares[i][j])
			}
		}
	}
	median := map[key]float64{}
	for k, v := range peers {
		slices.Sort(v)
		median[k] = (v[(len(v)-1)/2] + v[len(v)/2]) / 2
	}

	out := map[string][]approach{}
	for i := 0; i < len(in.Windows); {
		j := i + 1
		for j < len(in.Windows) && in.Windows[j].Site == in.Windows[i].Site {
			j++
		}
		seq := in.Windows[i:j]
		last := seq[len(seq)-1]
		step := last.End.Sub(last.Start)
		for t, f := range targets {
			if shares[j-1] == nil || f == last.Regime || step <= 0 {
				continue
			}
			// Its last windows in its current regime, a long stay's worth
			// at most.
			lo := len(seq) - 1
			for lo > 0 && lo > len(seq)-cfg.LongStay && seq[lo-1].Regime == last.Regime {
				lo--
			}
			var x, z []float64
			var at time.Time // the start of the last window fitted
			for k := lo; k < len(seq); k++ {
				w := seq[k]
				if v := shares[i+k]; v != nil && !math.IsNaN(v[t]) {
					x = append(x, float64(w.Start.Sub(seq[0].Start))/float64(step))
					z = append(z, v[t]-median[key{w.Start, w.Regime, f}])
					at = w.Start
				}
			}
			a, b, p := trend.Rise(x, z)
			if !(b > 0) || p >= cfg.NearingAlpha {
				continue
			}
			// Where its trend puts it at its last window fitted, back on
			// the scale of the centroids, and how many windows on it
			// passes halfway, where the decoding would find it nearer
			// the target.
			end := a + b*x[len(x)-1] + median[key{at, last.Regime, f}]
			if within := (0.5 - end) / b; within <= float64(cfg.LongStay) {
				out[last.Site] = append(out[last.Site], approach{towards: f, windows: len(x), rate: b, p: p, within: within})
			}
		}
		i = j
	}
	return out
}
