package parquettest

import (
	"bytes"
	"encoding/base64"
	"math"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/file"
)

// A record written by WriteRecord reads back by Read value for value,
// nulls, row groups and dictionary encoding included; INT96 times agree
// with arrow-go's own INT96 decoding (parquet.Int96.ToTime).
func TestRoundTrip(t *testing.T) {
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "site", Type: arrow.BinaryTypes.String, Nullable: true, Metadata: arrow.NewMetadata([]string{"unit"}, []string{"m3/h"})},
		{Name: "i8", Type: arrow.PrimitiveTypes.Int8},
		{Name: "u32", Type: arrow.PrimitiveTypes.Uint32},
		{Name: "u64", Type: arrow.PrimitiveTypes.Uint64},
		{Name: "f32", Type: arrow.PrimitiveTypes.Float32},
		{Name: "f64", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "ok", Type: arrow.FixedWidthTypes.Boolean},
		{Name: "sec", Type: &arrow.TimestampType{Unit: arrow.Second, TimeZone: "UTC"}},
		{Name: "ns", Type: &arrow.TimestampType{Unit: arrow.Nanosecond}},
	}, nil)
	b := array.NewRecordBuilder(memory.DefaultAllocator, sc)
	defer b.Release()
	at := time.Date(1969, 12, 31, 23, 59, 58, 123456789, time.UTC) // before the epoch: a negative time
	for i := range 5 {
		if i == 3 {
			b.Field(0).AppendNull()
			b.Field(5).AppendNull()
		} else {
			b.Field(0).(*array.StringBuilder).Append("PS-" + string(rune('a'+i)))
			b.Field(5).(*array.Float64Builder).Append(float64(i) / 3)
		}
		b.Field(1).(*array.Int8Builder).Append(int8(-128 + i))
		b.Field(2).(*array.Uint32Builder).Append(math.MaxUint32 - uint32(i))
		b.Field(3).(*array.Uint64Builder).Append(math.MaxUint64 - uint64(i))
		b.Field(4).(*array.Float32Builder).Append(float32(i) + 0.5)
		b.Field(6).(*array.BooleanBuilder).Append(i%2 == 0)
		b.Field(7).(*array.TimestampBuilder).Append(arrow.Timestamp(at.Unix() + int64(i)))
		b.Field(8).(*array.TimestampBuilder).Append(arrow.Timestamp(at.UnixNano() + int64(i)*86_400_000_000_000))
	}
	rec := b.NewRecordBatch()
	defer rec.Release()
	for _, o := range []WriteOptions{{RowGroup: 2}, {RowGroup: 10, Dictionary: true, StoreSchema: true}, {RowGroup: 3, Int96: true}} {
		var buf bytes.Buffer
		if err := WriteRecord(&buf, rec, o); err != nil {
			t.Fatal(err)
		}
		cols, err := Read(buf.Bytes())
		if err != nil {
			t.Fatal(err)
		}
		if len(cols) != int(rec.NumCols()) {
			t.Fatalf("%+v: %d columns, want %d", o, len(cols), rec.NumCols())
		}
		for i := range 5 {
			site, f64 := any("PS-"+string(rune('a'+i))), any(float64(i)/3)
			if i == 3 {
				site, f64 = nil, nil
			}
			sec := time.Unix(at.Unix()+int64(i), 0).UTC()
			ns := at.Add(time.Duration(i) * 24 * time.Hour)
			want := []any{site, int64(-128 + i), int64(int32(math.MaxUint32 - uint32(i))), int64(math.MaxUint64 - uint64(i)),
				float32(i) + 0.5, f64, i%2 == 0, sec, ns}
			for c, w := range want {
				got := cols[c].Values[i]
				if gt, ok := got.(time.Time); ok {
					if !gt.Equal(w.(time.Time)) {
						t.Errorf("%+v: row %d, %s = %v, want %v", o, i, cols[c].Name, got, w)
					}
				} else if got != w {
					t.Errorf("%+v: row %d, %s = %v (%T), want %v (%T)", o, i, cols[c].Name, got, got, w, w)
				}
			}
		}
		r, err := file.NewParquetReader(bytes.NewReader(buf.Bytes()))
		if err != nil {
			t.Fatal(err)
		}
		if want := (5 + o.RowGroup - 1) / o.RowGroup; int64(r.NumRowGroups()) != want {
			t.Errorf("%+v: %d row groups, want %d", o, r.NumRowGroups(), want)
		}
		if ts := r.MetaData().Schema.Column(8).PhysicalType(); o.Int96 != (ts == parquet.Types.Int96) {
			t.Errorf("%+v: timestamps stored as %s", o, ts)
		}
		stored := r.MetaData().KeyValueMetadata().FindValue("ARROW:schema")
		if (stored != nil) != o.StoreSchema {
			t.Errorf("%+v: ARROW:schema present %v", o, stored != nil)
		}
		if stored != nil {
			raw, err := base64.StdEncoding.DecodeString(*stored)
			if err != nil {
				t.Fatal(err)
			}
			sr, err := ipc.NewReader(bytes.NewReader(raw))
			if err != nil {
				t.Fatal(err)
			}
			if !sr.Schema().Equal(sc) || sr.Schema().Field(0).Metadata.Values()[0] != "m3/h" {
				t.Errorf("stored schema %v, want %v", sr.Schema(), sc)
			}
			sr.Release()
		}
		r.Close()
	}
}
