package features

import (
	"testing"
	"time"
)

func TestSpan(t *testing.T) {
	d := func(day int) time.Time { return time.Date(2026, 11, day, 0, 0, 0, 0, time.UTC) }
	cases := []struct {
		name        string
		ws          []Window
		first, last time.Time
	}{
		{"none", nil, time.Time{}, time.Time{}},
		{"one", []Window{{Start: d(2), End: d(3)}}, d(2), d(3)},
		// Sorted by site, then time: the earliest start and the latest end
		// may belong to different sites and neither to the first window.
		{"sites", []Window{{Site: "a", Start: d(5), End: d(6)}, {Site: "b", Start: d(1), End: d(2)}, {Site: "c", Start: d(3), End: d(9)}}, d(1), d(9)},
	}
	for _, c := range cases {
		first, last := Span(c.ws)
		if !first.Equal(c.first) || !last.Equal(c.last) {
			t.Errorf("%s: span %s to %s, want %s to %s", c.name, first, last, c.first, c.last)
		}
	}
}
