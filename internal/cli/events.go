package cli

import "github.com/kinmap/kinmap"

// Events registers the flags of the events file: maintenance and
// inspection records that label windows.
func (f *Flags) Events(o *kinmap.Options) {
	f.Section("Events")
	c := &o.Events.Columns
	f.Str(&o.Events.File, "events", "", "events `FILE` (CSV, Parquet or Arrow): site, time or start and end, label, optional note")
	f.Str(&c.SiteCol, "event-site-col", "", "site id `COLUMN` of the events file (default: the --site-col name)")
	f.Str(&c.TimeCol, "event-time-col", c.TimeCol, "time `COLUMN` of point events")
	f.Str(&c.StartCol, "event-start-col", c.StartCol, "start `COLUMN` of interval events")
	f.Str(&c.EndCol, "event-end-col", c.EndCol, "end `COLUMN` of interval events")
	f.Str(&c.LabelCol, "event-label-col", c.LabelCol, "label `COLUMN`, such as \"bearing replaced\"")
	f.Str(&c.NoteCol, "event-note-col", c.NoteCol, "free-text note `COLUMN` (optional)")
	f.Value(durationValue{&o.Events.Span}, "event-span", "a point event marks the windows in this `LENGTH` before it; intervals mark the windows they overlap")
	f.Bool(&o.Events.ShowNotes, "show-notes", false, "show the events' free-text notes in the report (labels only by default)")
	f.After(func() {
		if c.SiteCol == "" {
			c.SiteCol = o.Ingest.SiteCol
		}
		c.TimeUnit = o.Ingest.TimeUnit
	})
}
