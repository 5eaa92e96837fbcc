package ingest

import (
	"fmt"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
)

// rfc3339Cases are date-times written by hand to the grammar of RFC 3339
// §5.6; the first three are the examples of §5.8. The instant each stands
// for is taken from the standard library's parser, not from this package.
// Each is listed under the coarsest unit that holds it exactly.
var rfc3339Cases = map[string][]string{
	"s": {
		"1996-12-19T16:39:57-08:00", // RFC 3339 §5.8
		"1970-01-01T00:00:00Z",
		"1969-12-31T23:59:59Z",
		"2038-01-19T03:14:08+00:00", // one second past the int32 epoch range
	},
	"ms": {
		"1985-04-12T23:20:50.52Z",      // RFC 3339 §5.8
		"1937-01-01T12:00:27.87+00:20", // RFC 3339 §5.8
		"2024-02-29T23:59:59.999+05:30",
	},
	"us": {
		"2001-09-09T01:46:40.000001Z",
		"1900-03-01T00:00:00.123456-11:45",
	},
	"ns": {
		"2262-04-11T23:47:16.854775807Z", // the last instant of int64 nanoseconds
		"1969-12-31T23:59:59.999999999Z",
	},
}

var arrowUnits = map[string]arrow.TimeUnit{"s": arrow.Second, "ms": arrow.Millisecond, "us": arrow.Microsecond, "ns": arrow.Nanosecond}

// TestTimestampUnits checks that integer times of every unit, as Arrow and
// Parquet timestamps and as epochs in Parquet and CSV, and the RFC 3339
// strings themselves in CSV, map to the instants the strings denote
// (RFC 3339 §5.6, read by time.Parse).
func TestTimestampUnits(t *testing.T) {
	for _, unit := range []string{"s", "ms", "us", "ns"} {
		cases := rfc3339Cases[unit]
		want := make([]int64, len(cases))
		epochs := make([]int64, len(cases))
		var tsRows, epochRows [][]any
		var csvEpochs, csvStrings strings.Builder
		csvEpochs.WriteString("site,time,channel,value\n")
		csvStrings.WriteString("site,time,channel,value\n")
		perUnit, _ := unitNanos(unit)
		for i, s := range cases {
			want[i] = mustTime(t, s).UnixNano()
			if want[i]%perUnit != 0 {
				t.Fatalf("%s is not a whole number of %s", s, unit)
			}
			epochs[i] = want[i] / perUnit
			tsRows = append(tsRows, []any{"S", epochs[i], "c", float64(i)})
			epochRows = append(epochRows, []any{"S", epochs[i], "c", float64(i)})
			fmt.Fprintf(&csvEpochs, "S,%d,c,%d\n", epochs[i], i)
			fmt.Fprintf(&csvStrings, "S,%s,c,%d\n", s, i)
		}
		tsSchema := arrow.NewSchema([]arrow.Field{
			{Name: "site", Type: arrow.BinaryTypes.String},
			{Name: "time", Type: &arrow.TimestampType{Unit: arrowUnits[unit], TimeZone: "UTC"}},
			{Name: "channel", Type: arrow.BinaryTypes.String},
			{Name: "value", Type: arrow.PrimitiveTypes.Float64},
		}, nil)
		epochSchema := arrow.NewSchema([]arrow.Field{
			{Name: "site", Type: arrow.BinaryTypes.String},
			{Name: "time", Type: arrow.PrimitiveTypes.Int64},
			{Name: "channel", Type: arrow.BinaryTypes.String},
			{Name: "value", Type: arrow.PrimitiveTypes.Float64},
		}, nil)
		ts := record(t, tsSchema, tsRows)
		ep := record(t, epochSchema, epochRows)
		files := map[string]string{
			"arrow timestamp":     writeArrowIPC(t, "ts.arrow", false, ts),
			"parquet timestamp":   writeArrowParquet(t, "ts.parquet", ts, 100, false),
			"parquet int64 epoch": writeArrowParquet(t, "epoch.parquet", ep, 100, true),
			"arrow int64 epoch":   writeArrowIPC(t, "epoch.arrows", true, ep),
			"csv integer epoch":   writeFile(t, "epoch.csv", []byte(csvEpochs.String())),
			"csv rfc 3339":        writeFile(t, "rfc.csv", []byte(csvStrings.String())),
		}
		for name, path := range files {
			ds := mustRead(t, []string{path}, func(o *Options) { o.TimeUnit = unit })
			ser := seriesOf(t, ds, "S", "c")
			got := make(map[float64]int64)
			for k, v := range ser.Values {
				got[v] = ser.Times[k]
			}
			for i, s := range cases {
				if got[float64(i)] != want[i] {
					t.Errorf("%s, unit %s: %s read as %s, want %s", name, unit, s,
						time.Unix(0, got[float64(i)]).UTC().Format(time.RFC3339Nano),
						time.Unix(0, want[i]).UTC().Format(time.RFC3339Nano))
				}
			}
			if ds.Summary.NaiveTime {
				t.Errorf("%s, unit %s: times with zones reported naive", name, unit)
			}
		}
		ts.Release()
		ep.Release()
	}
}

// TestParseTime checks the date-time parser against the standard library
// on RFC 3339 forms (§5.6, including the NOTE allowing a space, 't' and
// 'z'), and on ISO 8601 extended forms without zone read as UTC.
func TestParseTime(t *testing.T) {
	tests := []struct {
		in    string
		ref   string // RFC 3339 form of the same instant, for time.Parse
		zoned bool
	}{
		{"1985-04-12T23:20:50.52Z", "1985-04-12T23:20:50.52Z", true},
		{"1996-12-19T16:39:57-08:00", "1996-12-19T16:39:57-08:00", true},
		{"1985-04-12t23:20:50.52z", "1985-04-12T23:20:50.52Z", true},
		{"1985-04-12 23:20:50.52Z", "1985-04-12T23:20:50.52Z", true},
		{"1996-12-19T16:39:57-0800", "1996-12-19T16:39:57-08:00", true},
		{"1996-12-19T16:39:57+05", "1996-12-19T16:39:57+05:00", true},
		{"2024-06-30T12:00:00.1234567891234Z", "2024-06-30T12:00:00.123456789Z", true},
		{"2024-06-30T12:00:00,5Z", "2024-06-30T12:00:00.5Z", true},
		{"2024-06-30T12:00:00", "2024-06-30T12:00:00Z", false},
		{"2024-06-30T12:00", "2024-06-30T12:00:00Z", false},
		{"2024-06-30", "2024-06-30T00:00:00Z", false},
		{"2000-02-29T00:00:00Z", "2000-02-29T00:00:00Z", true},
		// RFC 3339 §5.8 leap second; Unix time has none, so it is read as
		// the next second (common practice, no source).
		{"1990-12-31T23:59:60Z", "1991-01-01T00:00:00Z", true},
		{"1990-12-31T15:59:60-08:00", "1991-01-01T00:00:00Z", true},
	}
	for _, tt := range tests {
		ns, zoned, outcome := parseTime(tt.in)
		if outcome != parseOK || zoned != tt.zoned || ns != mustTime(t, tt.ref).UnixNano() {
			t.Errorf("parseTime(%q) = %d, %v, %d; want %d, %v", tt.in, ns, zoned, outcome, mustTime(t, tt.ref).UnixNano(), tt.zoned)
		}
	}
	bad := []string{"", "2024", "2024-06", "2024-6-30", "2024-13-01", "2024-02-30", "1900-02-29",
		"2024-06-30T", "2024-06-30T24:00:00Z", "2024-06-30T12:60", "2024-06-30T12:00:61Z",
		"2024-06-30T12:00:00.Z", "2024-06-30T12:00:00+24:00", "2024-06-30T12:00:00 Z",
		"2024-06-30T12:00:00Zjunk", "yesterday", "１９９０-01-01"}
	for _, s := range bad {
		if _, _, outcome := parseTime(s); outcome != parseBad {
			t.Errorf("parseTime(%q) = outcome %d, want parseBad", s, outcome)
		}
	}
	if _, _, outcome := parseTime("2262-04-11T23:47:16.854775808Z"); outcome != parseRange {
		t.Errorf("one nanosecond past the int64 range: outcome %d, want parseRange", outcome)
	}
}
