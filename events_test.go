package kinmap_test

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/events"
	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/model"
	"github.com/kinmap/kinmap/scenarios"
)

// failureFleet writes the bearings fleet of seed (scenarios.Failures) and
// its records into a folder and returns the options of a default run on
// them with the records as events.
// With split, the first and the second half of the weeks are also written
// to the folders first and second.
func failureFleet(t *testing.T, seed int64, sites, weeks int, split bool) (kinmap.Options, string) {
	t.Helper()
	spec := scenarios.Spec{Sites: sites, Weeks: weeks, Seed: seed, Start: time.Date(2026, time.March, 2, 0, 0, 0, 0, time.UTC)}
	fleet, recs, err := scenarios.Failures(spec)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	if _, err := fleet.Write(dir, scenarios.FileLongParquet); err != nil {
		t.Fatal(err)
	}
	if split {
		// The dump in two halves of the weeks, each in its own file.
		cut := spec.Start.AddDate(0, 0, 7*weeks/2).UnixNano()
		for half, keep := range []func(int64) bool{func(ns int64) bool { return ns < cut }, func(ns int64) bool { return ns >= cut }} {
			part := *fleet
			part.Sites = nil
			for _, s := range fleet.Sites {
				c := *s
				c.Readings = scenarios.Readings{Values: make([][]float64, len(s.Readings.Values))}
				for k, ns := range s.Readings.Times {
					if keep(ns) {
						c.Readings.Times = append(c.Readings.Times, ns)
						for ch := range c.Readings.Values {
							c.Readings.Values[ch] = append(c.Readings.Values[ch], s.Readings.Values[ch][k])
						}
					}
				}
				part.Sites = append(part.Sites, &c)
			}
			if _, err := part.Write(filepath.Join(dir, []string{"first", "second"}[half]), scenarios.FileLongParquet); err != nil {
				t.Fatal(err)
			}
		}
	}
	evs := filepath.Join(dir, "events.csv")
	// A record of a site the dump lacks: listed, not fatal.
	recs = append(recs, scenarios.Record{Site: "BR-GONE", Start: spec.Start, End: spec.Start, Point: true, Label: scenarios.LabelFailure})
	if err := scenarios.WriteRecords(evs, recs); err != nil {
		t.Fatal(err)
	}
	o := kinmap.DefaultOptions()
	o.Data = []string{filepath.Join(dir, scenarios.FileLongParquet)}
	o.Events.File = evs
	return o, dir
}

// precisionRecall scores the windows classified as label against the
// windows the events marked with it.
func precisionRecall(res *kinmap.Result, label string) (p, r float64, tp, fp, fn int) {
	for _, w := range res.Table.Windows {
		truth, said := w.Marked == label, w.Condition == label
		switch {
		case truth && said:
			tp++
		case said:
			fp++
		case truth:
			fn++
		}
	}
	return float64(tp) / float64(tp+fp), float64(tp) / float64(tp+fn), tp, fp, fn
}

// TestPlantedFailures runs the fleet with planted bearing failures and
// maintenance records (scenarios.Failures) on two seeds: the windows in
// the week before a failure record (the default span) must be classified
// as "bearing failure", each by the labelled windows near it with its own
// label left out, at a precision and a recall of at least 0.8; the figures
// are printed. The two-hour inspections, which change nothing, must not
// become a class of their own.
func TestPlantedFailures(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end run")
	}
	for _, seed := range []int64{1, 2} {
		o, _ := failureFleet(t, seed, 120, 6, false)
		res, err := kinmap.Train(o)
		if err != nil {
			t.Fatal(err)
		}
		if res.Conditions == nil {
			t.Fatal("no conditions from a run with events")
		}
		p, r, tp, fp, fn := precisionRecall(res, scenarios.LabelFailure)
		rp, rr, _, _, _ := precisionRecall(res, scenarios.LabelRepair)
		inspections := 0
		for _, w := range res.Table.Windows {
			if w.Condition == scenarios.LabelInspection {
				inspections++
			}
		}
		t.Logf("seed %d: %d windows, %d events used; %q precision %.3f recall %.3f (tp %d, fp %d, fn %d); %q precision %.3f recall %.3f; %d windows classified %q",
			seed, len(res.Table.Windows), res.Conditions.Marks.Used, scenarios.LabelFailure, p, r, tp, fp, fn, scenarios.LabelRepair, rp, rr, inspections, scenarios.LabelInspection)
		if p < 0.8 || r < 0.8 {
			t.Errorf("seed %d: windows before a failure found at precision %.3f, recall %.3f; want both at least 0.8", seed, p, r)
		}
		if inspections > 0 {
			t.Errorf("seed %d: %d windows classified as inspections, which leave no trace in the data", seed, inspections)
		}
		if !slices.Equal(res.Conditions.Marks.Unknown, []string{"BR-GONE"}) || !slices.ContainsFunc(res.Info.Warnings, func(w string) bool { return strings.Contains(w, "BR-GONE") }) {
			t.Errorf("seed %d: the site without windows is not listed: %q, warnings %q", seed, res.Conditions.Marks.Unknown, res.Info.Warnings)
		}
		if res.Model.Conditions == nil || res.Model.Conditions.Events != res.Conditions.Marks.Used {
			t.Errorf("seed %d: the model does not keep the label counts of the run", seed)
		}
	}
}

// TestAssignWithLastWeeksKnowledge trains on the first three weeks of the
// bearings fleet with their records, writes the model and reads it back,
// and assigns the next three weeks without any events: the windows before
// the failures of those weeks must be classified from the knowledge of
// the earlier weeks alone, at a precision and a recall of at least 0.7
// (fewer failures to learn from than a run on all six weeks), on two seeds.
func TestAssignWithLastWeeksKnowledge(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end run")
	}
	for _, seed := range []int64{1, 2} {
		o, dir := failureFleet(t, seed, 120, 6, true)
		evs := o.Events.File
		o.Data = []string{filepath.Join(dir, "first", scenarios.FileLongParquet)}
		res, err := kinmap.Train(o)
		if err != nil {
			t.Fatal(err)
		}
		path := filepath.Join(dir, "model")
		if err := res.Model.WriteFile(path); err != nil {
			t.Fatal(err)
		}
		m, err := model.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		if m.Conditions == nil || len(m.Conditions.Labels) == 0 {
			t.Fatal("the model read back has no label knowledge")
		}
		o.Data = []string{filepath.Join(dir, "second", scenarios.FileLongParquet)}
		o.Events.File = ""
		next, err := kinmap.Assign(o, m)
		if err != nil {
			t.Fatal(err)
		}
		if next.Conditions == nil || next.Conditions.Events != nil {
			t.Fatal("assign without events must classify with the model's knowledge only")
		}
		recs, err := ingest.ReadEvents(evs, ingest.EventOptions{})
		if err != nil {
			t.Fatal(err)
		}
		next.Conditions.Marks = events.Mark(next.Table.Windows, recs, events.Span{Before: events.DefaultBefore})
		p, r, tp, fp, fn := precisionRecall(next, scenarios.LabelFailure)
		t.Logf("seed %d: weeks 4-6 with the knowledge of weeks 1-3 (%d events): %q precision %.3f recall %.3f (tp %d, fp %d, fn %d)",
			seed, m.Conditions.Events, scenarios.LabelFailure, p, r, tp, fp, fn)
		if p < 0.7 || r < 0.7 {
			t.Errorf("seed %d: precision %.3f, recall %.3f; want both at least 0.7", seed, p, r)
		}
		if seed != 1 {
			continue
		}
		// Update keeps the model's knowledge without events, and adds the
		// counts of the dump's marked windows with them.
		up, err := kinmap.Update(o, m)
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(up.Model.Conditions, m.Conditions) {
			t.Error("update without events changed the model's label knowledge")
		}
		o.Events.File = evs
		up, err = kinmap.Update(o, m)
		if err != nil {
			t.Fatal(err)
		}
		c := up.Model.Conditions
		if c == nil || c.Events != m.Conditions.Events+up.Conditions.Marks.Used || total(c.Counts) != total(m.Conditions.Counts)+len(up.Table.Windows) {
			t.Errorf("update with events: the model's knowledge is not the earlier one plus the dump's windows")
		}
	}
}

// total sums counts.
func total(counts [][]int) int {
	n := 0
	for _, row := range counts {
		for _, v := range row {
			n += v
		}
	}
	return n
}

// TestEventNotesStayOut checks that the free-text notes of an events file
// appear in no output unless asked for, while the labels do, and that the
// timeline and sites.geojson carry the classification.
func TestEventNotesStayOut(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end run")
	}
	o, dir := failureFleet(t, 3, 40, 4, false)
	const note = "seized; vibration alarm" // a note scenarios.Failures writes with every failure
	for _, show := range []bool{false, true} {
		o.Events.ShowNotes = show
		res, err := kinmap.Train(o)
		if err != nil {
			t.Fatal(err)
		}
		out := filepath.Join(dir, fmt.Sprintf("out-%v", show))
		if err := res.Write(out); err != nil {
			t.Fatal(err)
		}
		files, err := os.ReadDir(out)
		if err != nil {
			t.Fatal(err)
		}
		var noted []string
		for _, f := range files {
			b, err := os.ReadFile(filepath.Join(out, f.Name()))
			if err != nil {
				t.Fatal(err)
			}
			if bytes.Contains(b, []byte(note)) {
				noted = append(noted, f.Name())
			}
		}
		if want := []string{"report.html"}; show && !slices.Equal(noted, want) || !show && len(noted) > 0 {
			t.Errorf("--show-notes %v: the note is in %v", show, noted)
		}
		report, err := os.ReadFile(filepath.Join(out, "report.html"))
		if err != nil {
			t.Fatal(err)
		}
		for _, want := range []string{"Known events on the map", scenarios.LabelFailure, "Events on the site timelines"} {
			if !bytes.Contains(report, []byte(want)) {
				t.Errorf("the report lacks %q", want)
			}
		}
		tl, err := os.ReadFile(filepath.Join(out, "timeline.csv"))
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Contains(tl, []byte(",likely_condition,condition_confidence\r\n")) || !bytes.Contains(tl, []byte(","+scenarios.LabelFailure+",")) {
			t.Errorf("timeline.csv lacks the classification columns or a window classified %q:\n%.400s", scenarios.LabelFailure, tl)
		}
	}
}
