package kinmap

import (
	"slices"
	"time"

	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/timeline"
)

// AppendHistory adds the run's timeline to the history folder dir as the
// period of its earliest window (dir/period=YYYY-MM-DD/timeline.parquet),
// replacing a period written before.
func (r *Result) AppendHistory(dir string) error {
	_, err := export.AppendHistory(dir, r.Entries)
	return err
}

// historyPriors returns, for each site of t, the state the history in dir
// left it in: the regime of its last window before the site's first window
// in t, and how many consecutive windows it had been in that regime. Only
// periods before the run's own are read, so running a dump again does not
// feed on its own earlier result.
func historyPriors(dir string, t *features.Table) (map[string]timeline.Prior, error) {
	periods, err := export.ReadHistory(dir)
	if err != nil || len(periods) == 0 {
		return nil, err
	}
	first := map[string]time.Time{} // each site's first window in t
	var earliest time.Time
	for _, w := range t.Windows {
		if f, ok := first[w.Site]; !ok || w.Start.Before(f) {
			first[w.Site] = w.Start
		}
		if earliest.IsZero() || w.Start.Before(earliest) {
			earliest = w.Start
		}
	}
	key := earliest.UTC().Format(time.DateOnly)
	bySite := map[string][]timeline.Entry{}
	for _, p := range periods {
		if p.Key >= key {
			continue
		}
		for _, e := range p.Entries {
			if f, ok := first[e.Site]; ok && !e.End.After(f) {
				bySite[e.Site] = append(bySite[e.Site], e)
			}
		}
	}
	priors := map[string]timeline.Prior{}
	for site, es := range bySite {
		slices.SortFunc(es, func(a, b timeline.Entry) int { return a.Start.Compare(b.Start) })
		last := es[len(es)-1].Regime
		n := 0
		for i := len(es) - 1; i >= 0 && es[i].Regime == last; i-- {
			n++
		}
		priors[site] = timeline.Prior{Regime: last, Windows: n}
	}
	return priors, nil
}
