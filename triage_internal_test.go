package kinmap

import (
	"reflect"
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
