package kinmap_test

import (
	"maps"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/attention"
	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/scenarios"
)

// shares counts the windows of entries by regime, as shares.
func shares(entries []features.Window) map[int]float64 {
	out := map[int]float64{}
	for _, e := range entries {
		out[e.Regime] += 1 / float64(len(entries))
	}
	return out
}

// lastRegime is each site's regime at its last window.
func lastRegime(entries []features.Window) map[string]int {
	out := map[string]int{}
	for _, e := range entries {
		out[e.Site] = e.Regime
	}
	return out
}

// Three weekly dumps through a history, one site missing from the second:
// each run is compared with the week before it (regime shares then and
// now, sites in another regime, the site that went silent, then came
// back), and the data health names the site the history knows and the
// dump lacks. Assigning the first week again reports its switches as
// revisions, never as news.
func TestAgainstPreviousWeek(t *testing.T) {
	fleet := fleetT(t, 60, 3)
	dir := t.TempDir()
	hist := filepath.Join(dir, "history")
	gone := fleet.Sites[3].ID
	without := *fleet
	without.Sites = slices.DeleteFunc(slices.Clone(fleet.Sites), func(s *scenarios.Site) bool { return s.ID == gone })
	week := func(k int, f *scenarios.Fleet) string {
		path := filepath.Join(dir, "week"+string(rune('1'+k))+".csv")
		writeDump(t, path, f, fleet.WindowStart(7*k), fleet.WindowStart(7*k+7), 0, 0, uint64(k+1))
		return path
	}
	w1, w2, w3 := week(0, fleet), week(1, &without), week(2, fleet)
	all := filepath.Join(dir, "all.csv")
	writeDump(t, all, fleet, fleet.WindowStart(0), fleet.WindowStart(21), 0, 0, 9)
	trained, err := kinmap.Train(options(all))
	if err != nil {
		t.Fatal(err)
	}
	assign := func(data string) *kinmap.Result {
		t.Helper()
		o := options(data)
		o.History = hist
		res, err := kinmap.Assign(o, trained.Model)
		if err != nil {
			t.Fatal(err)
		}
		return res
	}
	first := assign(w1)
	if first.Against != nil {
		t.Errorf("a first run against an empty history compares with %+v", first.Against)
	}
	if err := first.Save(kinmap.Targets{History: hist}); err != nil {
		t.Fatal(err)
	}

	// Week 1 again: the history reported its switches already.
	again := assign(w1)
	news := 0
	for _, r := range again.Attention {
		if r.News() == "new" {
			news++
			t.Errorf("week 1 assigned again: %s is news: %s", r.Site, r.Reason)
		}
	}
	t.Logf("%d regimes; week 1: %d switches; assigned again: %d rows, %d of them news", len(trained.Model.Regimes), len(first.Switches), len(again.Attention), news)
	if len(first.Switches) == 0 {
		t.Error("week 1 has no switch to report twice")
	}
	for _, sw := range again.Switches {
		i := slices.IndexFunc(again.Attention, func(r attention.Row) bool { return r.Site == sw.Site })
		if i < 0 || !strings.Contains(again.Attention[i].Reason, "revises an earlier report") {
			t.Errorf("week 1 again: the switch of %s on %s is not marked a revision", sw.Site, sw.Time)
		}
	}

	second := assign(w2)
	if err := second.Save(kinmap.Targets{History: hist}); err != nil {
		t.Fatal(err)
	}
	c := second.Against
	if c == nil {
		t.Fatal("no comparison with the previous week")
	}
	if !c.To.Equal(fleet.WindowStart(7)) || !c.From.Equal(fleet.WindowStart(0)) {
		t.Errorf("previous period %s to %s, want week 1", c.From, c.To)
	}
	checkShares(t, "then", c.Then, shares(first.Table.Windows))
	checkShares(t, "now", c.Now, shares(second.Table.Windows))
	then, now := lastRegime(first.Table.Windows), lastRegime(second.Table.Windows)
	var changed []export.RegimeMove
	for _, s := range slices.Sorted(maps.Keys(then)) {
		if r, ok := now[s]; ok && r != then[s] {
			changed = append(changed, export.RegimeMove{Site: s, Then: then[s], Now: r})
		}
	}
	if !slices.Equal(c.Changed, changed) {
		t.Errorf("changed regime %v, want %v", c.Changed, changed)
	}
	if !slices.Equal(c.Silent, []string{gone}) || len(c.Back) != 0 {
		t.Errorf("went silent %v and came back %v, want [%s] and none", c.Silent, c.Back, gone)
	}
	if !slices.ContainsFunc(second.Health, func(f export.Finding) bool { return f.Kind == export.HealthSilent && f.Site == gone }) {
		t.Errorf("the data health does not name %s, which the history holds and the dump lacks", gone)
	}

	third := assign(w3)
	if c := third.Against; c == nil || !slices.Equal(c.Back, []string{gone}) || len(c.Silent) != 0 {
		t.Errorf("week 3: %+v, want %s back and no site silent", c, gone)
	}
}

func checkShares(t *testing.T, what string, got, want map[int]float64) {
	t.Helper()
	for _, id := range slices.Sorted(maps.Keys(want)) {
		if d := got[id] - want[id]; d > 1e-12 || d < -1e-12 {
			t.Errorf("share %s of regime %d: %g, want %g", what, id, got[id], want[id])
		}
	}
	if len(got) != len(want) {
		t.Errorf("shares %s: %v, want %v", what, got, want)
	}
}
