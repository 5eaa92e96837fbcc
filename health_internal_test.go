package kinmap

import (
	"maps"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/history"
	"github.com/kinmap/kinmap/ingest"
)

// stepFinding warns of windows holding fewer than 20 readings at the
// sampling step, where p05 and p95 (Hyndman & Fan definition 7, h =
// (n−1)p + 1) fall between the two most extreme readings, and of sites
// with fewer windows than a switch's dwell on both sides needs.
func TestStepFinding(t *testing.T) {
	windows := func(perSite int) []features.Window {
		var ws []features.Window
		for _, s := range []string{"a", "b"} {
			for range perSite {
				ws = append(ws, features.Window{Site: s})
			}
		}
		return ws
	}
	for _, c := range []struct {
		name    string
		window  time.Duration
		step    time.Duration
		perSite int
		want    bool
	}{
		{"6 readings", time.Hour, 10 * time.Minute, 10, true},
		{"19 readings", 19 * time.Hour, time.Hour, 10, true},
		{"20 readings", 20 * time.Hour, time.Hour, 10, false},
		{"3 windows a site", 24 * time.Hour, 10 * time.Minute, 3, true},
		{"4 windows a site", 24 * time.Hour, 10 * time.Minute, 4, false},
		{"no step", 24 * time.Hour, 0, 1, false},
	} {
		t.Run(c.name, func(t *testing.T) {
			tb := &features.Table{Config: features.Config{Window: c.window}, Step: c.step, Windows: windows(c.perSite)}
			f, got := stepFinding(tb)
			if got != c.want || got && (f.Kind != export.HealthWindowStep || !f.Warning) {
				t.Errorf("finding %v %+v, want %v", got, f, c.want)
			}
		})
	}
}

// The data health names a register site without data, a site without
// windows and its reasons, a channel a site never reported, and warns of a
// site whose duplicates pass 5 % of its readings.
func TestHealthOf(t *testing.T) {
	nan := math.NaN()
	w := func(site string, flow, vib float64) features.Window {
		return features.Window{Site: site, Values: []float64{flow, vib}}
	}
	reg := &ingest.Register{Sites: []*ingest.Site{{ID: "a"}, {ID: "b"}, {ID: "c"}, {ID: "quiet"}}}
	res := &Result{
		Register: reg,
		Ingest: ingest.Summary{SiteDuplicates: map[string]int64{"a": 10, "b": 1},
			SiteReadings: map[string]int64{"a": 180, "b": 100, "c": 190}},
		Table: &features.Table{
			Names:  []string{"flow.mean", "vibration.mean"},
			Config: features.Config{Window: 24 * time.Hour},
			Step:   10 * time.Minute,
			// b never reported vibration; a lacks it in one window only.
			Windows: []features.Window{w("a", 1, 2), w("a", 1, nan), w("a", 1, 2), w("a", 1, 2), w("b", 1, nan), w("b", 1, nan), w("b", 1, nan), w("b", 1, nan)},
			Skipped: map[string]features.Skips{"c": {"coverage": 2, "empty": 1}, "a": {"coverage": 1}},
		},
	}
	got := healthOf(res, []string{"flow.mean", "vibration.mean"})
	want := []export.Finding{
		{Kind: export.HealthSilent, Site: "quiet", Warning: true},
		{Kind: export.HealthNoWindows, Site: "c", Count: 3, Warning: true},
		{Kind: export.HealthMissingChannel, Site: "b", Channel: "vibration", Count: 4},
		// a: 10 duplicates against 180 readings kept, 10/190 = 5.3 %.
		{Kind: export.HealthDuplicates, Site: "a", Count: 10, Share: 10.0 / 190, Warning: true},
		{Kind: export.HealthDuplicates, Site: "b", Count: 1, Share: 1.0 / 101},
	}
	if len(got) != len(want) {
		t.Fatalf("%d findings, want %d: %+v", len(got), len(want), got)
	}
	for i, w := range want {
		g := got[i]
		g.Detail = ""
		if g != w {
			t.Errorf("finding %d: %+v, want %+v", i, g, w)
		}
	}
	if d := got[1].Detail; d != "every window skipped: 2 for coverage, 1 for empty; lower the minimum coverage or lengthen the window if its readings are sparse" {
		t.Errorf("detail of c: %q", d)
	}
}

// A channel of the dump that the run does not read is named with its
// readings, so that rows read = readings kept + duplicates + dropped +
// unread. It is a warning when a channel of the model is missing from the
// same dump, or from a site of it: the sign of a channel renamed since the
// model was trained.
func TestHealthUnselected(t *testing.T) {
	for _, c := range []struct {
		name   string
		absent []string
		warn   bool
		atSite bool // site a never reported vibration
	}{
		{"renamed", []string{"flow"}, true, false},
		{"renamed at a site", nil, true, true},
		{"extra", nil, false, false},
	} {
		t.Run(c.name, func(t *testing.T) {
			res := &Result{
				Ingest: ingest.Summary{Rows: 400, Readings: 300, Absent: c.absent, Unselected: map[string]int64{"flow_rate": 100},
					SiteReadings: map[string]int64{"a": 300}},
				Table: &features.Table{Names: []string{"flow.mean", "vibration.mean"}, Windows: []features.Window{{Site: "a", Values: []float64{1, 2}}}},
			}
			if c.atSite {
				res.Table.Windows[0].Values[1] = math.NaN()
			}
			var got []export.Finding
			for _, f := range healthOf(res, res.Table.Names) {
				if f.Kind == export.HealthUnselected {
					got = append(got, f)
				}
			}
			if len(got) != 1 || got[0].Channel != "flow_rate" || got[0].Count != 100 || got[0].Share != 0.25 || got[0].Warning != c.warn {
				t.Fatalf("findings %+v, want one of flow_rate, 100 readings, share 0.25, warning %v", got, c.warn)
			}
		})
	}
}

// The data health says when the history holds no window in the span just
// before the dump (a week not delivered: decoding continues across it as
// if nothing were missing), and when it already holds windows after the
// dump (a week delivered late: the windows after it were decoded without
// it). A dump that overlaps the history, or follows it at once, is news
// to neither.
func TestHistorySpan(t *testing.T) {
	day := 24 * time.Hour
	t0 := time.Date(2026, 6, 1, 0, 0, 0, 0, time.UTC)
	week := func(site string, from int) []features.Window {
		var ws []features.Window
		for d := from; d < from+7; d++ {
			ws = append(ws, features.Window{Site: site, Start: t0.Add(time.Duration(d) * day), End: t0.Add(time.Duration(d+1) * day)})
		}
		return ws
	}
	past := func(ws []features.Window) *history.History { return &history.History{Windows: history.Windows(ws)} }
	for _, c := range []struct {
		name  string
		h     []features.Window
		run   int // first day of the dump
		kinds map[string]int64
	}{
		{"next week", week("a", 0), 7, nil},
		{"overlapping by a day", week("a", 0), 6, nil},
		{"again", week("a", 0), 0, nil},
		{"a week skipped", week("a", 0), 14, map[string]int64{export.HealthGap: 7}},
		{"a day lost between two dumps", week("a", 0), 8, map[string]int64{export.HealthGap: 1}},
		{"late", slices.Concat(week("a", 0), week("b", 14)), 7, map[string]int64{export.HealthLate: 7}},
		{"late, a gap after", slices.Concat(week("a", 0), week("a", 21)), 7, map[string]int64{export.HealthLate: 7, export.HealthGap: 7}},
	} {
		t.Run(c.name, func(t *testing.T) {
			tb := &features.Table{Config: features.Config{Window: day}, Windows: week("a", c.run)}
			got := map[string]int64{}
			for _, f := range historySpan(past(c.h), tb) {
				got[f.Kind] = f.Count
				if f.Detail == "" {
					t.Errorf("%s without a detail", f.Kind)
				}
			}
			if !maps.Equal(got, c.kinds) {
				t.Errorf("findings %v, want %v", got, c.kinds)
			}
		})
	}
}

// Times without a zone are read as UTC. A dump written in local time
// without its offset then shifts every window by the zone's offset, so
// run.json and the report must say so, not only the progress lines on a
// terminal: a weekly job run without one would never see them.
func TestNaiveTimeWarning(t *testing.T) {
	for _, c := range []struct {
		time string
		want bool
	}{
		{"2026-06-01T00:00:00", true},
		{"2026-06-01T00:00:00Z", false},
		{"2026-06-01T02:00:00+02:00", false},
	} {
		path := filepath.Join(t.TempDir(), "dump.csv")
		if err := os.WriteFile(path, []byte("site,time,channel,value\na,"+c.time+",flow,1\n"), 0o644); err != nil {
			t.Fatal(err)
		}
		o := DefaultOptions()
		o.Data = []string{path}
		res := &Result{}
		if _, err := readInput(&o, res); err != nil {
			t.Fatal(err)
		}
		got := slices.ContainsFunc(timeWarnings(&res.Ingest), func(w string) bool { return strings.Contains(w, "no time zone") })
		if got != c.want {
			t.Errorf("%s: warned %v, want %v: %q", c.time, got, c.want, res.Info.Warnings)
		}
	}
}

// A window that the dump cuts (it starts before the dump's first reading
// or ends after its last, by more than a sampling step) holds only part of
// its span: it does not replace the stored window of the same site and
// start, which an earlier dump may hold whole, and it is written where the
// history holds none. Windows the dump holds whole replace as before.
func TestCutWindows(t *testing.T) {
	day, step := 24*time.Hour, 10*time.Minute
	t0 := time.Date(2026, 6, 7, 0, 0, 0, 0, time.UTC)
	win := func(site string, d int) history.Window {
		return history.Window{Site: site, Start: t0.Add(time.Duration(d) * day), End: t0.Add(time.Duration(d+1) * day), Regime: 1}
	}
	stored := &history.History{Windows: []history.Window{win("a", 0), win("a", 1)}}
	// The dump runs from 08:00 of day 0 to 08:00 of day 3 (a reading jittered
	// 5 s off the grid is not a cut).
	run := []history.Window{win("a", 0), win("a", 1), win("a", 2), win("a", 3), win("b", 0)}
	got, n := keepStored(stored, run, t0.Add(8*time.Hour), t0.Add(3*day+8*time.Hour), step)
	var kept []string
	for _, w := range got {
		kept = append(kept, w.Site+" "+w.Start.Format(time.DateOnly))
	}
	want := []string{"a 2026-06-08", "a 2026-06-09", "a 2026-06-10", "b 2026-06-07"}
	if !slices.Equal(kept, want) || n != 1 {
		t.Errorf("windows written %v (%d kept stored), want %v (1)", kept, n, want)
	}
	if got, n := keepStored(stored, run, t0.Add(5*time.Second), t0.Add(4*day-5*time.Second), step); len(got) != len(run) || n != 0 {
		t.Errorf("a dump holding every window whole: %d of %d written, %d kept stored", len(got), len(run), n)
	}
}

// The windows of earlier dumps that a run's decoding changes are rewritten
// in the history; the data health names them by site, so that a user
// knows which rows of an earlier run's tables no longer hold.
func TestRevisedFindings(t *testing.T) {
	t0 := time.Date(2026, 6, 1, 0, 0, 0, 0, time.UTC)
	win := func(site string, d, regime int) features.Window {
		return features.Window{Site: site, Start: t0.AddDate(0, 0, d), End: t0.AddDate(0, 0, d+1), Regime: regime}
	}
	h := &history.History{Windows: history.Windows([]features.Window{win("a", 4, 1), win("a", 5, 1), win("a", 6, 1), win("b", 6, 2), win("c", 6, 3)})}
	tail := []features.Window{win("a", 5, 2), win("a", 6, 2), win("b", 6, 2)} // as decoded again
	got := revisedFindings(h, tail)
	if len(got) != 1 || got[0].Kind != export.HealthRevised || got[0].Site != "a" || got[0].Count != 2 || !strings.Contains(got[0].Detail, "2026-06-06") {
		t.Fatalf("findings %+v, want site a with 2 windows from 2026-06-06", got)
	}
}

// A site that sent nothing in this dump but whose windows of the dump's
// span the history holds, from another dump of the same week (regional
// dumps run one after the other), is not silent: the finding says where
// its data is and is no warning. A site whose last window ends before the
// dump's first is silent, and so is one whose windows the history holds
// only after the dump (delivered late).
func TestSilentInRegionalDumps(t *testing.T) {
	t0 := time.Date(2026, 6, 8, 0, 0, 0, 0, time.UTC)
	win := func(site string, d int) features.Window {
		return features.Window{Site: site, Start: t0.AddDate(0, 0, d), End: t0.AddDate(0, 0, d+1)}
	}
	h := &history.History{Windows: history.Windows([]features.Window{win("north", -1), win("north", 0), win("north", 6), win("quiet", -1), win("later", 9), win("south", 0)})}
	tb := &features.Table{Windows: []features.Window{win("south", 0), win("south", 6)}}
	have := []export.Finding{{Kind: export.HealthSilent, Site: "north", Warning: true, Detail: "in the site register, no reading in this dump"}}
	got := map[string]bool{}
	for _, f := range append(have, silentIn(h, tb, have)...) {
		if f.Kind == export.HealthSilent {
			got[f.Site] = f.Warning
		}
	}
	if want := map[string]bool{"north": false, "quiet": true, "later": true}; !maps.Equal(got, want) {
		t.Errorf("silent sites (warning) %v, want %v", got, want)
	}
}
