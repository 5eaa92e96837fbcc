package export

import (
	"cmp"
	"fmt"
	"html/template"
	"slices"
	"strconv"
	"time"

	"github.com/kinmap/kinmap/export/picture"
)

// Caps of the events section; the timelines and sites.geojson have all.
const (
	maxConditionSites = 30
	maxEventStrips    = 12
)

// eventsSection is the data of the report's section on known events.
type eventsSection struct {
	Span      string
	Events    int
	Labels    []string
	Unknown   []string
	Regimes   []eventsRegimeRow
	Sites     []conditionSite
	MoreSites int
	Strips    []eventStrip
	Shown     int // events drawn on the strips
	Notes     bool
	Precedent []SitePrecedents
}

type eventsRegimeRow struct {
	ID     int
	Counts []int // by label, then unmarked windows
}

type conditionSite struct {
	Site, Condition, Confidence, Since string
	conf                               float64
}

// eventStrip is one site's windows as coloured cells of an SVG strip, with
// its events as marks.
type eventStrip struct {
	Site  string
	Cells []stripCell
	Marks []stripMark
}

type stripCell struct {
	X, W   float64
	Colour template.CSS
	Title  string
}

type stripMark struct {
	X, W  float64 // W > 0 for an interval
	Title string
}

// stripWidth is the drawing width of a strip, in SVG units.
const stripWidth = 800.0

// eventsReport builds the events section of r; nil when r has no label
// knowledge.
func eventsReport(r *Run, ss []*site) *eventsSection {
	c := r.Conditions
	if c == nil {
		return nil
	}
	d := &eventsSection{Span: c.Span, Events: len(c.Events), Labels: c.Labels, Unknown: c.Unknown, Precedent: c.Precedents}
	byRegime := make(map[int][]int)
	for u, id := range r.Model.UnitRegime {
		row := byRegime[id]
		if row == nil {
			row = make([]int, len(c.Labels)+1)
		}
		for j, n := range c.UnitCounts[u] {
			row[j] += n
		}
		byRegime[id] = row
	}
	for _, id := range regimeIDs(r) {
		d.Regimes = append(d.Regimes, eventsRegimeRow{ID: id, Counts: byRegime[id]})
	}
	for _, s := range ss {
		ws := r.Table.Windows
		last := &ws[s.windows[len(s.windows)-1]]
		label, conf := last.Condition, last.ConditionConfidence
		if !slices.Contains(c.Labels, label) {
			continue
		}
		since := last
		for k := len(s.windows) - 1; k >= 0 && ws[s.windows[k]].Condition == label; k-- {
			since = &ws[s.windows[k]]
		}
		d.Sites = append(d.Sites, conditionSite{Site: s.id, Condition: label,
			Confidence: strconv.FormatFloat(conf, 'f', 2, 64), Since: readable(since.Start), conf: conf})
	}
	slices.SortStableFunc(d.Sites, func(a, b conditionSite) int {
		return cmp.Or(cmp.Compare(b.conf, a.conf), cmp.Compare(a.Site, b.Site))
	})
	if len(d.Sites) > maxConditionSites {
		d.MoreSites = len(d.Sites) - maxConditionSites
		d.Sites = d.Sites[:maxConditionSites]
	}
	d.Strips, d.Shown, d.Notes = eventStrips(r, ss)
	return d
}

// eventStrips draws the windows of the first sites with events, by site
// id, on one time axis, each window in its regime's colour, with every
// event of the site as a mark; notes go into the marks' titles when the
// run shows them.
func eventStrips(r *Run, ss []*site) (strips []eventStrip, shown int, notes bool) {
	c := r.Conditions
	bySite := make(map[string][]Event)
	for _, e := range c.Events {
		bySite[e.Site] = append(bySite[e.Site], e)
		notes = notes || e.Note != ""
	}
	var lo, hi time.Time
	for _, e := range r.Table.Windows {
		if lo.IsZero() || e.Start.Before(lo) {
			lo = e.Start
		}
		if e.End.After(hi) {
			hi = e.End
		}
	}
	span := hi.Sub(lo).Seconds()
	if span <= 0 {
		return nil, 0, notes
	}
	x := func(t time.Time) float64 {
		return min(max(t.Sub(lo).Seconds()/span, 0), 1) * stripWidth
	}
	for _, s := range ss {
		evs := bySite[s.id]
		if len(evs) == 0 {
			continue
		}
		if len(strips) == maxEventStrips {
			break
		}
		st := eventStrip{Site: s.id}
		for _, i := range s.windows {
			e := &r.Table.Windows[i]
			label, conf := e.Condition, e.ConditionConfidence
			st.Cells = append(st.Cells, stripCell{X: x(e.Start), W: x(e.End) - x(e.Start),
				Colour: template.CSS(hex(picture.RegimeColour(e.Regime))),
				Title:  fmt.Sprintf("%s: regime %d, likely %s (%.2f)", readable(e.Start), e.Regime, label, conf)})
		}
		for _, e := range evs {
			m := stripMark{X: x(e.Start), Title: readable(e.Start) + ": " + e.Label}
			if e.End.After(e.Start) {
				m.W = x(e.End) - m.X
				m.Title = readable(e.Start) + " to " + readable(e.End) + ": " + e.Label
			}
			if e.Note != "" {
				m.Title += " — " + e.Note
			}
			st.Marks = append(st.Marks, m)
			shown++
		}
		strips = append(strips, st)
	}
	return strips, shown, notes
}
