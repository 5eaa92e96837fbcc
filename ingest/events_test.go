package ingest

import (
	"bytes"
	"reflect"
	"strings"
	"testing"
	"time"

	"github.com/parquet-go/parquet-go"
)

// TestReadEvents reads the same records from CSV and from Parquet written
// by parquet-go (timestamps in microseconds adjusted to UTC, as the
// Parquet specification's TIMESTAMP logical type holds them).
func TestReadEvents(t *testing.T) {
	at := func(s string) time.Time { v, _ := time.Parse(time.RFC3339, s); return v.UTC() }
	want := []EventRow{
		{Site: "P1", Start: at("2026-03-10T06:00:00Z"), End: at("2026-03-10T06:00:00Z"), Point: true, Label: "bearing replaced", Note: "noisy", Where: "line 2"},
		{Site: "P2", Start: at("2026-03-01T00:00:00Z"), End: at("2026-03-03T12:00:00Z"), Label: "overhaul", Where: "line 3"},
	}
	csv := "site,start,end,label,note\n" +
		"P1,2026-03-10T07:00:00+01:00,,bearing replaced,noisy\n" +
		"P2,2026-03-01T00:00:00Z,2026-03-03T12:00:00Z,overhaul,\n"
	got, err := ReadEvents(writeFile(t, "events.csv", []byte(csv)), EventOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("CSV:\n got %+v\nwant %+v", got, want)
	}

	type row struct {
		Machine string    `parquet:"machine"`
		When    time.Time `parquet:"when,timestamp(microsecond)"`
		What    string    `parquet:"what"`
	}
	var b bytes.Buffer
	w := parquet.NewGenericWriter[row](&b)
	if _, err := w.Write([]row{{"P1", want[0].Start, "bearing replaced"}, {"P3", want[1].Start, "recalibrated"}}); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	got, err = ReadEvents(writeFile(t, "events.parquet", b.Bytes()), EventOptions{SiteCol: "machine", TimeCol: "when", LabelCol: "what"})
	if err != nil {
		t.Fatal(err)
	}
	wantPQ := []EventRow{
		{Site: "P1", Start: want[0].Start, End: want[0].Start, Point: true, Label: "bearing replaced", Where: "row 1"},
		{Site: "P3", Start: want[1].Start, End: want[1].Start, Point: true, Label: "recalibrated", Where: "row 2"},
	}
	if !reflect.DeepEqual(got, wantPQ) {
		t.Errorf("Parquet:\n got %+v\nwant %+v", got, wantPQ)
	}
}

func TestReadEventsErrors(t *testing.T) {
	tests := []struct{ name, csv, want string }{
		{"no time", "site,label\nP1,x\n", `column "time": no time column`},
		{"no label column", "site,time\nP1,2026-03-01T00:00:00Z\n", `column "label": no such column`},
		{"empty label", "site,time,label\nP1,2026-03-01T00:00:00Z,\n", `line 2: column "label": empty label`},
		{"ends before start", "site,start,end,label\nP1,2026-03-02T00:00:00Z,2026-03-01T00:00:00Z,x\n", `line 2: column "end": the event ends`},
		{"bad time", "site,time,label\nP1,yesterday,x\n", `line 2: column "time": cannot read "yesterday"`},
		{"blank time", "site,time,label\nP1,,x\n", `line 2: column "time": no time`},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := ReadEvents(writeFile(t, "events.csv", []byte(tc.csv)), EventOptions{})
			if err == nil || !strings.Contains(err.Error(), tc.want) || !strings.Contains(err.Error(), "events.csv") {
				t.Errorf("got %v, want an error naming the file and %q", err, tc.want)
			}
		})
	}
}
