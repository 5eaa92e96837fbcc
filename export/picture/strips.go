package picture

import (
	"cmp"
	"fmt"
	"maps"
	"math"
	"slices"
	"strconv"
	"time"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/timeline"
	"golang.org/x/image/font"
)

// maxStrips caps the timelines drawn, so that the picture stays readable.
const maxStrips = 40

// Layout of the timelines, in pixels.
const (
	stripW     = 1080
	stripH     = 16
	stripStep  = 25  // from one strip's top to the next
	stripLabel = 220 // widest site label
)

// switchedSite is one site that switched, with its switches in time order.
type switchedSite struct {
	id       string
	switches []timeline.Switch
}

// last returns the time of the site's latest switch.
func (s switchedSite) last() time.Time { return s.switches[len(s.switches)-1].Time }

// switchedSites returns the sites that switched, the maxStrips with the
// latest switches in site order, and how many are left out.
func switchedSites(sw []timeline.Switch) (shown []switchedSite, omitted int) {
	bySite := make(map[string][]timeline.Switch)
	for _, s := range sw {
		bySite[s.Site] = append(bySite[s.Site], s)
	}
	for id, s := range bySite {
		slices.SortFunc(s, func(a, b timeline.Switch) int { return a.Time.Compare(b.Time) })
		shown = append(shown, switchedSite{id: id, switches: s})
	}
	slices.SortFunc(shown, func(a, b switchedSite) int {
		return cmp.Or(b.last().Compare(a.last()), cmp.Compare(a.id, b.id))
	})
	if len(shown) > maxStrips {
		omitted = len(shown) - maxStrips
		shown = shown[:maxStrips]
	}
	slices.SortFunc(shown, func(a, b switchedSite) int { return cmp.Compare(a.id, b.id) })
	return shown, omitted
}

// timelines draws one strip per switched site over time, each window in
// its decoded regime's colour, with a tick at each switch and a date axis.
func timelines(ft *fonts, in Input) (*canvas, Picture) {
	if len(in.Switches) == 0 {
		return nil, Picture{}
	}
	shown, omitted := switchedSites(in.Switches)
	entries := make(map[string][]*features.Window) // pointers: a window is 216 bytes to copy
	for _, s := range shown {
		entries[s.id] = nil
	}
	var t0, t1 time.Time
	widen := func(a, b time.Time) {
		if t0.IsZero() || a.Before(t0) {
			t0 = a
		}
		if t1.IsZero() || b.After(t1) {
			t1 = b
		}
	}
	regimes := make(map[int]bool)
	for i := range in.Windows {
		e := &in.Windows[i]
		if _, ok := entries[e.Site]; ok {
			entries[e.Site] = append(entries[e.Site], e)
			widen(e.Start, e.End)
			regimes[e.Regime] = true
		}
	}
	for _, s := range shown {
		for _, w := range s.switches {
			widen(w.Time, w.Time)
		}
	}
	if !t1.After(t0) {
		t1 = t0.Add(24 * time.Hour)
	}

	labelW := 0.0
	for _, s := range shown {
		labelW = max(labelW, width(ft.small, s.id))
	}
	left := padSide + min(labelW, stripLabel) + 14
	right := left + stripW
	items := timeItems(slices.Sorted(maps.Keys(regimes)))
	legendY := float64(subBase + lineGap + 10)
	top := flowLegend(nil, ft.small, items, padSide, right, legendY) + 44
	bottom := top + float64(len(shown)*stripStep)
	c := newCanvas(int(right)+padSide, int(bottom)+5*lineGap+16, ft)
	heading(c, "Regime timelines", fmt.Sprintf("%s switched regime (%s), %s to %s UTC",
		plural(len(shown)+omitted, "site"), plural(len(in.Switches), "switch"), t0.UTC().Format("2 Jan 2006"), t1.UTC().Format("2 Jan 2006")))
	x := func(t time.Time) float64 { return left + stripW*t.Sub(t0).Seconds()/t1.Sub(t0).Seconds() }
	flowLegend(c, ft.small, items, padSide, right, legendY)

	axisY := bottom + 2
	dateAxis(c, t0, t1, x, top-8, axisY)
	for i, s := range shown {
		y := top + float64(i*stripStep)
		c.text(left-10, y+stripH/2+ascent(ft.small)/2, fit(ft.small, s.id, stripLabel), ft.small, ink, alignRight)
		c.rect(left, y, left+stripW, y+stripH, emptyTile)
		for _, r := range runs(entries[s.id]) {
			c.fillRegime(c.img.Bounds(), r.regime, 0, rectPath(math.Round(x(r.start)), y, math.Round(x(r.end)), y+stripH))
		}
		for _, w := range s.switches {
			switchTick(c, x(w.Time), y)
		}
	}
	notes := []string{"Each strip is one site, grey where it has no window; ▼ marks a switch."}
	if omitted > 0 {
		notes = append(notes, fmt.Sprintf("Showing the %d sites with the latest switches, in site order; %d more sites that switched are not shown.",
			len(shown), omitted))
	}
	textLines(c, padSide, axisY+3*lineGap+8, ft.small, softInk, notes...)
	caption := "Decoded regime of each window for the sites that switched regime, one strip per site, with a mark at each switch; dates in UTC."
	if omitted > 0 {
		caption += fmt.Sprintf(" %d more sites that switched are not shown.", omitted)
	}
	return c, Picture{Title: "Regime timelines", Caption: caption}
}

// run is a stretch of time a site spends in one regime without a gap.
type run struct {
	start, end time.Time
	regime     int
}

// runs joins a site's windows, which it sorts by start, into runs of one
// regime; windows that overlap or touch join.
func runs(es []*features.Window) []run {
	slices.SortFunc(es, func(a, b *features.Window) int { return a.Start.Compare(b.Start) })
	var out []run
	for _, e := range es {
		if n := len(out); n > 0 && out[n-1].regime == e.Regime && !e.Start.After(out[n-1].end) {
			if e.End.After(out[n-1].end) {
				out[n-1].end = e.End
			}
			continue
		}
		out = append(out, run{start: e.Start, end: e.End, regime: e.Regime})
	}
	return out
}

// switchTick marks a switch at x on the strip whose top is at y.
func switchTick(c *canvas, x, y float64) {
	c.rect(x-1, y-2, x+1, y+stripH+2, ink)
	c.poly(ink, []pt{{x - 5, y - 8}, {x + 5, y - 8}, {x, y - 1}})
}

// legendItem is one entry of the timelines' legend: a swatch drawn with
// its left edge at x and centred on y, and a label.
type legendItem struct {
	label  string
	swatch func(c *canvas, x, y float64)
}

// timeItems returns the legend of the timelines: the regimes shown, the
// gaps and the switch mark.
func timeItems(ids []int) []legendItem {
	var items []legendItem
	for _, id := range ids {
		name := "regime " + strconv.Itoa(id)
		if id < 1 {
			name = "no regime"
		}
		items = append(items, legendItem{name, func(c *canvas, x, y float64) {
			c.fillRegime(c.img.Bounds(), id, 0, rectPath(x, y-7, x+18, y+7))
		}})
	}
	return append(items,
		legendItem{"no window", func(c *canvas, x, y float64) { c.rect(x, y-7, x+18, y+7, emptyTile) }},
		legendItem{"switch", func(c *canvas, x, y float64) { switchTick(c, x+9, y-stripH/2+3) }})
}

// flowLegend lays the items out in rows between x0 and right, the first
// centred on y, draws them unless c is nil, and returns the centre of the
// last row.
func flowLegend(c *canvas, f font.Face, items []legendItem, x0, right, y float64) float64 {
	x := x0
	for _, it := range items {
		w := 24 + width(f, it.label)
		if x > x0 && x+w > right {
			x, y = x0, y+lineGap+4
		}
		if c != nil {
			it.swatch(c, x, y)
			c.text(x+24, y+ascent(f)/2+1, it.label, f, ink, alignLeft)
		}
		x += w + 22
	}
	return y
}

// dateAxis draws date ticks and grid lines from top to the axis at y.
func dateAxis(c *canvas, t0, t1 time.Time, x func(time.Time) float64, top, y float64) {
	f := c.ft.small
	ts, layout := dateTicks(t0, t1, 9)
	for _, t := range ts {
		tx := x(t)
		c.rect(tx-0.5, top, tx+0.5, y, gridLine)
		c.rect(tx-0.5, y, tx+0.5, y+5, softInk)
		c.text(tx, y+8+ascent(f), t.Format(layout), f, ink, alignCentre)
	}
	c.rect(x(t0), y-0.5, x(t1), y+0.5, softInk)
	c.text(x(t0)+(x(t1)-x(t0))/2, y+8+ascent(f)+lineGap+4, "date (UTC)", c.ft.body, softInk, alignCentre)
}

// dateStep is one candidate spacing of date ticks.
type dateStep struct {
	d      time.Duration // fixed steps
	months int           // calendar steps, when d is 0
	layout string
}

// dateTicks returns round UTC times in [t0, t1], at most about n, and the
// layout to print them.
func dateTicks(t0, t1 time.Time, n int) ([]time.Time, string) {
	const day = 24 * time.Hour
	steps := []dateStep{
		{d: time.Hour, layout: "15:04"}, {d: 3 * time.Hour, layout: "15:04"},
		{d: 6 * time.Hour, layout: "2 Jan 15:04"}, {d: 12 * time.Hour, layout: "2 Jan 15:04"},
		{d: day, layout: "2 Jan"}, {d: 2 * day, layout: "2 Jan"}, {d: 7 * day, layout: "2 Jan"}, {d: 14 * day, layout: "2 Jan"},
		{months: 1, layout: "Jan 2006"}, {months: 2, layout: "Jan 2006"}, {months: 3, layout: "Jan 2006"},
		{months: 6, layout: "Jan 2006"}, {months: 12, layout: "2006"}, {months: 24, layout: "2006"},
		{months: 60, layout: "2006"}, {months: 120, layout: "2006"},
	}
	t0, t1 = t0.UTC(), t1.UTC()
	var ts []time.Time
	for _, s := range steps {
		ts = ts[:0]
		for t := firstTick(t0, s); !t.After(t1); t = nextTick(t, s) {
			ts = append(ts, t)
			if len(ts) > n {
				break
			}
		}
		if len(ts) <= n {
			return ts, s.layout
		}
	}
	return ts, steps[len(steps)-1].layout
}

// firstTick returns the first tick of step s at or after t.
func firstTick(t time.Time, s dateStep) time.Time {
	day := time.Date(t.Year(), t.Month(), t.Day(), 0, 0, 0, 0, time.UTC)
	var f time.Time
	switch {
	case s.d >= 7*24*time.Hour: // Mondays
		f = day.AddDate(0, 0, -int((day.Weekday()+6)%7))
	case s.d > 0:
		f = day
	default:
		m := (int(t.Month()) - 1) / min(s.months, 12) * min(s.months, 12)
		f = time.Date(t.Year(), time.Month(m+1), 1, 0, 0, 0, 0, time.UTC)
		if s.months > 12 {
			years := s.months / 12
			f = time.Date(t.Year()/years*years, 1, 1, 0, 0, 0, 0, time.UTC)
		}
	}
	for f.Before(t) {
		f = nextTick(f, s)
	}
	return f
}

func nextTick(t time.Time, s dateStep) time.Time {
	if s.d > 0 {
		return t.Add(s.d)
	}
	return t.AddDate(0, s.months, 0)
}
