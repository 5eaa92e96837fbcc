package export

import (
	"fmt"
	"io"
	"math"
	"reflect"
	"strconv"
	"strings"

	"github.com/parquet-go/parquet-go"

	"github.com/kinmap/kinmap/features"
)

// writeFeatures writes t as Parquet (features.parquet): one row per window
// with the columns site (string), window_start and window_end (TIMESTAMP in
// microseconds, adjusted to UTC), lat and lon (optional doubles, null when
// the window is not located), then one optional double column per feature
// in t.Names order, null where the value is NaN. The columns are in that
// order; a feature name containing a comma cannot be a column name here and
// is an error.
func writeFeatures(w io.Writer, t *features.Table) error {
	fields := []reflect.StructField{
		{Name: "Site", Type: reflect.TypeFor[string](), Tag: `parquet:"site"`},
		{Name: "WindowStart", Type: reflect.TypeFor[int64](), Tag: `parquet:"window_start,timestamp(microsecond)"`},
		{Name: "WindowEnd", Type: reflect.TypeFor[int64](), Tag: `parquet:"window_end,timestamp(microsecond)"`},
		{Name: "Lat", Type: reflect.TypeFor[*float64](), Tag: `parquet:"lat,optional"`},
		{Name: "Lon", Type: reflect.TypeFor[*float64](), Tag: `parquet:"lon,optional"`},
	}
	const fixed = 5
	for i, name := range t.Names {
		if strings.ContainsAny(name, ",") || name == "" {
			return fmt.Errorf("export: features.parquet: feature %q cannot be a column name", name)
		}
		fields = append(fields, reflect.StructField{
			Name: "F" + strconv.Itoa(i),
			Type: reflect.TypeFor[*float64](),
			Tag:  reflect.StructTag(`parquet:` + strconv.Quote(name+",optional")),
		})
	}
	// A struct type, unlike parquet.Group, keeps the columns in this order.
	schema := parquet.SchemaOf(reflect.New(reflect.StructOf(fields)).Elem().Interface())
	pw := parquet.NewWriter(w, schema, parquet.Compression(&parquet.Zstd))

	optional := func(v float64, col int) parquet.Value {
		if math.IsNaN(v) {
			return parquet.NullValue().Level(0, 0, col)
		}
		return parquet.DoubleValue(v).Level(0, 1, col)
	}
	const batch = 1024
	rows := make([]parquet.Row, 0, batch)
	flush := func() error {
		_, err := pw.WriteRows(rows)
		rows = rows[:0]
		return err
	}
	for _, win := range t.Windows {
		if len(win.Values) != len(t.Names) {
			return fmt.Errorf("export: features.parquet: window of %q at %s has %d values for %d features",
				win.Site, win.Start.Format("2006-01-02T15:04:05Z07:00"), len(win.Values), len(t.Names))
		}
		lat, lon := math.NaN(), math.NaN()
		if win.Located {
			lat, lon = win.Lat, win.Lon
		}
		row := make(parquet.Row, 0, fixed+len(t.Names))
		row = append(row,
			parquet.ByteArrayValue([]byte(win.Site)).Level(0, 0, 0),
			parquet.Int64Value(win.Start.UnixMicro()).Level(0, 0, 1),
			parquet.Int64Value(win.End.UnixMicro()).Level(0, 0, 2),
			optional(lat, 3), optional(lon, 4))
		for j, v := range win.Values {
			row = append(row, optional(v, fixed+j))
		}
		if rows = append(rows, row); len(rows) == batch {
			if err := flush(); err != nil {
				return fmt.Errorf("export: features.parquet: %w", err)
			}
		}
	}
	if err := flush(); err != nil {
		return fmt.Errorf("export: features.parquet: %w", err)
	}
	if err := pw.Close(); err != nil {
		return fmt.Errorf("export: features.parquet: %w", err)
	}
	return nil
}
