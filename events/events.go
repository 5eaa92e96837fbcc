// Package events turns maintenance and inspection records into knowledge
// on the map: it marks the windows each record speaks of (Mark), counts
// the labels of the windows every unit won (Count, the overlay), classifies
// every window by the labelled windows near it on the lattice (Classify),
// scores the sites whose recent windows resemble labelled ones (Resemble)
// and finds the most similar past windows of a history with what was
// recorded after them (Precedents).
//
// The span rule. A point event (one time t) marks the windows that overlap
// the span before it, [t − Before, t): with the default Before of 7 days,
// the windows of the week before a failure record. An interval event
// [start, end] marks the windows that overlap it. A window marked by
// several events takes the label of the event whose time (a point event's
// t, an interval's start) is nearest to the window's end, the earlier
// event and then the lower label on a tie. Events are kept apart by site:
// an event marks only windows of its own site.
package events

import (
	"cmp"
	"fmt"
	"slices"
	"time"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/ingest"
)

// DefaultBefore is the span before a point event that it marks.
const DefaultBefore = 7 * 24 * time.Hour

// Span is the rule by which an event marks windows (see the package
// documentation).
type Span struct {
	Before time.Duration // marked span before a point event; > 0
}

// String says the rule in words, as run.json and the model record it.
func (s Span) String() string {
	before := s.Before.String()
	if day := 24 * time.Hour; s.Before%day == 0 {
		before = fmt.Sprintf("%d days", s.Before/day)
	}
	return fmt.Sprintf("Point events mark the windows overlapping the %s before them; intervals the windows overlapping them", before)
}

// Marks is the outcome of Mark beside the labels it sets.
type Marks struct {
	Used    int      // events that marked at least one window
	Unknown []string // sites of events that have no window, sorted, each once
	Unused  []int    // events of known sites that marked no window (outside the dump's time)
}

// Mark sets the Marked label of every window of ws by the events evs and
// the rule sp: the label of the event that marks it, "" when none does.
func Mark(ws []features.Window, evs []ingest.EventRow, sp Span) Marks {
	var m Marks
	bySite := make(map[string][]int)
	from := make([]int, len(ws)) // the event that gave window i its label; -1 when none
	for i, w := range ws {
		bySite[w.Site] = append(bySite[w.Site], i)
		ws[i].Marked, from[i] = "", -1
	}
	best := make([]time.Duration, len(ws))
	for j, e := range evs {
		idx, ok := bySite[e.Site]
		if !ok {
			if !slices.Contains(m.Unknown, e.Site) {
				m.Unknown = append(m.Unknown, e.Site)
			}
			continue
		}
		lo, hi := e.Start, e.End
		if e.Point {
			lo, hi = e.Start.Add(-sp.Before), e.Start
		}
		used := false
		for _, i := range idx {
			w := &ws[i]
			if !overlaps(w.Start, w.End, lo, hi) {
				continue
			}
			used = true
			d := w.End.Sub(e.Start).Abs()
			if k := from[i]; k >= 0 && (d > best[i] || d == best[i] && !earlier(e, evs[k])) {
				continue
			}
			w.Marked, from[i], best[i] = e.Label, j, d
		}
		if used {
			m.Used++
		} else {
			m.Unused = append(m.Unused, j)
		}
	}
	slices.Sort(m.Unknown)
	return m
}

// earlier reports whether a goes before b on a tie: the earlier event, then
// the lower label.
func earlier(a, b ingest.EventRow) bool {
	if c := a.Start.Compare(b.Start); c != 0 {
		return c < 0
	}
	return cmp.Less(a.Label, b.Label)
}

// overlaps reports whether the window [start, end) overlaps [lo, hi), or
// holds lo when the span is an instant (an interval event whose start and
// end are the same).
func overlaps(start, end, lo, hi time.Time) bool {
	if lo.Equal(hi) {
		return !start.After(lo) && end.After(lo)
	}
	return start.Before(hi) && end.After(lo)
}
