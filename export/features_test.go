package export

import (
	"bytes"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/schema"

	"github.com/kinmap/kinmap/features"
)

// features.parquet read back with arrow-go's own Parquet reader (parquettest,
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

	cols := parquetColumns(t, buf.Bytes())
	column := func(i int) []any {
		if len(cols[i].Values) != 2 {
			t.Fatalf("column %d: %d rows, want 2", i, len(cols[i].Values))
		}
		return cols[i].Values
	}
	if s := column(0); s[0] != "P-1" || s[1] != "P-2" {
		t.Errorf("site = %v", s)
	}
	for i, want := range []time.Time{start, start.Add(24 * time.Hour)} {
		if got, ok := column(1)[i].(time.Time); !ok || !got.Equal(want) {
			t.Errorf("window_start[%d] = %v, want %v", i, column(1)[i], want)
		}
		if got, ok := column(2)[i].(time.Time); !ok || !got.Equal(want.Add(24*time.Hour)) {
			t.Errorf("window_end[%d] = %v", i, column(2)[i])
		}
	}
	type cell struct {
		col, row int
		want     any // nil for a null
	}
	for _, c := range []cell{
		{3, 0, 52.5}, {4, 0, -1.25}, {3, 1, nil}, {4, 1, nil},
		{5, 0, 3.5}, {5, 1, -0.125}, {6, 0, nil}, {6, 1, 0.75},
	} {
		if got := column(c.col)[c.row]; got != c.want {
			t.Errorf("%s[%d] = %v, want %v", wantCols[c.col], c.row, got, c.want)
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
