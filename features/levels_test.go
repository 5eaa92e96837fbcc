package features

import (
	"math"
	"testing"
	"time"

	"github.com/kinmap/kinmap/ingest"
)

// A worked example, the quantiles by definition 7 of Hyndman & Fan
// (position (n−1)p in the sorted values, interpolated) worked by hand:
// overlapping windows count a reading once, a window's end is not in it,
// and windows without a group count nowhere, not even in the fleet.
func TestLevels(t *testing.T) {
	t0 := time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC)
	hour := func(h int) time.Time { return t0.Add(time.Duration(h) * time.Hour) }
	var a ingest.Series
	for h, v := range []float64{5, 1, 4, 2, 3, 9, 8, 7, 6, 0, 100} {
		a.Times = append(a.Times, hour(h).UnixNano())
		a.Values = append(a.Values, v)
	}
	b := ingest.Series{Times: []int64{hour(1).UnixNano()}, Values: []float64{-50}}
	ds := &ingest.Dataset{Channels: []string{"flow"}, Sites: []*ingest.SiteData{
		{ID: "A", Series: map[string]ingest.Series{"flow": a}},
		{ID: "B", Series: map[string]ingest.Series{"flow": b}},
	}}
	ws := []Window{
		{Site: "A", Start: hour(0), End: hour(4)},
		{Site: "A", Start: hour(2), End: hour(6)}, // overlaps the first
		{Site: "A", Start: hour(6), End: hour(10)},
		{Site: "B", Start: hour(0), End: hour(4)},
	}
	groups, all := Levels(ds, ws, []int{0, 0, 1, -1}, 2, []string{"flow", "pressure"})
	for _, tc := range []struct {
		name        string
		got         Level
		n           int
		median, p95 float64
	}{
		// Hours 0–5: 1 2 3 4 5 9; median (3+4)/2; p95 at 4.75: 5 + 0.75·4.
		{"group 0", groups[0][0], 6, 3.5, 8},
		// Hours 6–9: 0 6 7 8; median 6.5; p95 at 2.85: 7 + 0.85·1.
		{"group 1", groups[1][0], 4, 6.5, 7.85},
		// Hours 0–9: 0 … 9; median 4.5; p95 at 8.55.
		{"fleet", all[0], 10, 4.5, 8.55},
	} {
		if g := tc.got; g.Channel != "flow" || g.Readings != tc.n || math.Abs(g.Median-tc.median) > 1e-12 || math.Abs(g.P95-tc.p95) > 1e-12 {
			t.Errorf("%s: %+v, want %d readings, median %g, p95 %g", tc.name, g, tc.n, tc.median, tc.p95)
		}
	}
	if p := all[1]; p.Channel != "pressure" || p.Readings != 0 || !math.IsNaN(p.Median) || !math.IsNaN(p.P95) {
		t.Errorf("a channel without readings: %+v, want NaN levels", p)
	}
}
