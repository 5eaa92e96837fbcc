package ingest

import (
	"math"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/parquet/file"
)

// annotations lists the logical type of each column of a Parquet file as
// arrow-go's own Parquet reader sees it, to make sure a test file carries
// the annotation the test is about.
func annotations(t *testing.T, path string) map[string]string {
	t.Helper()
	r, err := file.OpenParquetFile(path, false)
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	sc := r.MetaData().Schema
	out := map[string]string{}
	for i := 0; i < sc.NumColumns(); i++ {
		out[sc.Column(i).Name()] = sc.Column(i).LogicalType().String()
	}
	return out
}

func wantAnnotation(t *testing.T, got map[string]string, column, want string) {
	t.Helper()
	if got[column] != want {
		t.Fatalf("column %s is annotated %q, the test needs %q", column, got[column], want)
	}
}

// TestParquetIntegerAndStringTypes reads INT(bitWidth, isSigned) and STRING
// columns written by arrow-go (package parquettest) as LogicalTypes.md
// defines them: INT(32, false) and INT(64, false) hold unsigned values in
// the bits of int32 and int64 ("Integer types", unsigned values must not be
// read as negative); STRING is UTF-8.
func TestParquetIntegerAndStringTypes(t *testing.T) {
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "site", Type: arrow.BinaryTypes.String},
		{Name: "time", Type: &arrow.TimestampType{Unit: arrow.Millisecond, TimeZone: "UTC"}},
		{Name: "i8", Type: arrow.PrimitiveTypes.Int8},
		{Name: "u16", Type: arrow.PrimitiveTypes.Uint16},
		{Name: "u32", Type: arrow.PrimitiveTypes.Uint32},
		{Name: "u64", Type: arrow.PrimitiveTypes.Uint64},
		{Name: "i64", Type: arrow.PrimitiveTypes.Int64},
	}, nil)
	rows := [][]any{
		{"Zürich-東京", 0, -128, 65535, math.MaxUint32, uint64(math.MaxUint64), math.MinInt64},
		{"Zürich-東京", 1000, 127, 0, 2147483648, uint64(1 << 63), math.MaxInt64},
	}
	rec := record(t, schema, rows)
	defer rec.Release()
	for _, dict := range []bool{false, true} {
		path := writeArrowParquet(t, "ints.parquet", rec, 10, dict)
		ann := annotations(t, path)
		wantAnnotation(t, ann, "site", "String")
		wantAnnotation(t, ann, "i8", "Int(bitWidth=8, isSigned=true)")
		wantAnnotation(t, ann, "u16", "Int(bitWidth=16, isSigned=false)")
		wantAnnotation(t, ann, "u32", "Int(bitWidth=32, isSigned=false)")
		wantAnnotation(t, ann, "u64", "Int(bitWidth=64, isSigned=false)")
		ds := mustRead(t, []string{path}, nil)
		want := map[string][]float64{
			"i8":  {-128, 127},
			"u16": {65535, 0},
			"u32": {4294967295, 2147483648},
			"u64": {18446744073709551615, 9223372036854775808},
			"i64": {-9223372036854775808, 9223372036854775807},
		}
		for ch, vals := range want {
			ser := seriesOf(t, ds, "Zürich-東京", ch)
			if len(ser.Values) != 2 || ser.Values[0] != vals[0] || ser.Values[1] != vals[1] {
				t.Errorf("dictionary %v: %s read as %v, want %v", dict, ch, ser.Values, vals)
			}
		}
	}
}

// TestParquetIntegerSiteIDs reads integer site ids of signed and unsigned
// widths as their decimal forms.
func TestParquetIntegerSiteIDs(t *testing.T) {
	for _, tt := range []struct {
		typ  arrow.DataType
		id   any
		want string
	}{
		{arrow.PrimitiveTypes.Int8, -5, "-5"},
		{arrow.PrimitiveTypes.Uint32, math.MaxUint32, "4294967295"},
		{arrow.PrimitiveTypes.Uint64, uint64(math.MaxUint64), "18446744073709551615"},
		{arrow.PrimitiveTypes.Int64, math.MinInt64, "-9223372036854775808"},
	} {
		schema := arrow.NewSchema([]arrow.Field{
			{Name: "site", Type: tt.typ},
			{Name: "time", Type: arrow.PrimitiveTypes.Int64},
			{Name: "v", Type: arrow.PrimitiveTypes.Float64},
		}, nil)
		rec := record(t, schema, [][]any{{tt.id, 1, 1.0}})
		ds := mustRead(t, []string{writeArrowParquet(t, "ids.parquet", rec, 10, true)}, nil)
		rec.Release()
		if len(ds.Sites) != 1 || ds.Sites[0].ID != tt.want {
			t.Errorf("%s site id %v read as %q, want %q", tt.typ, tt.id, ds.Sites[0].ID, tt.want)
		}
	}
}

// TestParquetTimeTypes reads TIMESTAMP with isAdjustedToUTC true and false
// and DATE as LogicalTypes.md defines them: a timestamp counts units since
// the Unix epoch (1970-01-01T00:00:00, UTC when adjusted, local wall-clock
// time otherwise, which is read as UTC and flagged); a DATE counts days
// from the Unix epoch, 1 January 1970.
func TestParquetTimeTypes(t *testing.T) {
	tests := []struct {
		name       string
		typ        arrow.DataType
		annotation string
		raw        []any
		want       []string // RFC 3339, by hand
		naive      bool
	}{
		{"timestamp ms utc", &arrow.TimestampType{Unit: arrow.Millisecond, TimeZone: "UTC"},
			"Timestamp(isAdjustedToUTC=true, timeUnit=milliseconds, is_from_converted_type=false, force_set_converted_type=false)",
			[]any{int64(1_700_000_000_123), -1}, []string{"2023-11-14T22:13:20.123Z", "1969-12-31T23:59:59.999Z"}, false},
		{"timestamp us local", &arrow.TimestampType{Unit: arrow.Microsecond},
			"Timestamp(isAdjustedToUTC=false, timeUnit=microseconds, is_from_converted_type=false, force_set_converted_type=false)",
			[]any{int64(1_700_000_000_000_001)}, []string{"2023-11-14T22:13:20.000001Z"}, true},
		{"timestamp ns utc", &arrow.TimestampType{Unit: arrow.Nanosecond, TimeZone: "Europe/Berlin"},
			"Timestamp(isAdjustedToUTC=true, timeUnit=nanoseconds, is_from_converted_type=false, force_set_converted_type=false)",
			[]any{int64(-1)}, []string{"1969-12-31T23:59:59.999999999Z"}, false},
		{"date", arrow.FixedWidthTypes.Date32, "Date",
			[]any{19723, 0, -1, 11016}, []string{"2024-01-01T00:00:00Z", "1970-01-01T00:00:00Z", "1969-12-31T00:00:00Z", "2000-02-29T00:00:00Z"}, true},
	}
	for _, tt := range tests {
		schema := arrow.NewSchema([]arrow.Field{
			{Name: "site", Type: arrow.BinaryTypes.String},
			{Name: "time", Type: tt.typ},
			{Name: "v", Type: arrow.PrimitiveTypes.Float64},
		}, nil)
		var rows [][]any
		for i, raw := range tt.raw {
			rows = append(rows, []any{"S", raw, float64(i)})
		}
		rec := record(t, schema, rows)
		path := writeArrowParquet(t, "times.parquet", rec, 10, false)
		rec.Release()
		wantAnnotation(t, annotations(t, path), "time", tt.annotation)
		ds := mustRead(t, []string{path}, nil)
		ser := seriesOf(t, ds, "S", "v")
		for k, v := range ser.Values {
			want := mustTime(t, tt.want[int(v)]).UnixNano()
			if ser.Times[k] != want {
				t.Errorf("%s: %v read as %s, want %s", tt.name, tt.raw[int(v)],
					time.Unix(0, ser.Times[k]).UTC().Format(time.RFC3339Nano), tt.want[int(v)])
			}
		}
		if len(ser.Values) != len(tt.raw) || ds.Summary.NaiveTime != tt.naive {
			t.Errorf("%s: %d readings, naive %v; want %d, %v", tt.name, len(ser.Values), ds.Summary.NaiveTime, len(tt.raw), tt.naive)
		}
	}
}
