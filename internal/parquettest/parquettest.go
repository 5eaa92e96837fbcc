// Package parquettest reads and writes Parquet files for tests with
// arrow-go's own low-level Parquet implementation (parquet/file with its
// column readers and writers, and parquet/schema), independent of
// parquet-go, with which kinmap reads and writes its files. A test that
// reads kinmap's output with Read, or feeds kinmap's reader a file from
// WriteRecord, checks it against a second implementation of the format
// (Apache Parquet format specification, LogicalTypes.md).
//
// It does not use arrow-go's Arrow bridge (pqarrow), which brings gRPC
// and its dependencies into every test binary that imports it.
package parquettest

import (
	"bytes"
	"fmt"
	"time"

	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/schema"
)

// batch is how many levels a column reader is asked for at a time.
const batch = 1024

// Column is one leaf column of a Parquet file, read whole.
type Column struct {
	Name     string // the leaf's path, its parts joined by "."
	Physical parquet.Type
	Logical  schema.LogicalType
	// Values holds one value per row, nil where the row has none: bool,
	// int64 (INT32 and INT64), float32, float64, string (BYTE_ARRAY and
	// FIXED_LEN_BYTE_ARRAY), and time.Time in UTC for a TIMESTAMP and for
	// INT96. In a repeated column each row's value is a []any of its
	// elements, nil for a null or empty list.
	Values []any
}

// Read reads every column of the Parquet file b, across its row groups.
func Read(b []byte) ([]Column, error) {
	r, err := file.NewParquetReader(bytes.NewReader(b))
	if err != nil {
		return nil, err
	}
	defer r.Close()
	sc := r.MetaData().Schema
	cols := make([]Column, sc.NumColumns())
	for i := range cols {
		d := sc.Column(i)
		cols[i] = Column{Name: d.Path(), Physical: d.PhysicalType(), Logical: d.LogicalType()}
	}
	for g := range r.NumRowGroups() {
		rg := r.RowGroup(g)
		for i := range cols {
			cr, err := rg.Column(i)
			if err != nil {
				return nil, fmt.Errorf("row group %d, column %s: %w", g, cols[i].Name, err)
			}
			vals, err := readColumn(cr, sc.Column(i))
			if err != nil {
				return nil, fmt.Errorf("row group %d, column %s: %w", g, cols[i].Name, err)
			}
			cols[i].Values = append(cols[i].Values, vals...)
		}
	}
	return cols, nil
}

// ByName returns the column called name, false when there is none.
func ByName(cols []Column, name string) (Column, bool) {
	for _, c := range cols {
		if c.Name == name {
			return c, true
		}
	}
	return Column{}, false
}

// readColumn reads one column chunk into one value per row.
func readColumn(cr file.ColumnChunkReader, d *schema.Column) ([]any, error) {
	maxDef, maxRep := d.MaxDefinitionLevel(), d.MaxRepetitionLevel()
	// An element of a repeated column exists from the definition level of
	// its innermost repeated node on (common practice of the format's
	// Dremel encoding, no source).
	listDef := repeatedDef(d.SchemaNode())
	var out []any
	var row []any
	started := false
	flush := func() {
		if started {
			out = append(out, rowValue(row))
		}
		row, started = nil, true
	}
	def, rep := make([]int16, batch), make([]int16, batch)
	for cr.HasNext() {
		vals, n, err := readBatch(cr, def, rep)
		if err != nil {
			return nil, err
		}
		k := 0
		for j := range n {
			var v any
			if maxDef == 0 || def[j] == maxDef {
				v = convert(vals, k, d)
				k++
			}
			if maxRep == 0 {
				out = append(out, v)
				continue
			}
			if rep[j] == 0 {
				flush()
			}
			if def[j] >= listDef {
				row = append(row, v)
			}
		}
	}
	if maxRep > 0 {
		flush()
		out = out[:len(out):len(out)]
	}
	return out, nil
}

// rowValue is the value of a repeated column's row: its elements, nil
// when it has none.
func rowValue(row []any) any {
	if len(row) == 0 {
		return nil
	}
	return row
}

// repeatedDef returns the definition level at which the innermost
// repeated node on the path to n is defined: the number of optional and
// repeated nodes from the root down to it.
func repeatedDef(n schema.Node) int16 {
	var path []schema.Node
	for ; n != nil && n.Parent() != nil; n = n.Parent() {
		path = append([]schema.Node{n}, path...)
	}
	var level, at int16
	for _, p := range path {
		if p.RepetitionType() != parquet.Repetitions.Required {
			level++
		}
		if p.RepetitionType() == parquet.Repetitions.Repeated {
			at = level
		}
	}
	return at
}

// readBatch reads up to len(def) levels and the values among them.
func readBatch(cr file.ColumnChunkReader, def, rep []int16) (vals any, n int, err error) {
	switch r := cr.(type) {
	case *file.BooleanColumnChunkReader:
		return readAs(r, def, rep)
	case *file.Int32ColumnChunkReader:
		return readAs(r, def, rep)
	case *file.Int64ColumnChunkReader:
		return readAs(r, def, rep)
	case *file.Int96ColumnChunkReader:
		return readAs(r, def, rep)
	case *file.Float32ColumnChunkReader:
		return readAs(r, def, rep)
	case *file.Float64ColumnChunkReader:
		return readAs(r, def, rep)
	case *file.ByteArrayColumnChunkReader:
		return readAs(r, def, rep)
	case *file.FixedLenByteArrayColumnChunkReader:
		return readAs(r, def, rep)
	}
	return nil, 0, fmt.Errorf("no reader for %T", cr)
}

// batchReader is a column reader of values of type T.
type batchReader[T any] interface {
	ReadBatch(batchSize int64, values []T, defLvls, repLvls []int16) (total int64, valuesRead int, err error)
}

// readAs reads up to len(def) levels of r and the values among them.
func readAs[T any](r batchReader[T], def, rep []int16) (any, int, error) {
	v := make([]T, len(def))
	total, _, err := r.ReadBatch(int64(len(def)), v, def, rep)
	return v, int(total), err
}

// convert returns value k of vals as Column.Values holds it.
func convert(vals any, k int, d *schema.Column) any {
	switch v := vals.(type) {
	case []bool:
		return v[k]
	case []int32:
		return int64(v[k])
	case []int64:
		if ts, ok := d.LogicalType().(schema.TimestampLogicalType); ok {
			return timestamp(v[k], ts.TimeUnit())
		}
		return v[k]
	case []parquet.Int96:
		return v[k].ToTime().UTC()
	case []float32:
		return v[k]
	case []float64:
		return v[k]
	case []parquet.ByteArray:
		return string(v[k])
	case []parquet.FixedLenByteArray:
		return string(v[k])
	}
	panic(fmt.Sprintf("parquettest: no conversion of %T", vals))
}

// timestamp is v in unit as a time in UTC.
func timestamp(v int64, unit schema.TimeUnitType) time.Time {
	switch unit {
	case schema.TimeUnitMillis:
		return time.UnixMilli(v).UTC()
	case schema.TimeUnitMicros:
		return time.UnixMicro(v).UTC()
	}
	return time.Unix(0, v).UTC()
}
