package kinmap

import (
	"cmp"
	"reflect"
	"slices"
	"testing"
	"time"

	"github.com/kinmap/kinmap/attention"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/history"
)

// standing counts, by site, the windows of the last regime run in the
// history before the site's first window of this run; windows of the
// history that this run covers again, and sites absent now, do not count.
func TestStanding(t *testing.T) {
	day := func(d int) time.Time { return time.Date(2026, 3, 2+d, 0, 0, 0, 0, time.UTC) }
	var past []history.Window
	add := func(site string, from int, regimes ...int) {
		for i, r := range regimes {
			past = append(past, history.Window{Site: site, Start: day(from + i), Regime: r})
		}
	}
	add("a", 0, 1, 1, 4, 4, 4, 4, 9) // day 6 is covered again by this run
	add("b", 0, 4, 4, 1)             // ends in regime 1
	add("gone", 0, 4, 4, 4)          // not in this run
	ws := []features.Window{{Site: "a", Start: day(6)}, {Site: "a", Start: day(7)}, {Site: "b", Start: day(3)}}
	want := map[string]attention.Standing{"a": {Regime: 4, Windows: 4}, "b": {Regime: 1, Windows: 1}}
	if got := standing(past, ws); !reflect.DeepEqual(got, want) {
		t.Errorf("standing = %v, want %v", got, want)
	}
}

// The work list's thresholds come from the options; a long stay defaults
// to a week of windows.
func TestAttentionConfig(t *testing.T) {
	tab := &features.Table{Config: features.Config{Window: 24 * time.Hour}}
	o := DefaultOptions()
	if c := attentionConfig(&o, tab); c.LongStay != 7 {
		t.Errorf("default long stay %d windows of a day, want 7", c.LongStay)
	}
	o.WorkList = attention.Config{LongStay: 3, MinConfidence: 0.8, FleetAlpha: 0.01}
	if c := attentionConfig(&o, tab); c.LongStay != 3 || c.MinConfidence != 0.8 || c.FleetAlpha != 0.01 {
		t.Errorf("config %+v does not carry the options %+v", c, o.WorkList)
	}
}

// against compares a regional dump with the previous week: the other
// region's sites, whose windows of this week the history holds from their
// own dump, have not gone silent; a site the history never held is new; a
// site absent last week but seen before came back.
func TestAgainstRegionalDump(t *testing.T) {
	day := func(d int) time.Time { return time.Date(2026, 3, 2+d, 0, 0, 0, 0, time.UTC) }
	var hist []history.Window
	add := func(site string, from, to int) {
		for d := from; d < to; d++ {
			hist = append(hist, history.Window{Site: site, Start: day(d), End: day(d + 1), Regime: 1})
		}
	}
	add("north-1", 0, 14) // both weeks, the second from the north's dump
	add("north-2", 0, 7)  // last week only: silent now
	add("south-1", 0, 7)
	add("south-2", -7, -4) // seen before last week, not in it
	slices.SortFunc(hist, func(a, b history.Window) int {
		return cmp.Or(cmp.Compare(a.Site, b.Site), a.Start.Compare(b.Start))
	})
	var ws []features.Window
	for _, site := range []string{"south-1", "south-2", "south-3"} {
		for d := 7; d < 14; d++ {
			ws = append(ws, features.Window{Site: site, Start: day(d), End: day(d + 1), Regime: 1})
		}
	}
	c := against(&past{windows: hist}, ws)
	if c == nil {
		t.Fatal("no comparison")
	}
	if !slices.Equal(c.Silent, []string{"north-2"}) || !slices.Equal(c.Back, []string{"south-2"}) || !slices.Equal(c.New, []string{"south-3"}) {
		t.Errorf("went silent %v, came back %v, new %v; want [north-2], [south-2], [south-3]", c.Silent, c.Back, c.New)
	}
}
