package events

import (
	"slices"
	"testing"
	"time"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/ingest"
)

// day is midnight UTC of day d of March 2026.
func day(d int) time.Time { return time.Date(2026, 3, d, 0, 0, 0, 0, time.UTC) }

func TestMark(t *testing.T) {
	var ws []features.Window
	for _, site := range []string{"a", "b"} {
		for d := 1; d <= 20; d++ {
			ws = append(ws, features.Window{Site: site, Start: day(d), End: day(d + 1), Marked: "stale"})
		}
	}
	at := func(site string, d int) int {
		return slices.IndexFunc(ws, func(w features.Window) bool { return w.Site == site && w.Start.Equal(day(d)) })
	}
	sp := Span{Before: 3 * 24 * time.Hour}
	tests := []struct {
		name    string
		evs     []ingest.EventRow
		marked  map[int]string
		unknown []string
	}{
		{
			name: "point marks the days before it, not its own",
			evs:  []ingest.EventRow{{Site: "a", Start: day(10), End: day(10), Point: true, Label: "failure"}},
			// [7th, 10th): the windows of the 7th, 8th and 9th.
			marked: map[int]string{at("a", 7): "failure", at("a", 8): "failure", at("a", 9): "failure"},
		},
		{
			name:   "point within a day marks the window it falls in",
			evs:    []ingest.EventRow{{Site: "b", Start: day(10).Add(12 * time.Hour), End: day(10).Add(12 * time.Hour), Point: true, Label: "f"}},
			marked: map[int]string{at("b", 7): "f", at("b", 8): "f", at("b", 9): "f", at("b", 10): "f"},
		},
		{
			name:   "interval marks what it overlaps",
			evs:    []ingest.EventRow{{Site: "a", Start: day(3).Add(time.Hour), End: day(5), Label: "overhaul"}},
			marked: map[int]string{at("a", 3): "overhaul", at("a", 4): "overhaul"},
		},
		{
			name:   "instant interval marks the window holding it",
			evs:    []ingest.EventRow{{Site: "a", Start: day(3), End: day(3), Label: "check"}},
			marked: map[int]string{at("a", 3): "check"},
		},
		{
			name: "nearest event wins an overlap",
			evs: []ingest.EventRow{
				{Site: "a", Start: day(10), End: day(10), Point: true, Label: "late"},
				{Site: "a", Start: day(8), End: day(8), Point: true, Label: "early"},
			},
			// early marks 5,6,7; late 7,8,9: the 7th ends on the 8th, at early's time.
			marked: map[int]string{at("a", 5): "early", at("a", 6): "early", at("a", 7): "early", at("a", 8): "late", at("a", 9): "late"},
		},
		{
			name:    "unknown sites listed",
			evs:     []ingest.EventRow{{Site: "z", Start: day(3), End: day(3), Point: true, Label: "x"}, {Site: "y", Start: day(3), End: day(3), Point: true, Label: "x"}, {Site: "z", Start: day(4), End: day(4), Point: true, Label: "x"}},
			marked:  map[int]string{},
			unknown: []string{"y", "z"},
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			m := Mark(ws, tc.evs, sp)
			for i, w := range ws {
				if w.Marked != tc.marked[i] {
					t.Errorf("window %s %s: label %q, want %q", w.Site, w.Start.Format(time.DateOnly), w.Marked, tc.marked[i])
				}
			}
			if !slices.Equal(m.Unknown, tc.unknown) {
				t.Errorf("unknown sites %q, want %q", m.Unknown, tc.unknown)
			}
		})
	}
}
