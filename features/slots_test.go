package features

import (
	"reflect"
	"testing"
	"time"
)

// Daily windows fall in one slot per day counted from the fleet's earliest
// start; a site starting its days less than half a stride later shares the
// slot, one starting more than half a stride later rounds to the next, and
// with a stride of 12 h a day holds two slots.
func TestSlots(t *testing.T) {
	day := 24 * time.Hour
	t0 := time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC)
	at := func(d time.Duration) time.Time { return t0.Add(d) }
	for _, tt := range []struct {
		name           string
		window, stride time.Duration
		starts         []time.Time
		want           []int
	}{
		{"daily", day, 0, []time.Time{at(0), at(day), at(2 * day), at(day), at(3 * day)}, []int{0, 1, 2, 1, 3}},
		{"later site", day, 0, []time.Time{at(0), at(day), at(6 * time.Hour), at(day + 11*time.Hour), at(13 * time.Hour)}, []int{0, 1, 0, 1, 1}},
		{"earliest not first", day, 0, []time.Time{at(2 * day), at(3 * day), at(0), at(day)}, []int{2, 3, 0, 1}},
		{"half-day stride", day, 12 * time.Hour, []time.Time{at(0), at(12 * time.Hour), at(day), at(36 * time.Hour)}, []int{0, 1, 2, 3}},
	} {
		tab := &Table{Config: Config{Window: tt.window, Stride: tt.stride}}
		for i, s := range tt.starts {
			tab.Windows = append(tab.Windows, Window{Site: string(rune('a' + i)), Start: s})
		}
		if got := tab.Slots(); !reflect.DeepEqual(got, tt.want) {
			t.Errorf("%s: %v, want %v", tt.name, got, tt.want)
		}
	}
	if got := (&Table{Config: Config{Window: day}}).Slots(); got != nil {
		t.Errorf("no windows: %v, want none", got)
	}
}
