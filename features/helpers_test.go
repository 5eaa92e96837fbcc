package features

import (
	"math"
	"slices"
	"testing"
	"time"

	"github.com/kinmap/kinmap/ingest"
)

// dataset builds a dataset from sites; the channel list is the union of the
// sites' channels.
func dataset(sites ...*ingest.SiteData) *ingest.Dataset {
	ds := &ingest.Dataset{Sites: sites}
	for _, s := range sites {
		for ch := range s.Series {
			if !slices.Contains(ds.Channels, ch) {
				ds.Channels = append(ds.Channels, ch)
			}
		}
	}
	slices.Sort(ds.Channels)
	return ds
}

// regular returns n readings every step from start, valued by f.
func regular(start time.Time, step time.Duration, n int, f func(t time.Time) float64) ingest.Series {
	var s ingest.Series
	for i := range n {
		t := start.Add(time.Duration(i) * step)
		s.Times = append(s.Times, t.UnixNano())
		s.Values = append(s.Values, f(t))
	}
	return s
}

// inWindow returns the readings of s inside w, found by a plain scan.
func inWindow(s ingest.Series, w Window) (times []int64, vals []float64) {
	for i, t := range s.Times {
		if t >= w.Start.UnixNano() && t < w.End.UnixNano() {
			times = append(times, t)
			vals = append(vals, s.Values[i])
		}
	}
	return times, vals
}

// value returns the named feature of w.
func value(t *testing.T, tab *Table, w Window, name string) float64 {
	t.Helper()
	j := slices.Index(tab.Names, name)
	if j < 0 {
		t.Fatalf("no feature %q in %v", name, tab.Names)
	}
	return w.Values[j]
}

// close reports whether got is within tol of want, relative to max(1, |want|);
// two NaN are close.
func near(got, want, tol float64) bool {
	if math.IsNaN(want) || math.IsNaN(got) {
		return math.IsNaN(want) && math.IsNaN(got)
	}
	return math.Abs(got-want) <= tol*math.Max(1, math.Abs(want))
}

// mustZone loads an IANA zone or fails the test.
func mustZone(t testing.TB, name string) *time.Location {
	t.Helper()
	loc, err := time.LoadLocation(name)
	if err != nil {
		t.Fatal(err)
	}
	return loc
}
