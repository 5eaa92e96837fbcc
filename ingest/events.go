package ingest

import (
	"io"
	"strings"
	"time"
)

// EventOptions says which columns of an events file (maintenance and
// inspection records) mean what. A file has either a time column (point
// events) or start and end columns (intervals); a point event may also sit
// in a file with start and end, its end left blank. Zero fields take the
// defaults of DefaultEventOptions.
type EventOptions struct {
	SiteCol  string `json:"site_col"`
	TimeCol  string `json:"time_col"`
	StartCol string `json:"start_col"`
	EndCol   string `json:"end_col"`
	LabelCol string `json:"label_col"`
	NoteCol  string `json:"note_col"` // optional free text
	TimeUnit string `json:"time_unit"`
}

// DefaultEventOptions returns the column names the command uses by
// default.
func DefaultEventOptions() EventOptions {
	return EventOptions{SiteCol: "site", TimeCol: "time", StartCol: "start", EndCol: "end",
		LabelCol: "label", NoteCol: "note", TimeUnit: "s"}
}

// EventRow is one record of an events file, as read.
type EventRow struct {
	Site       string
	Start, End time.Time // End equals Start for a point event
	Point      bool      // the record has one time, not an interval
	Label      string
	Note       string // "" when the file has no note column
	Where      string // "line 3" or "row 3", for messages
}

// ReadEvents reads an events file (CSV, Parquet or Arrow IPC, detected from
// the content) with the readers and time rules of dumps: times are
// timestamps, dates, integer epochs in opt.TimeUnit or RFC 3339 strings,
// read as UTC when they carry no zone. A row without a site, a label or a
// time, or whose end comes before its start, is an error naming its line
// or row.
func ReadEvents(path string, opt EventOptions) ([]EventRow, error) {
	def := DefaultEventOptions()
	opt.SiteCol, opt.TimeCol = cmpOr(opt.SiteCol, def.SiteCol), cmpOr(opt.TimeCol, def.TimeCol)
	opt.StartCol, opt.EndCol = cmpOr(opt.StartCol, def.StartCol), cmpOr(opt.EndCol, def.EndCol)
	opt.LabelCol, opt.NoteCol = cmpOr(opt.LabelCol, def.LabelCol), cmpOr(opt.NoteCol, def.NoteCol)
	opt.TimeUnit = cmpOr(opt.TimeUnit, def.TimeUnit)
	unit, ok := unitNanos(opt.TimeUnit)
	if !ok {
		return nil, usagef("unknown time unit %q (want s, ms, us or ns)", opt.TimeUnit)
	}
	if err := checkFile(path); err != nil {
		return nil, err
	}
	rows, err := readEvents(path, opt, unit)
	if err != nil {
		return nil, inFile(err, path)
	}
	return rows, nil
}

func readEvents(path string, opt EventOptions, unit int64) ([]EventRow, error) {
	in, err := openInput(path)
	if err != nil {
		return nil, err
	}
	defer in.close()
	src, err := in.source()
	if err != nil {
		return nil, err
	}
	defer src.close()
	fields := src.schema()
	col := map[string]int{}
	for i, f := range fields {
		col[f.name] = i
	}
	want := make([]bool, len(fields))
	need := func(name string) (int, error) {
		i, ok := col[name]
		if !ok {
			return -1, missingColumn(name, fields)
		}
		want[i] = true
		return i, nil
	}
	optional := func(name string) int {
		i, ok := col[name]
		if !ok {
			return -1
		}
		want[i] = true
		return i
	}
	site, err := need(opt.SiteCol)
	if err != nil {
		return nil, err
	}
	label, err := need(opt.LabelCol)
	if err != nil {
		return nil, err
	}
	note := optional(opt.NoteCol)
	at, start, end := optional(opt.TimeCol), optional(opt.StartCol), optional(opt.EndCol)
	switch {
	case at < 0 && start < 0:
		return nil, colErr(opt.TimeCol, "no time column: give a %q column, or %q and %q (the file has %s)",
			opt.TimeCol, opt.StartCol, opt.EndCol, quoteList(names(fields)))
	case start >= 0 && end < 0:
		return nil, colErr(opt.StartCol, "start column without its partner %q", opt.EndCol)
	}
	var out []EventRow
	for {
		b, err := src.next(want)
		if err == io.EOF {
			return out, nil
		}
		if err != nil {
			return nil, err
		}
		if out, err = b.events(out, site, label, note, at, start, end, unit); err != nil {
			return nil, err
		}
	}
}

func names(fields []field) []string {
	out := make([]string, len(fields))
	for i, f := range fields {
		out[i] = f.name
	}
	return out
}

// events appends the rows of b to out; note, at, start and end are -1 for
// a column the file lacks.
func (b *batch) events(out []EventRow, site, label, note, at, start, end int, unit int64) ([]EventRow, error) {
	text := func(c int) ([]string, error) {
		codes, dict, err := b.keys(b.cols[c])
		if err != nil {
			return nil, err
		}
		if err := b.checkUTF8(codes, dict, b.cols[c].name, "text"); err != nil {
			return nil, err
		}
		s := make([]string, b.n)
		for i, code := range codes {
			if code >= 0 {
				s[i] = strings.Clone(strings.TrimSpace(dict[code]))
			}
		}
		return s, nil
	}
	type times struct {
		ns    []int64
		state []uint8
	}
	timesOf := func(c int) (times, error) {
		if c < 0 {
			return times{}, nil
		}
		ns, state, _, err := b.times(b.cols[c], unit)
		return times{ns, state}, err
	}
	// has reports whether row i has a time, and whether it is out of range.
	has := func(t times, i int) (ok, outside bool) {
		switch {
		case t.ns == nil || t.state != nil && t.state[i] == timeNull:
			return false, false
		case t.state != nil && t.state[i] == timeRange:
			return false, true
		}
		return true, false
	}
	sites, err := text(site)
	if err != nil {
		return nil, err
	}
	labels, err := text(label)
	if err != nil {
		return nil, err
	}
	var notes []string
	if note >= 0 {
		if notes, err = text(note); err != nil {
			return nil, err
		}
	}
	tAt, err := timesOf(at)
	if err != nil {
		return nil, err
	}
	tStart, err := timesOf(start)
	if err != nil {
		return nil, err
	}
	tEnd, err := timesOf(end)
	if err != nil {
		return nil, err
	}
	for i := range b.n {
		if sites[i] == "" {
			return nil, b.errAt(i, b.cols[site].name, "empty site id")
		}
		if labels[i] == "" {
			return nil, b.errAt(i, b.cols[label].name, "empty label")
		}
		r := EventRow{Site: sites[i], Label: labels[i], Where: b.place(i)}
		if notes != nil {
			r.Note = notes[i]
		}
		okAt, outAt := has(tAt, i)
		okStart, outStart := has(tStart, i)
		okEnd, outEnd := has(tEnd, i)
		for _, e := range []struct {
			outside bool
			c       int
		}{{outAt, at}, {outStart, start}, {outEnd, end}} {
			if e.outside {
				return nil, b.errAt(i, b.cols[e.c].name, "time out of range")
			}
		}
		switch {
		case okStart && okEnd:
			r.Start, r.End = time.Unix(0, tStart.ns[i]).UTC(), time.Unix(0, tEnd.ns[i]).UTC()
			if r.End.Before(r.Start) {
				return nil, b.errAt(i, b.cols[end].name, "the event ends (%s) before it starts (%s)",
					r.End.Format(time.RFC3339), r.Start.Format(time.RFC3339))
			}
		case okAt:
			r.Start, r.Point = time.Unix(0, tAt.ns[i]).UTC(), true
			r.End = r.Start
		case okStart:
			r.Start, r.Point = time.Unix(0, tStart.ns[i]).UTC(), true
			r.End = r.Start
		default:
			c := at
			if c < 0 {
				c = start
			}
			return nil, b.errAt(i, b.cols[c].name, "no time")
		}
		out = append(out, r)
	}
	return out, nil
}
