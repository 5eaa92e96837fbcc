package features

import (
	"reflect"
	"testing"
	"time"
)

// Each site's windows, in table order (site, then start), form one
// sequence.
func TestSequences(t *testing.T) {
	tab := &Table{Windows: []Window{{Site: "a"}, {Site: "a"}, {Site: "b"}, {Site: "c"}, {Site: "c"}, {Site: "c"}}}
	want := [][]int{{0, 1}, {2}, {3, 4, 5}}
	if got := tab.Sequences(); !reflect.DeepEqual(got, want) {
		t.Errorf("%v, want %v", got, want)
	}
	if got := (&Table{}).Sequences(); got != nil {
		t.Errorf("no windows: %v, want none", got)
	}
}

// A week is 7 daily windows, 14 of 12 h, 1 weekly, and 3 of 3 days (rounded
// up); the stride counts, not the length.
func TestWeekRun(t *testing.T) {
	for _, tt := range []struct {
		window, stride time.Duration
		want           int
	}{
		{24 * time.Hour, 0, 7},
		{24 * time.Hour, 12 * time.Hour, 14},
		{7 * 24 * time.Hour, 0, 1},
		{72 * time.Hour, 0, 3},
		{time.Hour, 0, 168},
	} {
		tab := &Table{Config: Config{Window: tt.window, Stride: tt.stride}}
		if got := tab.WeekRun(); got != tt.want {
			t.Errorf("window %v, stride %v: %d, want %d", tt.window, tt.stride, got, tt.want)
		}
	}
}
