package parquettest

import (
	"bytes"
	"encoding/base64"
	"encoding/binary"
	"fmt"
	"io"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/metadata"
	"github.com/apache/arrow-go/v18/parquet/schema"
)

// WriteOptions sets how WriteRecord writes.
type WriteOptions struct {
	RowGroup   int64 // rows per row group at most; > 0
	Dictionary bool  // dictionary-encode every column
	// Int96 writes timestamps as the deprecated INT96 (nanoseconds of the
	// day and Julian day) instead of INT64 with a TIMESTAMP annotation.
	Int96 bool
	// StoreSchema keeps the Arrow schema, field metadata included, in the
	// key-value metadata "ARROW:schema" as Arrow's writers do: base64 of
	// the schema as an Arrow IPC stream with no batches.
	StoreSchema bool
}

// WriteRecord writes rec as a Parquet file of one column per field, Snappy
// compressed. A nullable field is an OPTIONAL column, any other REQUIRED.
// Fields map to the physical and logical types LogicalTypes.md gives:
// strings to BYTE_ARRAY STRING; signed and unsigned integers of 8 to 32
// bits to INT32 and of 64 bits to INT64, with INT(bitWidth, isSigned);
// float32 to FLOAT, float64 to DOUBLE, booleans to BOOLEAN, date32 to
// INT32 DATE; timestamps to INT64 TIMESTAMP in their unit (seconds as
// milliseconds, since Parquet has none), adjusted to UTC when they carry a
// time zone.
func WriteRecord(w io.Writer, rec arrow.RecordBatch, o WriteOptions) error {
	if o.RowGroup <= 0 {
		return fmt.Errorf("parquettest: row group of %d rows", o.RowGroup)
	}
	fields := make(schema.FieldList, rec.NumCols())
	for i, f := range rec.Schema().Fields() {
		n, err := node(f, o.Int96)
		if err != nil {
			return fmt.Errorf("parquettest: field %s: %w", f.Name, err)
		}
		fields[i] = n
	}
	root, err := schema.NewGroupNode("schema", parquet.Repetitions.Required, fields, -1)
	if err != nil {
		return err
	}
	props := parquet.NewWriterProperties(parquet.WithDictionaryDefault(o.Dictionary), parquet.WithCompression(compress.Codecs.Snappy))
	var kv metadata.KeyValueMetadata
	if o.StoreSchema {
		var s bytes.Buffer
		sw := ipc.NewWriter(&s, ipc.WithSchema(rec.Schema()))
		if err := sw.Close(); err != nil {
			return err
		}
		if err := kv.Append("ARROW:schema", base64.StdEncoding.EncodeToString(s.Bytes())); err != nil {
			return err
		}
	}
	pw, err := file.NewParquetWriterWithError(w, root, file.WithWriterProps(props), file.WithWriteMetadata(kv))
	if err != nil {
		return err
	}
	for lo := int64(0); lo < rec.NumRows() || lo == 0; lo += o.RowGroup {
		hi := min(lo+o.RowGroup, rec.NumRows())
		rg, err := pw.AppendRowGroupChecked()
		if err != nil {
			return err
		}
		for i, col := range rec.Columns() {
			cw, err := rg.NextColumn()
			if err != nil {
				return err
			}
			part := array.NewSlice(col, lo, hi)
			err = writeColumn(cw, part, rec.Schema().Field(i).Nullable, o.Int96)
			part.Release()
			if err != nil {
				return fmt.Errorf("parquettest: field %s: %w", rec.Schema().Field(i).Name, err)
			}
			if err := cw.Close(); err != nil {
				return err
			}
		}
		if err := rg.Close(); err != nil {
			return err
		}
		if hi == rec.NumRows() {
			break
		}
	}
	return pw.Close()
}

// node returns the Parquet column of field f.
func node(f arrow.Field, int96 bool) (schema.Node, error) {
	rep := parquet.Repetitions.Required
	if f.Nullable {
		rep = parquet.Repetitions.Optional
	}
	var logical schema.LogicalType = schema.NoLogicalType{}
	var physical parquet.Type
	switch t := f.Type.(type) {
	case *arrow.StringType:
		logical, physical = schema.StringLogicalType{}, parquet.Types.ByteArray
	case *arrow.Int8Type, *arrow.Int16Type, *arrow.Int32Type, *arrow.Uint8Type, *arrow.Uint16Type, *arrow.Uint32Type:
		bits := int8(t.(arrow.FixedWidthDataType).BitWidth())
		logical, physical = schema.NewIntLogicalType(bits, arrow.IsSignedInteger(t.ID())), parquet.Types.Int32
	case *arrow.Int64Type:
		logical, physical = schema.NewIntLogicalType(64, true), parquet.Types.Int64
	case *arrow.Uint64Type:
		logical, physical = schema.NewIntLogicalType(64, false), parquet.Types.Int64
	case *arrow.Float32Type:
		physical = parquet.Types.Float
	case *arrow.Float64Type:
		physical = parquet.Types.Double
	case *arrow.BooleanType:
		physical = parquet.Types.Boolean
	case *arrow.Date32Type:
		logical, physical = schema.DateLogicalType{}, parquet.Types.Int32
	case *arrow.TimestampType:
		if int96 {
			physical = parquet.Types.Int96
			break
		}
		unit := map[arrow.TimeUnit]schema.TimeUnitType{arrow.Second: schema.TimeUnitMillis, arrow.Millisecond: schema.TimeUnitMillis,
			arrow.Microsecond: schema.TimeUnitMicros, arrow.Nanosecond: schema.TimeUnitNanos}[t.Unit]
		logical, physical = schema.NewTimestampLogicalType(t.TimeZone != "", unit), parquet.Types.Int64
	default:
		return nil, fmt.Errorf("no Parquet type for %s", f.Type)
	}
	return schema.NewPrimitiveNodeLogical(f.Name, rep, logical, physical, -1, -1)
}

// writeColumn writes the values of a, with definition levels when the
// column is optional.
func writeColumn(cw file.ColumnChunkWriter, a arrow.Array, nullable, int96 bool) error {
	n := a.Len()
	if !nullable && a.NullN() > 0 {
		return fmt.Errorf("%d nulls in a field that is not nullable", a.NullN())
	}
	var def []int16
	if nullable {
		def = make([]int16, n)
	}
	var kept []int
	for i := range n {
		if a.IsNull(i) {
			continue
		}
		if def != nil {
			def[i] = 1
		}
		kept = append(kept, i)
	}
	var err error
	switch a := a.(type) {
	case *array.String:
		_, err = cw.(*file.ByteArrayColumnChunkWriter).WriteBatch(pick(kept, func(i int) parquet.ByteArray { return parquet.ByteArray(a.Value(i)) }), def, nil)
	case *array.Int8:
		_, err = cw.(*file.Int32ColumnChunkWriter).WriteBatch(pick(kept, func(i int) int32 { return int32(a.Value(i)) }), def, nil)
	case *array.Int16:
		_, err = cw.(*file.Int32ColumnChunkWriter).WriteBatch(pick(kept, func(i int) int32 { return int32(a.Value(i)) }), def, nil)
	case *array.Int32:
		_, err = cw.(*file.Int32ColumnChunkWriter).WriteBatch(pick(kept, a.Value), def, nil)
	case *array.Uint8:
		_, err = cw.(*file.Int32ColumnChunkWriter).WriteBatch(pick(kept, func(i int) int32 { return int32(a.Value(i)) }), def, nil)
	case *array.Uint16:
		_, err = cw.(*file.Int32ColumnChunkWriter).WriteBatch(pick(kept, func(i int) int32 { return int32(a.Value(i)) }), def, nil)
	case *array.Uint32:
		_, err = cw.(*file.Int32ColumnChunkWriter).WriteBatch(pick(kept, func(i int) int32 { return int32(a.Value(i)) }), def, nil)
	case *array.Int64:
		_, err = cw.(*file.Int64ColumnChunkWriter).WriteBatch(pick(kept, a.Value), def, nil)
	case *array.Uint64:
		_, err = cw.(*file.Int64ColumnChunkWriter).WriteBatch(pick(kept, func(i int) int64 { return int64(a.Value(i)) }), def, nil)
	case *array.Float32:
		_, err = cw.(*file.Float32ColumnChunkWriter).WriteBatch(pick(kept, a.Value), def, nil)
	case *array.Float64:
		_, err = cw.(*file.Float64ColumnChunkWriter).WriteBatch(pick(kept, a.Value), def, nil)
	case *array.Boolean:
		_, err = cw.(*file.BooleanColumnChunkWriter).WriteBatch(pick(kept, a.Value), def, nil)
	case *array.Date32:
		_, err = cw.(*file.Int32ColumnChunkWriter).WriteBatch(pick(kept, func(i int) int32 { return int32(a.Value(i)) }), def, nil)
	case *array.Timestamp:
		unit := a.DataType().(*arrow.TimestampType).Unit
		if int96 {
			_, err = cw.(*file.Int96ColumnChunkWriter).WriteBatch(pick(kept, func(i int) parquet.Int96 {
				return toInt96(a.Value(i).ToTime(unit).UnixNano())
			}), def, nil)
			break
		}
		scale := int64(1)
		if unit == arrow.Second {
			scale = 1000
		}
		_, err = cw.(*file.Int64ColumnChunkWriter).WriteBatch(pick(kept, func(i int) int64 { return int64(a.Value(i)) * scale }), def, nil)
	default:
		return fmt.Errorf("no writer for %s", a.DataType())
	}
	return err
}

// julianUnixEpoch is the Julian day number of 1970-01-01 (from memory;
// arrow-go's INT96 reader has the same).
const julianUnixEpoch = 2440588

// toInt96 returns the INT96 timestamp of nanoseconds since the Unix epoch:
// little-endian nanoseconds of the day, then the Julian day, as Impala and
// Hive wrote timestamps (common practice, no source).
func toInt96(nanos int64) parquet.Int96 {
	const day = 86_400_000_000_000
	days, rest := nanos/day, nanos%day
	if rest < 0 {
		days, rest = days-1, rest+day
	}
	var v parquet.Int96
	binary.LittleEndian.PutUint64(v[:8], uint64(rest))
	binary.LittleEndian.PutUint32(v[8:], uint32(days+julianUnixEpoch))
	return v
}

// pick returns value(i) for each index of kept.
func pick[T any](kept []int, value func(int) T) []T {
	out := make([]T, len(kept))
	for k, i := range kept {
		out[k] = value(i)
	}
	return out
}
