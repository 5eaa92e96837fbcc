package attention

import (
	"errors"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/timeline"
)

var day0 = time.Date(2026, 11, 2, 0, 0, 0, 0, time.UTC)

func at(d int) time.Time { return day0.AddDate(0, 0, d) }

// fleetOf makes 28 daily windows for each site, every window in regime 1
// unless regimes says otherwise from a day on.
func fleetOf(sites []string, after map[string][2]int, unfamiliar map[string]int) []features.Window {
	var es []features.Window
	for _, s := range sites {
		for d := range 28 {
			e := features.Window{Site: s, Start: at(d), End: at(d + 1), Regime: 1}
			if a, ok := after[s]; ok && d >= a[0] {
				e.Regime = a[1]
			}
			e.Unfamiliar = d < unfamiliar[s]
			es = append(es, e)
		}
	}
	return es
}

func TestRankOrder(t *testing.T) {
	sites := []string{"a", "b", "c", "d", "e", "f", "g"}
	status := map[int]string{1: StatusNormal, 2: StatusNormal, 3: StatusWatch, 4: StatusFault}
	after := map[string][2]int{"a": {20, 2}, "b": {10, 4}, "c": {25, 3}, "d": {20, 2}, "f": {3, 3}}
	in := Input{
		Windows: fleetOf(sites, after, map[string]int{"e": 4, "g": 1}),
		Switches: []timeline.Switch{
			{Site: "a", Time: at(20), From: 1, To: 2, Confidence: 0.9},
			{Site: "b", Time: at(10), From: 1, To: 4, Confidence: 0.55},
			{Site: "c", Time: at(25), From: 1, To: 3, Confidence: 0.6},
			{Site: "d", Time: at(20), From: 1, To: 2, Confidence: 0.3},
			{Site: "f", Time: at(3), From: 1, To: 3, Confidence: 0.99},
		},
		Status: status,
		// f's switch was reported by an earlier run a day later.
		Earlier: []Earlier{{Site: "f", Time: at(4), From: 1, To: 3}},
	}
	rows := Rank(in, DefaultConfig())
	type want struct {
		site  string
		level Level
		news  string
	}
	// b: into fault. c: into watch, new; f: into watch, a revision, so
	// after c despite its higher confidence. e: 4 of 28 unfamiliar, chance
	// 1.6e-4 at a rate of 0.01. a: a confident switch between normal
	// regimes; d's is below ½. g: one unfamiliar window is chance.
	wants := []want{{"b", Fault, "new"}, {"c", Watch, "new"}, {"f", Watch, "revision"}, {"e", Unfamiliar, ""}, {"a", Switch, "new"}, {"d", Weak, "new"}}
	if len(rows) != len(wants) {
		t.Fatalf("%d rows, want %d: %+v", len(rows), len(wants), rows)
	}
	for i, w := range wants {
		r := rows[i]
		if r.Site != w.site || r.Level != w.level || r.News() != w.news || r.Rank != i+1 {
			t.Errorf("row %d: site %s level %s news %q rank %d, want %s %s %q", i, r.Site, r.Level, r.News(), r.Rank, w.site, w.level, w.news)
		}
	}
	// f spent 25 windows in watch regime 3 up to its last: a long stay too.
	if f := rows[2]; !containsAll(f.Reason, "switched into watch regime", "25 windows in a row in watch regime 3") {
		t.Errorf("f's reason %q lacks its switch or its stay", f.Reason)
	}
}

func containsAll(s string, parts ...string) bool {
	for _, p := range parts {
		if !strings.Contains(s, p) {
			return false
		}
	}
	return true
}

// A site without a switch that has sat for a week in a fault regime is a
// long stay; six windows are not.
func TestRankLongStay(t *testing.T) {
	status := map[int]string{1: StatusNormal, 4: StatusFault}
	in := Input{Windows: fleetOf([]string{"long", "short"}, map[string][2]int{"long": {21, 4}, "short": {22, 4}}, nil), Status: status}
	rows := Rank(in, DefaultConfig())
	if len(rows) != 1 || rows[0].Site != "long" || rows[0].Level != Stay {
		t.Fatalf("got %+v, want one stay row for site long", rows)
	}
}

// Ten of forty sites switching from 1 to 2 on one day of four weeks is one
// fleet-wide row; two sites on another day are not an event.
func TestRankFleetEvent(t *testing.T) {
	var sites []string
	after := map[string][2]int{}
	var sw []timeline.Switch
	for i := range 40 {
		s := string(rune('A'+i/26)) + string(rune('a'+i%26))
		sites = append(sites, s)
		switch {
		case i < 10:
			after[s] = [2]int{14, 2}
			sw = append(sw, timeline.Switch{Site: s, Time: at(14), From: 1, To: 2, Confidence: 0.8})
		case i < 12:
			after[s] = [2]int{5, 2}
			sw = append(sw, timeline.Switch{Site: s, Time: at(5), From: 1, To: 2, Confidence: 0.8})
		}
	}
	rows := Rank(Input{Windows: fleetOf(sites, after, nil), Switches: sw}, DefaultConfig())
	if len(rows) != 3 {
		t.Fatalf("%d rows, want the event and 2 sites: %+v", len(rows), rows)
	}
	ev := rows[0]
	if ev.Kind() != "fleet" || len(ev.Sites) != 10 || !ev.Time.Equal(at(14)) || ev.From != 1 || ev.To != 2 {
		t.Fatalf("first row %+v, want the fleet event of 10 sites on day 14", ev)
	}
	// λ = 12 switches / 28 days; P(X ≥ 10) is far below 0.001 and
	// P(X ≥ 2) is 0.07, computed from the Poisson sum by hand here.
	lambda := 12.0 / 28
	p2 := 1 - math.Exp(-lambda)*(1+lambda)
	if p2 < 0.001 {
		t.Fatalf("test premise: P(X≥2) = %g", p2)
	}
	for _, r := range rows[1:] {
		if r.Kind() != "site" {
			t.Errorf("row %+v: want a site row", r)
		}
	}
}

// A fleet-wide event takes the level of a switch into its regime: fault
// when the regime is marked fault, weak when its switches' mean confidence
// is below the threshold.
func TestRankFleetEventLevel(t *testing.T) {
	var sites []string
	after := map[string][2]int{}
	for i := range 8 {
		s := string(rune('a' + i))
		sites = append(sites, s)
		after[s] = [2]int{24, 2} // 4 windows in regime 2: no long stay
	}
	for _, c := range []struct {
		status string
		conf   float64
		want   Level
	}{{StatusFault, 0.3, Fault}, {StatusNormal, 0.3, Weak}, {StatusNormal, 0.6, Switch}, {"", 0.6, Switch}} {
		var sw []timeline.Switch
		for _, s := range sites {
			sw = append(sw, timeline.Switch{Site: s, Time: at(24), From: 1, To: 2, Confidence: c.conf})
		}
		rows := Rank(Input{Windows: fleetOf(sites, after, nil), Switches: sw, Status: map[int]string{2: c.status}}, DefaultConfig())
		if len(rows) != 1 || rows[0].Kind() != "fleet" || rows[0].Level != c.want {
			t.Errorf("status %q, confidence %g: rows %+v, want one fleet row at level %s", c.status, c.conf, rows, c.want)
		}
	}
}

// A change that most sites of regime 1 made together on day 14 and kept
// (timeline.Shared) is one fleet-wide row naming its sites, and the
// switches its sites made into the regime they looked like leave their
// own rows; a storm on days 5 and 6 is a row with its end.
func TestRankShared(t *testing.T) {
	var sites, pushed []string
	after := map[string][2]int{}
	var sw []timeline.Switch
	for i := range 20 {
		s := string(rune('a' + i))
		sites = append(sites, s)
		if i < 16 {
			pushed = append(pushed, s)
			if i < 10 { // the decoding carried ten of them over
				after[s] = [2]int{14, 3}
				sw = append(sw, timeline.Switch{Site: s, Time: at(14), From: 1, To: 3, Confidence: 0.4})
			}
		}
	}
	// A site of the change that also switched to another regime, and one
	// that switched before the change: both keep their rows.
	sw = append(sw, timeline.Switch{Site: "a", Time: at(3), From: 1, To: 2, Confidence: 0.9},
		timeline.Switch{Site: "a", Time: at(8), From: 2, To: 1, Confidence: 0.9})
	in := Input{
		Windows:  fleetOf(sites, after, nil),
		Switches: sw,
		Shared: []timeline.Shared{
			{Start: at(5), End: at(7), Regime: 1, Like: 2, Sites: sites[:15], Of: 20, P: 1e-6},
			{Start: at(14), Regime: 1, Like: 3, Sites: pushed, Of: 20, P: 1e-9},
		},
		Names: map[int]string{3: "updated"},
	}
	rows := Rank(in, DefaultConfig())
	var fleet []Row
	for _, r := range rows {
		if r.Kind() == "fleet" {
			fleet = append(fleet, r)
			continue
		}
		if r.Site != "a" {
			t.Errorf("site row %+v: want only site a's own switches", r)
		}
	}
	if len(fleet) != 2 {
		t.Fatalf("fleet rows %+v, want the change and the storm", fleet)
	}
	change, storm := fleet[0], fleet[1]
	if !change.Time.Equal(at(14)) || change.From != 1 || change.To != 3 || len(change.Sites) != 16 || change.Level != Switch {
		t.Errorf("first fleet row %+v, want the change of 16 sites from 1 to 3 on day 14", change)
	}
	for _, want := range []string{"16 of 20 sites of regime 1 looked like regime 3 (updated) from 2026-11-16 to the last window"} {
		if !strings.Contains(change.Reason, want) {
			t.Errorf("reason %q, want it to say %q", change.Reason, want)
		}
	}
	if !storm.Time.Equal(at(5)) || !strings.Contains(storm.Reason, "until 2026-11-09") || len(storm.Sites) != 15 {
		t.Errorf("second fleet row %+v, want the storm of 15 sites from day 5 until day 7", storm)
	}
}

// Validate accepts zero fields (the defaults) and the ends of each range,
// and names the first field out of range.
func TestConfigValidate(t *testing.T) {
	tests := []struct {
		name  string
		cfg   Config
		field string // "" for valid
	}{
		{"zero", Config{}, ""},
		{"defaults", DefaultConfig(), ""},
		{"confidence 1", Config{MinConfidence: 1}, ""},
		{"confidence above 1", Config{MinConfidence: 1.5}, "MinConfidence"},
		{"confidence NaN", Config{MinConfidence: math.NaN()}, "MinConfidence"},
		{"negative stay", Config{LongStay: -1}, "LongStay"},
		{"fleet p 1", Config{FleetAlpha: 1}, "FleetAlpha"},
		{"fleet p negative", Config{FleetAlpha: -0.01}, "FleetAlpha"},
		{"one site a fleet", Config{MinFleetSites: 1}, "MinFleetSites"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			err := tt.cfg.Validate()
			var ce *ConfigError
			switch {
			case tt.field == "" && err != nil:
				t.Errorf("Validate() = %v, want nil", err)
			case tt.field != "" && (!errors.As(err, &ce) || ce.Field != tt.field):
				t.Errorf("Validate() = %v, want a ConfigError for %s", err, tt.field)
			}
		})
	}
}

// A long stay an earlier run reported, in the same regime and unbroken
// since, is not news: the sites fold into one still row per regime, below
// the switches. A stay is news again when the regime differs, when the
// earlier stay was too short to be reported, or when the site switched
// in this run.
func TestRankStillStay(t *testing.T) {
	status := map[int]string{1: StatusNormal, 3: StatusWatch, 4: StatusFault}
	after := map[string][2]int{"old": {0, 4}, "old2": {0, 4}, "other": {0, 4}, "short": {0, 4}, "back": {10, 4}, "busy": {0, 4}}
	sites := []string{"old", "old2", "other", "short", "back", "busy"}
	standing := map[string]Standing{
		"old": {4, 9}, "old2": {4, 30}, "busy": {4, 12},
		"other": {3, 20}, // it was in another regime
		"short": {4, 6},  // too short to have been reported
		"back":  {4, 20}, // it left and came back in this run
	}
	for _, w := range []string{"w1", "w2", "w3", "w4"} {
		sites, after[w], standing[w] = append(sites, w), [2]int{0, 3}, Standing{3, 7}
	}
	in := Input{
		Windows:  fleetOf(sites, after, map[string]int{"busy": 5}),
		Status:   status,
		Switches: []timeline.Switch{{Site: "back", Time: at(10), From: 1, To: 4, Confidence: 0.9}},
		Standing: standing,
	}
	// A site with two windows in this dump, both in the fault regime it
	// held for six windows before: a stay of eight windows, news now.
	standing["brief"] = Standing{4, 6}
	for d := 26; d < 28; d++ {
		in.Windows = append(in.Windows, features.Window{Site: "brief", Start: at(d), End: at(d + 1), Regime: 4})
	}
	rows := Rank(in, DefaultConfig())
	type want struct {
		kind  string
		level Level
		sites string
	}
	// The still row of the watch regime has fewer sites, but the fault
	// regime's comes first.
	wants := []want{{"site", Fault, "back"}, {"site", Stay, "brief"}, {"site", Stay, "other"}, {"site", Stay, "short"}, {"site", Unfamiliar, "busy"},
		{"regime", Still, "busy,old,old2"}, {"regime", Still, "w1,w2,w3,w4"}}
	if len(rows) != len(wants) {
		t.Fatalf("%d rows, want %d: %+v", len(rows), len(wants), rows)
	}
	for i, w := range wants {
		r := rows[i]
		if r.Kind() != w.kind || r.Level != w.level || strings.Join(r.Sites, ",") != w.sites {
			t.Errorf("row %d: %s %s %v, want %s %s %s", i, r.Kind(), r.Level, r.Sites, w.kind, w.level, w.sites)
		}
	}
	if r := rows[1]; !containsAll(r.Reason, "8 windows in a row in fault regime 4", "6 of them before this dump") {
		t.Errorf("brief's reason %q", r.Reason)
	}
	if r := rows[5]; r.To != 4 || !containsAll(r.Reason, "3 site(s) still in fault regime 4", "busy, old, old2") {
		t.Errorf("still row: regime %d, reason %q", r.To, r.Reason)
	}
	if r := rows[4]; !containsAll(r.Reason, "unfamiliar", "still in fault regime 4, as an earlier run reported") {
		t.Errorf("busy's row does not say its stay goes on: %q", r.Reason)
	}
}
