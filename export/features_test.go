package export

import (
	"bytes"
	"context"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
	"github.com/apache/arrow-go/v18/parquet/schema"

	"github.com/kinmap/kinmap/features"
)

// features.parquet read back with arrow-go's own Parquet reader (pqarrow,
// independent of parquet-go): the columns in order with the types of the
// Parquet format's logical types (TIMESTAMP(MICROS, isAdjustedToUTC=true),
// STRING, optional DOUBLE), and the values, with NaN and unlocated
// positions as nulls.
func TestWriteFeaturesReadsBackWithArrow(t *testing.T) {
	start := time.Date(2024, 2, 5, 0, 0, 0, 0, time.UTC)
	tab := &features.Table{
		Names: []string{"flow.mean", "flow~temp.corr"},
		Windows: []features.Window{
			{Site: "P-1", Start: start, End: start.Add(24 * time.Hour), Lat: 52.5, Lon: -1.25, Located: true, Values: []float64{3.5, math.NaN()}},
			{Site: "P-2", Start: start.Add(24 * time.Hour), End: start.Add(48 * time.Hour), Values: []float64{-0.125, 0.75}},
		},
	}
	var buf bytes.Buffer
	if err := writeFeatures(&buf, tab); err != nil {
		t.Fatal(err)
	}

	pf, err := file.NewParquetReader(bytes.NewReader(buf.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	wantCols := []string{"site", "window_start", "window_end", "lat", "lon", "flow.mean", "flow~temp.corr"}
	sch := pf.MetaData().Schema
	if sch.NumColumns() != len(wantCols) {
		t.Fatalf("%d columns, want %d", sch.NumColumns(), len(wantCols))
	}
	for i, name := range wantCols {
		col := sch.Column(i)
		if col.Name() != name {
			t.Errorf("column %d is %q, want %q", i, col.Name(), name)
		}
		if i == 1 || i == 2 {
			ts, ok := col.LogicalType().(schema.TimestampLogicalType)
			if !ok || !ts.IsAdjustedToUTC() || ts.TimeUnit() != schema.TimeUnitMicros {
				t.Errorf("column %q has logical type %v, want TIMESTAMP(MICROS, UTC)", name, col.LogicalType())
			}
		}
	}

	tbl, err := pqarrow.ReadTable(context.Background(), bytes.NewReader(buf.Bytes()), nil, pqarrow.ArrowReadProperties{}, memory.DefaultAllocator)
	if err != nil {
		t.Fatal(err)
	}
	defer tbl.Release()
	if tbl.NumRows() != 2 {
		t.Fatalf("%d rows, want 2", tbl.NumRows())
	}
	column := func(i int) arrow.Array {
		chunks := tbl.Column(i).Data().Chunks()
		if len(chunks) != 1 {
			t.Fatalf("column %d: %d chunks", i, len(chunks))
		}
		return chunks[0]
	}
	if s := column(0).(*array.String); s.Value(0) != "P-1" || s.Value(1) != "P-2" {
		t.Errorf("site = %v", s)
	}
	for i, want := range []time.Time{start, start.Add(24 * time.Hour)} {
		ts := column(1).(*array.Timestamp)
		unit := ts.DataType().(*arrow.TimestampType)
		if got := ts.Value(i).ToTime(unit.Unit); !got.Equal(want) || unit.TimeZone != "UTC" {
			t.Errorf("window_start[%d] = %v (zone %q), want %v UTC", i, got, unit.TimeZone, want)
		}
		if got := column(2).(*array.Timestamp).Value(i).ToTime(unit.Unit); !got.Equal(want.Add(24 * time.Hour)) {
			t.Errorf("window_end[%d] = %v", i, got)
		}
	}
	type cell struct {
		col, row int
		null     bool
		want     float64
	}
	for _, c := range []cell{
		{3, 0, false, 52.5}, {4, 0, false, -1.25}, {3, 1, true, 0}, {4, 1, true, 0},
		{5, 0, false, 3.5}, {5, 1, false, -0.125}, {6, 0, true, 0}, {6, 1, false, 0.75},
	} {
		f := column(c.col).(*array.Float64)
		if f.IsNull(c.row) != c.null || !c.null && f.Value(c.row) != c.want {
			t.Errorf("%s[%d] = %v (null %v), want %v (null %v)", wantCols[c.col], c.row, f.Value(c.row), f.IsNull(c.row), c.want, c.null)
		}
	}
}

func TestWriteFeaturesErrors(t *testing.T) {
	bad := []*features.Table{
		{Names: []string{"a,b.mean"}},
		{Names: []string{"a.mean"}, Windows: []features.Window{{Site: "x", Values: []float64{1, 2}}}},
	}
	for _, tab := range bad {
		if err := writeFeatures(&bytes.Buffer{}, tab); err == nil || !strings.HasPrefix(err.Error(), "export: features.parquet: ") {
			t.Errorf("%v: error %v", tab.Names, err)
		}
	}
}
