package kinmap

import (
	"cmp"
	"maps"
	"slices"
	"time"

	"github.com/kinmap/kinmap/attention"
	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/history"
	"github.com/kinmap/kinmap/timeline"
)

// past is what the history held before this run: the switches earlier
// runs reported and the windows of the previous period.
type past struct {
	earlier []attention.Earlier
	// The windows of the model's lineage in the history, by site, then
	// start, taken before this run's decoding revised any.
	windows []history.Window
}

// pastOf takes from h, before the run's decoding changes it, the switches
// of the lineage it reported (a change of regime between a site's
// successive windows) and its windows.
func pastOf(h *history.History, lineage string) *past {
	p := &past{}
	for _, w := range h.Windows {
		if w.Lineage == lineage {
			p.windows = append(p.windows, w)
		}
	}
	for i := 1; i < len(p.windows); i++ {
		a, b := &p.windows[i-1], &p.windows[i]
		if a.Site == b.Site && a.Regime != b.Regime {
			p.earlier = append(p.earlier, attention.Earlier{Site: b.Site, Time: b.Start, From: a.Regime, To: b.Regime})
		}
	}
	return p
}

// attentionConfig is the work list's settings for a run: those of o, a
// long stay by default a week of windows (the run a regime is held for, as
// in finding regimes), an earlier switch nearby within the dwell, and the
// chance rate of an unfamiliar window one less the unfamiliar quantile.
func attentionConfig(o *Options, t *features.Table) attention.Config {
	c := o.WorkList
	c.LongStay = cmp.Or(c.LongStay, t.WeekRun())
	stride := cmp.Or(t.Config.Stride, t.Config.Window)
	c.Nearby = time.Duration(cmp.Or(o.Timeline.MinDwell, timeline.DefaultConfig().MinDwell)) * stride
	c.UnfamiliarRate = 1 - cmp.Or(o.Timeline.UnfamiliarQ, timeline.DefaultConfig().UnfamiliarQ)
	return c
}

// triage makes the run's work list, and its comparison with the previous
// period when it read a history.
func triage(o *Options, r *Result) {
	in := attention.Input{Windows: r.Table.Windows, Switches: r.Switches, Shared: r.Shared, Status: map[int]string{}, Names: map[int]string{},
		Centroids: map[int][]float64{}}
	for _, g := range r.Model.Regimes {
		in.Status[g.ID], in.Names[g.ID], in.Centroids[g.ID] = g.Status, g.Name, g.Centroid
	}
	if r.past != nil {
		in.Earlier = r.past.earlier
		in.Standing = standing(r.past.windows, r.Table.Windows)
	}
	cfg := attentionConfig(o, r.Table)
	if r.Conditions != nil {
		// A site's recent windows are those of the span an event marks
		// before it: the week before a failure, by default.
		in.Labels, cfg.Recent = r.Conditions.Knowledge.Labels, r.Conditions.Span
	}
	r.Attention, r.workList = attention.Rank(in, cfg), cfg
	if r.past != nil && len(r.Table.Windows) > 0 {
		r.Against = against(r.past, r.Table.Windows)
	}
}

// standing returns, by site, the run of windows in one regime that ended
// the site's record in the history before its first window of the run:
// the stay an earlier run saw last. past and ws are sorted by site, then
// start.
func standing(past []history.Window, ws []features.Window) map[string]attention.Standing {
	first := map[string]time.Time{}
	for _, w := range ws {
		if _, ok := first[w.Site]; !ok {
			first[w.Site] = w.Start
		}
	}
	out := map[string]attention.Standing{}
	for _, w := range past {
		f, ok := first[w.Site]
		if !ok || !w.Start.Before(f) {
			continue
		}
		if s, ok := out[w.Site]; ok && s.Regime == w.Regime {
			s.Windows++
			out[w.Site] = s
		} else {
			out[w.Site] = attention.Standing{Regime: w.Regime, Windows: 1}
		}
	}
	return out
}

// against compares the run's windows with those of the previous period in
// the history: the span of the same length just before the run's first
// window. It is nil when the history holds no window of the model's
// lineage in that span. A site that the history holds in this run's span,
// from another dump (a region delivered apart), has not gone silent.
func against(p *past, ws []features.Window) *export.Comparison {
	first, last := features.Span(ws)
	from := first.Add(-last.Sub(first))
	c := &export.Comparison{From: from, To: first, Then: map[int]float64{}, Now: map[int]float64{},
		Period: from.UTC().Format(time.DateOnly) + " to " + first.UTC().Format(time.DateOnly)}
	then, now := map[string]int{}, map[string]int{} // last regime by site
	earlier := map[string]bool{}
	held := map[string]bool{} // sites with windows of this run's span from another dump
	for _, w := range p.windows {
		switch {
		case !w.Start.Before(first):
			held[w.Site] = held[w.Site] || w.Start.Before(last)
		case w.Start.Before(from):
			earlier[w.Site] = true
		default:
			c.Then[w.Regime]++
			c.Windows++
			then[w.Site] = w.Regime
		}
	}
	for _, e := range ws {
		c.Now[e.Regime]++
		now[e.Site] = e.Regime
	}
	if c.Windows == 0 {
		return nil // nothing to compare with
	}
	for id := range c.Then {
		c.Then[id] /= float64(c.Windows)
	}
	for id := range c.Now {
		c.Now[id] /= float64(len(ws))
	}
	for _, site := range slices.Sorted(maps.Keys(then)) {
		if r, ok := now[site]; !ok && !held[site] {
			c.Silent = append(c.Silent, site)
		} else if r != then[site] {
			c.Changed = append(c.Changed, export.RegimeMove{Site: site, Then: then[site], Now: r})
		}
	}
	for _, site := range slices.Sorted(maps.Keys(now)) {
		switch _, ok := then[site]; {
		case ok:
		case earlier[site]:
			c.Back = append(c.Back, site)
		case !held[site]:
			c.New = append(c.New, site)
		}
	}
	return c
}
