package kinmap

import (
	"cmp"
	"fmt"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"github.com/kinmap/kinmap/events"
	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/history"
	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/model"
)

// EventOptions says where a run's maintenance and inspection records come
// from and how they mark windows (package events).
type EventOptions struct {
	File      string              `json:"file"` // events file; "" for none
	Columns   ingest.EventOptions `json:"columns"`
	Span      time.Duration       `json:"span"` // span a point event marks before it; 0 means events.DefaultBefore
	ShowNotes bool                `json:"show_notes"`
	Classify  events.Config       `json:"classify"`
}

// DefaultEventOptions returns the defaults of the command.
func DefaultEventOptions() EventOptions {
	return EventOptions{Columns: ingest.DefaultEventOptions(), Span: events.DefaultBefore, Classify: events.DefaultConfig()}
}

// Conditions is what a run learnt and concluded from labelled events.
type Conditions struct {
	Events    []ingest.EventRow
	Marks     events.Marks      // how Events marked the run's windows (their Marked labels)
	Knowledge *model.Conditions // the label counts the windows were classified with: the model's and the run's
	Span      time.Duration     // span a point event marks before it; also how far after a precedent its outcome is looked for
}

// classify marks the run's windows with its events, classifies every
// window with the model's knowledge and the run's (the window's Condition
// and ConditionConfidence), and, for run and update, keeps the knowledge
// in the model. A run without events and a
// model without knowledge leave r.Conditions nil.
func (r *Result) classify(o *Options) error {
	eo := o.Events
	if eo.Span <= 0 {
		eo.Span = events.DefaultBefore
	}
	if eo.Classify.K == 0 {
		eo.Classify = events.DefaultConfig()
	}
	ws := r.Table.Windows
	r.showNotes = eo.ShowNotes
	c := &Conditions{Span: eo.Span}
	own := false // the windows' labels count in the run's knowledge
	var mine *model.Conditions
	if eo.File != "" {
		evs, err := ingest.ReadEvents(eo.File, eo.Columns)
		if err != nil {
			return err
		}
		c.Events = evs
		c.Marks = events.Mark(ws, evs, events.Span{Before: eo.Span})
		own = true
		mine = events.Count(r.Model.Map.Units(), ws)
		mine.Span, mine.Events = events.Span{Before: eo.Span}.String(), c.Marks.Used
		if len(c.Marks.Unknown) > 0 {
			r.Info.Warnings = append(r.Info.Warnings, fmt.Sprintf("events: %s: %d sites have no window in the dump and their events are left out: %s",
				filepath.Base(eo.File), len(c.Marks.Unknown), list(c.Marks.Unknown, 10)))
		}
		o.logf("events: %d records, %d of them mark windows of this dump", len(evs), c.Marks.Used)
	}
	c.Knowledge = events.Merge(r.Model.Conditions, mine)
	if c.Knowledge == nil || len(c.Knowledge.Labels) == 0 {
		return nil
	}
	if r.Info.Command != "assign" {
		m := *r.Model
		m.Conditions = c.Knowledge
		r.Model = &m
	}
	events.Classify(r.Model.Map.Lattice, c.Knowledge, r.Table.Windows, own, eo.Classify)
	r.Conditions = c
	return nil
}

// list joins up to n items, saying how many more there are.
func list(items []string, n int) string {
	s := strings.Join(items[:min(n, len(items))], ", ")
	if len(items) > n {
		s += fmt.Sprintf(" and %d more", len(items)-n)
	}
	return s
}

// exportConditions returns the conditions of r for the outputs, notes
// only when showNotes.
func (r *Result) exportConditions(showNotes bool) *export.Conditions {
	c := r.Conditions
	if c == nil {
		return nil
	}
	out := &export.Conditions{
		Labels: c.Knowledge.Labels, UnitCounts: c.Knowledge.Counts,
		Unknown: c.Marks.Unknown, Span: c.Knowledge.Span,
	}
	for _, e := range c.Events {
		if !slices.Contains(c.Marks.Unknown, e.Site) {
			out.Events = append(out.Events, exportEvent(e, showNotes))
		}
	}
	out.Precedents = r.precedents(showNotes)
	return out
}

// maxPrecedentSites is how many sites get precedents.
const maxPrecedentSites = 10

// precedents returns, for the sites of the work list in its order, then
// for those whose last window is classified as a label, most confident
// first, up to maxPrecedentSites in all, the three earlier windows of the
// history read for the run and of the run itself most similar to the
// site's last window, with the run's events recorded after them.
func (r *Result) precedents(showNotes bool) []export.SitePrecedents {
	c := r.Conditions
	if len(c.Events) == 0 {
		return nil
	}
	past := history.Windows(r.Table.Windows)
	if r.history != nil {
		past = append(slices.Clone(r.history.Windows), past...)
	}
	last := make(map[string]int)
	for i, w := range r.Table.Windows {
		if j, ok := last[w.Site]; !ok || w.Start.After(r.Table.Windows[j].Start) {
			last[w.Site] = i
		}
	}
	var labelled []int
	for _, i := range last {
		if slices.Contains(c.Knowledge.Labels, r.Table.Windows[i].Condition) {
			labelled = append(labelled, i)
		}
	}
	slices.SortFunc(labelled, func(a, b int) int {
		wa, wb := &r.Table.Windows[a], &r.Table.Windows[b]
		return cmp.Or(cmp.Compare(wb.ConditionConfidence, wa.ConditionConfidence), cmp.Compare(wa.Site, wb.Site))
	})
	var query []int
	add := func(i int) {
		if len(query) < maxPrecedentSites && !slices.Contains(query, i) {
			query = append(query, i)
		}
	}
	for _, row := range r.Attention {
		for _, site := range row.Sites {
			if i, ok := last[site]; ok {
				add(i)
			}
		}
	}
	for _, i := range labelled {
		add(i)
	}
	var out []export.SitePrecedents
	for _, i := range query {
		w := r.Table.Windows[i]
		sp := export.SitePrecedents{Site: w.Site, Window: w.Start}
		for _, p := range events.Precedents(w.Scaled, w.Start, past, c.Events, c.Span, 3) {
			ep := export.Precedent{Site: p.Site, Start: p.Start, Distance: p.Distance}
			for _, e := range p.After {
				ep.After = append(ep.After, exportEvent(e, showNotes))
			}
			sp.Precedents = append(sp.Precedents, ep)
		}
		out = append(out, sp)
	}
	return out
}

func exportEvent(e ingest.EventRow, showNotes bool) export.Event {
	ev := export.Event{Site: e.Site, Start: e.Start, End: e.End, Label: e.Label}
	if showNotes {
		ev.Note = e.Note
	}
	return ev
}

// eventsRecord is what run.json records of eo: nothing without an events
// file.
func eventsRecord(eo EventOptions) *EventOptions {
	if eo.File == "" {
		return nil
	}
	return &eo
}
