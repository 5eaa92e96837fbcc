package ingest

import (
	"errors"
	"maps"
	"testing"
)

// Duplicates are counted by site: of three readings of a site, channel and
// time, two lose to the last one read (RFC 4180 rows, in file order).
func TestSiteDuplicates(t *testing.T) {
	path := writeFile(t, "dups.csv", []byte("site,time,channel,value\n"+
		"a,2026-01-01T00:00:00Z,flow,1\na,2026-01-01T00:00:00Z,flow,2\na,2026-01-01T00:00:00Z,flow,3\n"+
		"a,2026-01-01T00:10:00Z,flow,4\nb,2026-01-01T00:00:00Z,flow,5\nb,2026-01-01T00:00:00Z,flow,6\n"+
		"c,2026-01-01T00:00:00Z,flow,7\n"))
	ds := mustRead(t, []string{path}, nil)
	want := map[string]int64{"a": 2, "b": 1}
	if !maps.Equal(ds.Summary.SiteDuplicates, want) || ds.Summary.Duplicates != 3 {
		t.Fatalf("duplicates by site %v (total %d), want %v (total 3)", ds.Summary.SiteDuplicates, ds.Summary.Duplicates, want)
	}
}

// A selected channel absent from the dump is refused, unless Absent lets
// it be, when it is listed in Summary.Absent.
func TestAbsentChannel(t *testing.T) {
	path := writeFile(t, "one.csv", []byte("site,time,channel,value\na,2026-01-01T00:00:00Z,flow,1\n"))
	o := DefaultOptions()
	o.Channels = []string{"flow", "vibration"}
	var e *Error
	if _, err := Read([]string{path}, o); !errors.As(err, &e) {
		t.Fatalf("a selected channel absent from the dump: error %v, want an *Error", err)
	}
	o.Absent = true
	ds, err := Read([]string{path}, o)
	if err != nil {
		t.Fatal(err)
	}
	if len(ds.Summary.Absent) != 1 || ds.Summary.Absent[0] != "vibration" || len(ds.Channels) != 1 {
		t.Fatalf("absent %v, channels %v; want [vibration] and [flow]", ds.Summary.Absent, ds.Channels)
	}
}

// The readings of a channel that the selection leaves out are counted by
// channel, so that every row of a dump is accounted for: kept, resolved as
// duplicates, dropped or unselected. A channel renamed since a model was
// trained shows here beside the model's channel missing from the dump.
func TestUnselectedChannels(t *testing.T) {
	long := writeFile(t, "long.csv", []byte("site,time,channel,value\n"+
		"a,2026-01-01T00:00:00Z,flow_rate,1\na,2026-01-01T00:10:00Z,flow_rate,\n"+
		"a,2026-01-01T00:00:00Z,vibration,3\nb,2026-01-01T00:00:00Z,pressure,4\n"))
	wide := writeFile(t, "wide.csv", []byte("site,time,flow_rate,vibration,pressure\n"+
		"a,2026-01-01T00:00:00Z,1,3,4\na,2026-01-01T00:10:00Z,,3,4\nb,2026-01-01T00:00:00Z,2,3,4\n"))
	for _, c := range []struct {
		path string
		want map[string]int64
	}{
		{long, map[string]int64{"flow_rate": 2, "pressure": 1}},
		{wide, map[string]int64{"flow_rate": 3, "pressure": 3}}, // cells, the blank one too
	} {
		ds := mustRead(t, []string{c.path}, func(o *Options) { o.Channels, o.Absent = []string{"flow", "vibration"}, true })
		if got := ds.Summary.Unselected; !maps.Equal(got, c.want) {
			t.Errorf("%s: unselected %v, want %v", c.path, got, c.want)
		}
		if ds := mustRead(t, []string{c.path}, nil); len(ds.Summary.Unselected) != 0 {
			t.Errorf("%s: unselected %v without a selection, want none", c.path, ds.Summary.Unselected)
		}
	}
}
