package ingest

import (
	"fmt"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/kinmap/kinmap/internal/parquettest"
)

// A wide dump's channels take the "unit" entry of their field metadata,
// written by arrow-go's own writers: Arrow IPC keeps field metadata in
// its schema (Schema.fbs, Field.custom_metadata) and Arrow's Parquet
// writer stores that schema in the key-value metadata ARROW:schema. A
// unit that is too long to be one is passed over, and a long dump's value
// column names no channel's unit.
func TestUnitsFromFieldMetadata(t *testing.T) {
	unit := func(u string) arrow.Metadata { return arrow.NewMetadata([]string{unitKey}, []string{u}) }
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "site", Type: arrow.BinaryTypes.String},
		{Name: "time", Type: &arrow.TimestampType{Unit: arrow.Second, TimeZone: "UTC"}},
		{Name: "flow", Type: arrow.PrimitiveTypes.Float64, Metadata: unit("m³/h")},
		{Name: "vibration", Type: arrow.PrimitiveTypes.Float32, Metadata: unit("mm/s")},
		{Name: "pressure", Type: arrow.PrimitiveTypes.Float64},
		{Name: "count", Type: arrow.PrimitiveTypes.Int64, Metadata: unit(strings.Repeat("x", maxUnitLen+1))},
	}, nil)
	rec := record(t, schema, [][]any{{"a", int64(1_780_000_000), 1.5, float32(0.5), 2.0, int64(3)}})
	defer rec.Release()
	want := "map[flow:m³/h vibration:mm/s]"
	for _, path := range []string{
		writeArrowIPC(t, "wide.arrow", false, rec),
		writeArrowIPC(t, "wide.arrows", true, rec),
		// pyarrow stores the schema by default, arrow-go when asked.
		writeArrowParquetWith(t, "wide.parquet", rec, parquettest.WriteOptions{RowGroup: 10, StoreSchema: true}),
	} {
		ds := mustRead(t, []string{path}, nil)
		if got := fmt.Sprint(ds.Summary.Units); got != want {
			t.Errorf("%s: units %s, want %s", path, got, want)
		}
	}

	long := arrow.NewSchema([]arrow.Field{
		{Name: "site", Type: arrow.BinaryTypes.String},
		{Name: "time", Type: &arrow.TimestampType{Unit: arrow.Second, TimeZone: "UTC"}},
		{Name: "channel", Type: arrow.BinaryTypes.String},
		{Name: "value", Type: arrow.PrimitiveTypes.Float64, Metadata: unit("bar")},
	}, nil)
	lrec := record(t, long, [][]any{{"a", int64(1_780_000_000), "pressure", 2.0}})
	defer lrec.Release()
	if ds := mustRead(t, []string{writeArrowParquetWith(t, "long.parquet", lrec, parquettest.WriteOptions{RowGroup: 10, StoreSchema: true})}, nil); ds.Summary.Units != nil {
		t.Errorf("long dump: units %v, want none", ds.Summary.Units)
	}
}
