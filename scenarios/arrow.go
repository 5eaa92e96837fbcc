package scenarios

import (
	"io"
	"math"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// arrowBatch is the number of rows in an Arrow record batch.
const arrowBatch = 1 << 16

func (f *Fleet) writeArrow(w io.Writer) error {
	fields := []arrow.Field{
		{Name: "site", Type: arrow.BinaryTypes.String},
		{Name: "time", Type: &arrow.TimestampType{Unit: arrow.Millisecond, TimeZone: "UTC"}},
		{Name: "channel", Type: arrow.BinaryTypes.String},
		{Name: "value", Type: arrow.PrimitiveTypes.Float64},
	}
	if f.Mobile {
		fields = append(fields,
			arrow.Field{Name: "lat", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
			arrow.Field{Name: "lon", Type: arrow.PrimitiveTypes.Float64, Nullable: true})
	}
	schema := arrow.NewSchema(fields, nil)
	mem := memory.NewGoAllocator()
	fw, err := ipc.NewFileWriter(w, ipc.WithSchema(schema), ipc.WithAllocator(mem), ipc.WithLZ4())
	if err != nil {
		return err
	}
	b := array.NewRecordBuilder(mem, schema)
	defer b.Release()
	site := b.Field(0).(*array.StringBuilder)
	times := b.Field(1).(*array.TimestampBuilder)
	channel := b.Field(2).(*array.StringBuilder)
	value := b.Field(3).(*array.Float64Builder)
	appendNullable := func(fb array.Builder, v float64) {
		if math.IsNaN(v) {
			fb.AppendNull()
		} else {
			fb.(*array.Float64Builder).Append(v)
		}
	}
	flush := func() error {
		rec := b.NewRecordBatch()
		defer rec.Release()
		return fw.Write(rec)
	}
	n := 0
	for r := range f.longRows() {
		s := f.Sites[r.site]
		site.Append(s.ID)
		times.Append(arrow.Timestamp(s.Readings.Times[r.row] / 1e6))
		channel.Append(f.Channels[r.channel].Name)
		value.Append(r.value)
		if f.Mobile {
			lat, lon := s.Readings.position(r.row)
			appendNullable(b.Field(4), lat)
			appendNullable(b.Field(5), lon)
		}
		if n++; n == arrowBatch {
			if err := flush(); err != nil {
				return err
			}
			n = 0
		}
	}
	if n > 0 {
		if err := flush(); err != nil {
			return err
		}
	}
	return fw.Close()
}
