package kinmap_test

import (
	"fmt"
	"math"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/kinmap/kinmap"
	khistory "github.com/kinmap/kinmap/history"
	"github.com/kinmap/kinmap/internal/dumptest"
	"github.com/kinmap/kinmap/model"
	"github.com/kinmap/kinmap/scenarios"
	"github.com/kinmap/kinmap/timeline"
)

// writeDump writes the readings of fleet in [from, to) as a long CSV dump,
// with times moved by shift and values multiplied by 1 + noise·N(0, 1).
func writeDump(t *testing.T, path string, fleet *scenarios.Fleet, from, to time.Time, shift time.Duration, noise float64, seed uint64) {
	t.Helper()
	dumptest.WriteCSV(t, path, fleet, dumptest.CSV{From: from, To: to, Shift: shift, Noise: noise, Seed: seed})
}

// fleetT generates the pumping fleet of an end-to-end run. Every such run
// starts here, so here go test -short skips them (DEVELOPERS.md).
func fleetT(t *testing.T, sites, weeks int) *scenarios.Fleet {
	t.Helper()
	if testing.Short() {
		t.Skip("end-to-end run")
	}
	spec, err := scenarios.DefaultSpec("pumping")
	if err != nil {
		t.Fatal(err)
	}
	spec.Sites, spec.Weeks = sites, weeks
	fleet, err := scenarios.Generate(spec)
	if err != nil {
		t.Fatal(err)
	}
	return fleet
}

func options(data ...string) kinmap.Options {
	o := kinmap.DefaultOptions()
	o.Data = data
	return o
}

// Assigning the training dump to its own model, read back from its file,
// gives exactly the BMUs of training.
func TestAssignTrainingDump(t *testing.T) {
	fleet := fleetT(t, 30, 2)
	dir := t.TempDir()
	dump := filepath.Join(dir, "dump.csv")
	writeDump(t, dump, fleet, fleet.WindowStart(0), fleet.WindowStart(fleet.Windows()), 0, 0, 1)
	trained, err := kinmap.Train(options(dump))
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, "model")
	if err := trained.Model.WriteFile(path); err != nil {
		t.Fatal(err)
	}
	back, err := model.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	assigned, err := kinmap.Assign(options(dump), back)
	if err != nil {
		t.Fatal(err)
	}
	if len(assigned.Table.Windows) != len(trained.Table.Windows) {
		t.Fatalf("%d windows assigned, %d trained", len(assigned.Table.Windows), len(trained.Table.Windows))
	}
	for i, e := range assigned.Table.Windows {
		if tr := trained.Table.Windows[i]; e.Site != tr.Site || !e.Start.Equal(tr.Start) || e.Unit != tr.Unit || e.Regime != tr.Regime {
			t.Fatalf("window %d: assigned %+v, trained %+v", i, e, tr)
		}
	}
}

// When week 2 is week 1 plus noise, updating the model with week 2 keeps
// every regime's number: the regimes of the updated model are those of the
// first, each nearest to the centroid of the regime with its own number.
func TestUpdateKeepsRegimeNumbers(t *testing.T) {
	fleet := fleetT(t, 60, 1)
	dir := t.TempDir()
	week1, week2 := filepath.Join(dir, "week1.csv"), filepath.Join(dir, "week2.csv")
	from, to := fleet.WindowStart(0), fleet.WindowStart(7)
	writeDump(t, week1, fleet, from, to, 0, 0, 1)
	writeDump(t, week2, fleet, from, to, 7*24*time.Hour, 0.01, 2)
	first, err := kinmap.Train(options(week1))
	if err != nil {
		t.Fatal(err)
	}
	second, err := kinmap.Update(options(week2), first.Model)
	if err != nil {
		t.Fatal(err)
	}
	ids := func(m *model.Model) []int {
		var out []int
		for _, r := range m.Regimes {
			out = append(out, r.ID)
		}
		slices.Sort(out)
		return out
	}
	if a, b := ids(first.Model), ids(second.Model); !slices.Equal(a, b) {
		t.Fatalf("regimes %v before the update, %v after; changes %+v", a, b, second.Changes)
	}
	for _, r := range second.Model.Regimes {
		nearest, best := 0, math.Inf(1)
		for _, p := range first.Model.Regimes {
			if d := dist(r.Centroid, p.Centroid); d < best {
				nearest, best = p.ID, d
			}
		}
		if nearest != r.ID {
			t.Errorf("updated regime %d lies nearest to regime %d of the first model", r.ID, nearest)
		}
	}
	for _, c := range second.Changes {
		if c.Kind != model.ChangeRenumbered {
			t.Errorf("change %+v after an update on the same behaviour", c)
		}
	}
	// The number was kept, not set by the user, and the note says so.
	if c := second.Info.Regimes; c == nil || !strings.Contains(c.Note, "kept from the model updated") {
		t.Errorf("regime choice after an update without a number of regimes: %+v", c)
	}

	// run.json's quality is that of the run's own windows, whether the run
	// built the model on them or assigned them to an earlier one: its mean
	// quantization error is the mean distance of each window to its BMU
	// (T. Kohonen, "Self-Organizing Maps", 3rd ed., 2001).
	third, err := kinmap.Assign(options(week2), first.Model)
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range []struct {
		name string
		res  *kinmap.Result
	}{{"train", first}, {"update", second}, {"assign", third}} {
		var sum float64
		for _, w := range r.res.Table.Windows {
			sum += w.QE
		}
		if mean := sum / float64(len(r.res.Table.Windows)); math.Abs(r.res.Info.Quality.QE-mean) > 1e-12*mean {
			t.Errorf("%s: run quality QE %g, mean QE of its windows %g", r.name, r.res.Info.Quality.QE, mean)
		}
	}
}

func dist(a, b []float64) float64 {
	var s float64
	for i := range a {
		s += (a[i] - b[i]) * (a[i] - b[i])
	}
	return math.Sqrt(s)
}

// A switch planted at the boundary of two dumps, or one window before it,
// is found once, at the right window, when the second dump is decoded
// against the history of the first, with the default minimum dwell: the
// first dump alone must hold back a change in its last window. Decoding the
// two dumps in turn gives the planted site the timeline and the switches of
// one decoding of both together.
func TestSwitchAcrossDumps(t *testing.T) {
	fleet := fleetT(t, 120, 4)
	var planted scenarios.Switch
	for _, sw := range fleet.Switches() {
		if sw.Window >= 10 && sw.Window <= fleet.Windows()-7 && alone(fleet, sw, 7) {
			planted = sw
			break
		}
	}
	if planted.Site == "" {
		t.Fatal("the scenario planted no switch away from its ends and from other switches")
	}
	// One model serves both cases, which differ only in where the dumps
	// part: trained on the windows before the planted switch, so that the
	// switch is news to it.
	dir := t.TempDir()
	training := filepath.Join(dir, "training.csv")
	writeDump(t, training, fleet, fleet.WindowStart(0), fleet.WindowStart(planted.Window), 0, 0, 1)
	trained, err := kinmap.Train(options(training))
	if err != nil {
		t.Fatal(err)
	}
	mdl := trained.Model
	// The dumps hold the planted site and a few others: the checks look
	// at the planted site, and decoding is per site.
	few := *fleet
	few.Sites = nil
	for _, s := range fleet.Sites {
		if s.ID == planted.Site || len(few.Sites) < 11 {
			few.Sites = append(few.Sites, s)
		}
	}
	whole := filepath.Join(dir, "whole.csv")
	writeDump(t, whole, &few, fleet.WindowStart(0), fleet.WindowStart(fleet.Windows()), 0, 0, 1)
	// One decoding of the whole record, without history.
	joint, err := kinmap.Assign(options(whole), mdl)
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name  string
		ahead int // windows of the new regime at the end of the first dump
	}{
		{"at the boundary", 0},
		{"one window before the boundary", 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			boundary := fleet.WindowStart(planted.Window + tc.ahead)
			before, after := filepath.Join(dir, "before.csv"), filepath.Join(dir, "after.csv")
			writeDump(t, before, &few, fleet.WindowStart(0), boundary, 0, 0, 1)
			writeDump(t, after, &few, boundary, fleet.WindowStart(fleet.Windows()), 0, 0, 1)
			history := filepath.Join(dir, "history")

			o := options(before)
			o.History = history
			first, err := kinmap.Assign(o, mdl)
			if err != nil {
				t.Fatal(err)
			}
			if err := first.AppendHistory(history); err != nil {
				t.Fatal(err)
			}
			near := func(sws []timeline.Switch) []timeline.Switch {
				var out []timeline.Switch
				for _, sw := range sws {
					if sw.Site == planted.Site && sw.Time.Sub(planted.Time).Abs() <= 7*24*time.Hour {
						out = append(out, sw)
					}
				}
				return out
			}
			o = options(after)
			o.History = history
			var second *kinmap.Result
			for run := range 2 { // the same dump twice: its period is replaced, not doubled
				if second, err = kinmap.Assign(o, mdl); err != nil {
					t.Fatal(err)
				}
				if err := second.AppendHistory(history); err != nil {
					t.Fatal(err)
				}
				found := append(near(first.Switches), near(second.Switches)...)
				if len(found) != 1 || !found[0].Time.Equal(planted.Time) {
					t.Errorf("run %d: switches of %s near %s: %+v, want one at that window", run, planted.Site, planted.Time.Format(time.DateOnly), found)
				}
			}
			h, err := khistory.Read(history)
			if err != nil {
				t.Fatal(err)
			}
			if n := len(first.Table.Windows) + len(second.Table.Windows); len(h.Windows) != n {
				t.Errorf("history holds %d windows, want the %d of both dumps once", len(h.Windows), n)
			}

			// Windows as "time regime" and switches as "time from→to".
			var want, got []string
			for _, e := range joint.Table.Windows {
				if e.Site == planted.Site {
					want = append(want, fmt.Sprintf("%s %d", e.Start.UTC().Format(time.RFC3339), e.Regime))
				}
			}
			for _, w := range h.Windows {
				if w.Site == planted.Site {
					got = append(got, fmt.Sprintf("%s %d", w.Start.UTC().Format(time.RFC3339), w.Regime))
				}
			}
			slices.Sort(got)
			if !slices.Equal(got, want) {
				t.Errorf("%s in the history:\n%v\none decoding of both dumps:\n%v", planted.Site, got, want)
			}
			changes := func(sws ...[]timeline.Switch) []string {
				var out []string
				for _, s := range slices.Concat(sws...) {
					if s.Site == planted.Site {
						out = append(out, fmt.Sprintf("%s %d→%d", s.Time.UTC().Format(time.RFC3339), s.From, s.To))
					}
				}
				slices.Sort(out)
				return out
			}
			if g, w := changes(first.Switches, second.Switches), changes(joint.Switches); !slices.Equal(g, w) {
				t.Errorf("switches of %s, dump by dump: %v; both dumps at once: %v", planted.Site, g, w)
			}
		})
	}
}

// alone reports whether no other switch of sw's site lies within n windows
// of it.
func alone(fleet *scenarios.Fleet, sw scenarios.Switch, n int) bool {
	for _, o := range fleet.Switches() {
		if o.Site == sw.Site && o.Window != sw.Window && max(o.Window-sw.Window, sw.Window-o.Window) <= n {
			return false
		}
	}
	return true
}

// Assigning never trains, so a dump that leaves most of the model's units
// without a window (one site's week) says so in its quality figures but
// gives no advice on the grid or the neighbourhood width: the lattice is
// the model's, and neither is an option of assign.
func TestAssignGivesNoTrainingAdvice(t *testing.T) {
	fleet := fleetT(t, 30, 1)
	dir := t.TempDir()
	all, one := filepath.Join(dir, "all.csv"), filepath.Join(dir, "one.csv")
	from, to := fleet.WindowStart(0), fleet.WindowStart(fleet.Windows())
	writeDump(t, all, fleet, from, to, 0, 0, 1)
	site := fleet.Sites[0].ID
	dumptest.WriteCSV(t, one, fleet, dumptest.CSV{From: from, To: to, Keep: func(s, _ string, _ time.Time) bool { return s == site }})
	trained, err := kinmap.Train(options(all))
	if err != nil {
		t.Fatal(err)
	}
	res, err := kinmap.Assign(options(one), trained.Model)
	if err != nil {
		t.Fatal(err)
	}
	info := res.Info
	if info.Quality.Unused <= 0.5 {
		t.Fatalf("one site's week leaves %.0f%% of the units without a window; the test wants most", 100*info.Quality.Unused)
	}
	for _, w := range info.Warnings {
		if strings.Contains(w, "win no window") {
			t.Errorf("assign warns: %s", w)
		}
	}
}

// Weekly dumps cut at 08:00 that repeat the day before keep every day of
// every site in the history exactly once, each the window a dump held
// whole: the later dump's part of the repeated day does not replace it,
// and the day the earlier dump ended inside comes whole from the later.
func TestDumpsCutInsideWindows(t *testing.T) {
	fleet := fleetT(t, 12, 2)
	dir := t.TempDir()
	day := func(d int) time.Time { return fleet.WindowStart(d) }
	eight := 8 * time.Hour
	week1, week2 := filepath.Join(dir, "week1.csv"), filepath.Join(dir, "week2.csv")
	writeDump(t, week1, fleet, day(0), day(7).Add(eight), 0, 0, 1)
	writeDump(t, week2, fleet, day(6).Add(eight), day(14), 0, 0, 1)
	history := filepath.Join(dir, "history")
	o := options(week1)
	o.History = history
	first, err := kinmap.Train(o)
	if err != nil {
		t.Fatal(err)
	}
	if err := first.AppendHistory(history); err != nil {
		t.Fatal(err)
	}
	whole := map[string]float64{} // QE of each site's day 6, held whole by week 1
	for _, w := range first.Table.Windows {
		if w.Start.Equal(day(6)) {
			whole[w.Site] = w.QE
		}
	}
	o = options(week2)
	o.History = history
	second, err := kinmap.Assign(o, first.Model)
	if err != nil {
		t.Fatal(err)
	}
	if err := second.AppendHistory(history); err != nil {
		t.Fatal(err)
	}
	h, err := khistory.Read(history)
	if err != nil {
		t.Fatal(err)
	}
	// Independently of kinmap's windowing: a day of a site is kept when the
	// site sent a row for the coverage rule's share of its sampling slots,
	// counted from the generated readings.
	want := map[string]bool{}
	slots := float64(fleet.Window / fleet.Step)
	for _, s := range fleet.Sites {
		rows := map[int]float64{}
		for i, t := range s.Readings.Times {
			if i == 0 || t != s.Readings.Times[i-1] {
				rows[int((t-day(0).UnixNano())/int64(fleet.Window))]++
			}
		}
		for d := range 14 {
			if rows[d]/slots >= kinmap.DefaultOptions().Features.MinCoverage {
				want[s.ID+" "+day(d).Format(time.DateOnly)] = true
			}
		}
	}
	got := map[string]int{}
	for _, w := range h.Windows {
		got[w.Site+" "+w.Start.Format(time.DateOnly)]++
		if q, ok := whole[w.Site]; ok && w.Start.Equal(day(6)) && w.QE != q {
			t.Errorf("%s: day 6 has QE %g in the history, the whole window's is %g", w.Site, w.QE, q)
		}
	}
	for k, n := range got {
		if n != 1 || !want[k] {
			t.Errorf("%s: %d windows in the history, want one only if the site covered the day", k, n)
		}
	}
	for k := range want {
		if got[k] == 0 {
			t.Errorf("%s: no window in the history", k)
		}
	}
}
