package scaleout

import (
	"bytes"
	"encoding/gob"
	"reflect"
	"slices"
	"testing"
	"time"

	"github.com/kinmap/kinmap/ingest"
)

// TestMergeSummaryEveryField merges the summaries of two dumps whose every
// field is set, and checks that the merged summary sets every field too,
// so that a field added to ingest.Summary without a rule here fails: the
// Beam path would otherwise drop what a local read reports (the readings
// of channels not read, the units, the absent channels, the epoch unit).
func TestMergeSummaryEveryField(t *testing.T) {
	at := time.Date(2026, 6, 1, 0, 0, 0, 0, time.UTC)
	one := ingest.Summary{
		Files: []ingest.FileSummary{{Path: "a.parquet", Format: "parquet", Rows: 10}}, Layout: "wide",
		Rows: 10, Readings: 8, Sites: 1, Channels: []string{"flow"}, Start: at, End: at.Add(time.Hour),
		Dropped: map[string]int64{ingest.DropNaN: 1}, SiteDropped: map[string]map[string]int64{"S1": {ingest.DropNaN: 1}},
		EpochUnit: &ingest.UnitError{Sample: 1, Given: "s", Likely: "ms"}, Duplicates: 1, SkippedColumns: []string{"note"},
		NaiveTime: true, Unregistered: []string{"S1"}, Absent: []string{"pressure", "speed"},
		Unselected: map[string]int64{"aux": 3}, SiteDuplicates: map[string]int64{"S1": 1}, SiteReadings: map[string]int64{"S1": 8},
		Units: map[string]string{"flow": "m3/h"},
	}
	for _, f := range reflect.VisibleFields(reflect.TypeFor[ingest.Summary]()) {
		if reflect.ValueOf(one).FieldByIndex(f.Index).IsZero() {
			t.Fatalf("the test's summary leaves %s unset: set it, and give mergeSummary a rule for it", f.Name)
		}
	}
	two := one
	two.Files = []ingest.FileSummary{{Path: "b.parquet", Format: "parquet", Rows: 5}}
	two.Absent = []string{"speed"}
	two.Unselected = map[string]int64{"aux": 2}
	two.Units = map[string]string{"flow": "l/s", "level": "m"}
	two.EpochUnit = nil
	var outs []fileOutcome
	for i, s := range []ingest.Summary{one, two} {
		var buf bytes.Buffer
		if err := gob.NewEncoder(&buf).Encode(s); err != nil {
			t.Fatal(err)
		}
		outs = append(outs, fileOutcome{Index: i, Summary: buf.Bytes()})
	}
	reg := &ingest.Register{}
	sites := []siteResult{{Site: "S1", Readings: 13, Duplicates: 2}}
	got, err := mergeSummary(outs, sites, reg)
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range reflect.VisibleFields(reflect.TypeFor[ingest.Summary]()) {
		if reflect.ValueOf(got).FieldByIndex(f.Index).IsZero() {
			t.Errorf("the merged summary leaves %s unset", f.Name)
		}
	}
	// As ingest.Read of both files: a channel is absent only when no file
	// holds it, unread readings add up, and the first file to give a
	// channel a unit gives it.
	if !slices.Equal(got.Absent, []string{"speed"}) {
		t.Errorf("absent channels %v, want [speed] (pressure is in b.parquet)", got.Absent)
	}
	if got.Unselected["aux"] != 5 {
		t.Errorf("%d unread readings of aux, want 5", got.Unselected["aux"])
	}
	if want := map[string]string{"flow": "m3/h", "level": "m"}; !reflect.DeepEqual(got.Units, want) {
		t.Errorf("units %v, want %v", got.Units, want)
	}
	if got.EpochUnit == nil || *got.EpochUnit != *one.EpochUnit {
		t.Errorf("epoch unit %v, want %v", got.EpochUnit, one.EpochUnit)
	}
}
