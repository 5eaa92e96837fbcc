package events

import (
	"cmp"
	"math"
	"slices"
	"time"

	"github.com/kinmap/kinmap/history"
	"github.com/kinmap/kinmap/ingest"
)

// Precedent is a past window that resembles a window of today, with what
// was recorded at its site after it.
type Precedent struct {
	Site       string
	Start, End time.Time
	Distance   float64           // Euclidean, in the model's scaled feature space
	After      []ingest.EventRow // events of its site whose time (a point's, an interval's start) falls in (End, End + horizon], in time order
}

// Precedents returns the n past windows of past nearest to the scaled
// vector x of a window that starts at start: windows of any site, the
// query's own site included, that ended by start and carry a vector of
// x's length. So that three windows of one episode do not fill the list, a
// window closer than horizon to one already taken at the same site is
// passed over. Each comes with the events of evs recorded at its site
// within horizon after it.
func Precedents(x []float64, start time.Time, past []history.Window, evs []ingest.EventRow, horizon time.Duration, n int) []Precedent {
	type cand struct {
		i int
		d float64
	}
	var cs []cand
	for i, w := range past {
		if len(w.Scaled) != len(x) || w.End.After(start) {
			continue
		}
		var d float64
		for j, v := range w.Scaled {
			d += (v - x[j]) * (v - x[j])
		}
		if !math.IsNaN(d) {
			cs = append(cs, cand{i, math.Sqrt(d)})
		}
	}
	slices.SortFunc(cs, func(a, b cand) int {
		return cmp.Or(cmp.Compare(a.d, b.d), cmp.Compare(a.i, b.i))
	})
	var out []Precedent
	for _, c := range cs {
		if len(out) == n {
			break
		}
		w := past[c.i]
		if slices.ContainsFunc(out, func(p Precedent) bool {
			return p.Site == w.Site && w.Start.Sub(p.Start).Abs() < horizon
		}) {
			continue
		}
		p := Precedent{Site: w.Site, Start: w.Start, End: w.End, Distance: c.d}
		for _, e := range evs {
			if e.Site == w.Site && e.Start.After(w.End) && !e.Start.After(w.End.Add(horizon)) {
				p.After = append(p.After, e)
			}
		}
		slices.SortStableFunc(p.After, func(a, b ingest.EventRow) int { return a.Start.Compare(b.Start) })
		out = append(out, p)
	}
	return out
}
