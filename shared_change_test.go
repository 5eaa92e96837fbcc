package kinmap_test

import (
	"encoding/json"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/attention"
	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/scenarios"
)

// A planted same-day change, end to end: in a pumping fleet, from day 18
// on, four in five of the pumps that are steady throughout run as
// high-load pumps do (their readings from then on are those of the
// fleet's high-load pumps), as a fleet-wide change of set point would
// make them. The run reports the change as a shared condition on its day
// with those sites, and the work list has one fleet row for it; none of
// those sites has a row of its own for a switch on that day.
func TestSharedChangeEndToEnd(t *testing.T) {
	fleet := fleetT(t, 300, 4)
	steady, high := slices.Index(fleet.Regimes, "steady"), slices.Index(fleet.Regimes, "high-load")
	var stay, donors []*scenarios.Site
	for _, s := range fleet.Sites {
		switch {
		case len(s.Switches) == 0 && s.Regimes[0] == steady:
			stay = append(stay, s)
		case len(s.Switches) == 0 && s.Regimes[0] == high:
			donors = append(donors, s)
		}
	}
	if len(stay) < 10 || len(donors) == 0 {
		t.Fatalf("test premise: %d steady and %d high-load pumps without a switch", len(stay), len(donors))
	}
	at := fleet.WindowStart(18)
	pushed := map[string]bool{}
	for i, s := range stay[:len(stay)*4/5] {
		pushed[s.ID] = true
		d := donors[i%len(donors)].Readings
		r := s.Readings
		cut := slices.IndexFunc(r.Times, func(ns int64) bool { return ns >= at.UnixNano() })
		from := slices.IndexFunc(d.Times, func(ns int64) bool { return ns >= at.UnixNano() })
		r.Times = append(r.Times[:cut:cut], d.Times[from:]...)
		for c := range r.Values {
			r.Values[c] = append(r.Values[c][:cut:cut], d.Values[c][from:]...)
		}
		s.Readings = r
	}
	dump := filepath.Join(t.TempDir(), "dump.csv")
	writeDump(t, dump, fleet, fleet.WindowStart(0), fleet.WindowStart(fleet.Windows()), 0, 0, 1)
	// The number of regimes is the fleet's: what is checked here is how
	// the timelines and the work list read the change, not the grouping.
	o := options(dump)
	o.Map.Regimes = len(fleet.Regimes)
	res, err := kinmap.Train(o)
	if err != nil {
		t.Fatal(err)
	}
	var found bool
	for _, sh := range res.Shared {
		if !sh.Start.Equal(at) || len(sh.Sites) < len(pushed)/2 {
			continue
		}
		found = true
		t.Logf("%d of %d sites of regime %d looked like regime %d from %s", len(sh.Sites), sh.Of, sh.Regime, sh.Like, sh.Start.Format(time.DateOnly))
		for _, s := range sh.Sites {
			if !pushed[s] {
				t.Errorf("shared condition %+v: site %s did not change", sh, s)
			}
		}
	}
	if !found {
		t.Fatalf("shared conditions %+v, want one from %s holding at least %d of the %d changed sites", res.Shared, at.Format(time.DateOnly), len(pushed)/2, len(pushed))
	}
	var rows int
	for _, r := range res.Attention {
		switch {
		case r.Kind() == "fleet" && r.Time.Equal(at) && len(r.Sites) >= len(pushed)/2:
			rows++
		case r.Kind() == "site" && pushed[r.Site] && r.Level >= attention.Switch && r.Time.Equal(at):
			t.Errorf("row %+v: a changed site's switch of the change day has a row of its own", r)
		}
	}
	if rows != 1 {
		t.Errorf("%d fleet rows for the change, want 1", rows)
	}
	checkSharedOutputs(t, res)
}

// checkSharedOutputs writes the run's outputs and reads back, with
// encoding/csv and encoding/json, the shared conditions of shared.csv and
// run.json and the onsets of switches.csv: the same as the run's, in its
// order, and listed among the files the run wrote.
func checkSharedOutputs(t *testing.T, res *kinmap.Result) {
	t.Helper()
	dir := t.TempDir()
	if err := res.Write(dir); err != nil {
		t.Fatal(err)
	}
	table := func(name string) map[string][]string {
		cols := map[string][]string{}
		for _, r := range readCSVFile(t, filepath.Join(dir, name)) {
			for h, v := range r {
				cols[h] = append(cols[h], v)
			}
		}
		return cols
	}
	rfc := func(t time.Time) string { return t.UTC().Format(time.RFC3339) }
	var starts, ids, counts []string
	for _, sh := range res.Shared {
		starts = append(starts, rfc(sh.Start))
		ids = append(ids, strings.Join(sh.Sites, ","))
		counts = append(counts, strconv.Itoa(len(sh.Sites)))
	}
	shared := table(export.SharedCSVFile)
	if !slices.Equal(shared["start"], starts) || !slices.Equal(shared["site_ids"], ids) || !slices.Equal(shared["sites"], counts) {
		t.Errorf("%s: starts %q, sites %q (%q); want %q, %q (%q)", export.SharedCSVFile, shared["start"], shared["sites"], shared["site_ids"], starts, counts, ids)
	}
	var onsets []string
	drifts := 0
	for _, s := range res.Switches {
		if s.Onset.Before(s.Time) {
			onsets = append(onsets, rfc(s.Onset))
			drifts++
		} else {
			onsets = append(onsets, "")
		}
	}
	t.Logf("%d shared conditions; %d switches, %d of them after a drift", len(res.Shared), len(onsets), drifts)
	if got := table(export.SwitchesCSVFile)["onset"]; !slices.Equal(got, onsets) {
		t.Errorf("%s: onsets %q, want %q", export.SwitchesCSVFile, got, onsets)
	}
	b, err := os.ReadFile(filepath.Join(dir, export.RunFile))
	if err != nil {
		t.Fatal(err)
	}
	var info struct {
		Shared []struct {
			Start   time.Time `json:"start"`
			SiteIDs string    `json:"site_ids"`
		} `json:"shared_changes"`
		Files []string `json:"files"`
	}
	if err := json.Unmarshal(b, &info); err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, sh := range info.Shared {
		got = append(got, rfc(sh.Start)+" "+sh.SiteIDs)
	}
	var want []string
	for i := range starts {
		want = append(want, starts[i]+" "+ids[i])
	}
	if !slices.Equal(got, want) {
		t.Errorf("run.json shared_changes %q, want %q", got, want)
	}
	if !slices.Contains(info.Files, export.SharedCSVFile) || !slices.Contains(info.Files, export.SharedParquetFile) {
		t.Errorf("run.json files %v lack the shared tables", info.Files)
	}
}
