package ingest

import (
	"errors"
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
)

// arrowSource reads an Arrow IPC file or stream a record batch at a time.
type arrowSource struct {
	fields  []field
	next1   func() (arrow.RecordBatch, error) // the next batch, io.EOF at the end
	closer  func()
	row     int64
	batches int
}

func openArrowFile(f *os.File) (src *arrowSource, err error) {
	defer recoverCorrupt(&err)
	if err := checkArrowFile(f); err != nil {
		return nil, fmt.Errorf("not a readable Arrow IPC file (truncated or corrupt?): %w", err)
	}
	r, err := ipc.NewFileReader(f)
	if err != nil {
		return nil, fmt.Errorf("not a readable Arrow IPC file (truncated or corrupt?): %w", err)
	}
	i := 0
	return newArrowSource(r.Schema(), func() (arrow.RecordBatch, error) {
		if i >= r.NumRecords() {
			return nil, io.EOF
		}
		i++
		return r.RecordBatch(i - 1)
	}, func() { r.Close() }), nil
}

func openArrowStream(rd io.Reader, size int64) (src *arrowSource, err error) {
	defer recoverCorrupt(&err)
	r, err := ipc.NewReader(newCheckedStream(rd, size))
	if err != nil {
		return nil, fmt.Errorf("not a readable Arrow IPC stream (truncated or corrupt?): %w", err)
	}
	return newArrowSource(r.Schema(), func() (arrow.RecordBatch, error) {
		if r.Next() {
			return r.RecordBatch(), nil
		}
		if err := r.Err(); err != nil {
			return nil, err
		}
		return nil, io.EOF
	}, r.Release), nil
}

func newArrowSource(sc *arrow.Schema, next func() (arrow.RecordBatch, error), closer func()) *arrowSource {
	s := &arrowSource{next1: next, closer: closer}
	for _, f := range sc.Fields() {
		s.fields = append(s.fields, arrowField(f))
	}
	return s
}

// arrowField maps an Arrow type (Schema.fbs of the Arrow format) to a kind.
func arrowField(f arrow.Field) field {
	fl := field{name: f.Name, typ: f.Type.String(), chanUnit: fieldUnit(f.Metadata)}
	switch t := f.Type.(type) {
	case *arrow.Int8Type, *arrow.Int16Type, *arrow.Int32Type, *arrow.Int64Type:
		fl.kind = kindInt
	case *arrow.Uint8Type, *arrow.Uint16Type, *arrow.Uint32Type, *arrow.Uint64Type:
		fl.kind, fl.unsigned = kindInt, true
	case *arrow.Float16Type, *arrow.Float32Type, *arrow.Float64Type:
		fl.kind = kindFloat
	case *arrow.StringType, *arrow.LargeStringType, *arrow.StringViewType,
		*arrow.BinaryType, *arrow.LargeBinaryType:
		fl.kind = kindString
	case *arrow.BooleanType:
		fl.kind = kindBool
	case *arrow.TimestampType:
		// A timestamp without a time zone is a wall-clock time.
		fl.kind, fl.naive = kindTime, t.TimeZone == ""
		fl.unit = int64(t.Unit.Multiplier())
	case *arrow.Date32Type:
		fl.kind, fl.unit, fl.naive = kindTime, 86400e9, true
	case *arrow.Date64Type:
		fl.kind, fl.unit, fl.naive = kindTime, 1e6, true
	case *arrow.DictionaryType:
		if arrow.IsInteger(t.IndexType.ID()) && arrowField(arrow.Field{Type: t.ValueType}).kind == kindString {
			fl.kind = kindString
			break
		}
		fl.why = fmt.Sprintf("%s values are not supported", fl.typ)
	default:
		fl.why = fmt.Sprintf("%s values are not supported", fl.typ)
	}
	return fl
}

func (s *arrowSource) schema() []field { return s.fields }

func (s *arrowSource) close() error {
	s.closer()
	return nil
}

func (s *arrowSource) next(want []bool) (b *batch, err error) {
	defer recoverCorrupt(&err)
	rec, err := s.next1()
	if err == io.EOF {
		return nil, err
	}
	if err != nil {
		return nil, fmt.Errorf("record batch %d: %w (truncated or corrupt file?)", s.batches+1, err)
	}
	s.batches++
	if int(rec.NumCols()) != len(s.fields) {
		return nil, errors.New("record batch does not match the schema")
	}
	b = &batch{n: int(rec.NumRows()), first: s.row, cols: make([]*column, len(s.fields))}
	s.row += rec.NumRows()
	err = b.fill(s.fields, want, func(i int, fl *field) (*column, error) {
		c := &column{field: fl}
		if n := rec.Column(i).Len(); n != b.n {
			return nil, colErr(fl.name, "%d values in a record batch of %d rows (truncated or corrupt file?)", n, b.n)
		}
		if err := fromArrow(c, rec.Column(i)); err != nil {
			return nil, colErr(fl.name, "%v", err)
		}
		return c, nil
	})
	if err != nil {
		return nil, err
	}
	return b, nil
}

// fromArrow copies an Arrow array into a column (the record batch is
// released once read).
func fromArrow(c *column, a arrow.Array) error {
	n := a.Len()
	// Every type read takes at least a bit per row in its buffers; a row
	// count beyond that is a damaged file, refused before allocating.
	var held int
	for _, b := range a.Data().Buffers() {
		if b != nil {
			held += b.Len()
		}
	}
	if n > 8*held {
		return fmt.Errorf("%d rows held in %d bytes (truncated or corrupt file?)", n, held)
	}
	if a.NullN() > 0 {
		c.valid = make([]bool, n)
		for i := range c.valid {
			c.valid[i] = a.IsValid(i)
		}
	}
	switch a := a.(type) {
	case *array.Int8:
		c.ints = converted[int64](a.Int8Values())
	case *array.Int16:
		c.ints = converted[int64](a.Int16Values())
	case *array.Int32:
		c.ints = converted[int64](a.Int32Values())
	case *array.Int64:
		c.ints = converted[int64](a.Int64Values())
	case *array.Uint8:
		c.ints = converted[int64](a.Uint8Values())
	case *array.Uint16:
		c.ints = converted[int64](a.Uint16Values())
	case *array.Uint32:
		c.ints = converted[int64](a.Uint32Values())
	case *array.Uint64:
		c.ints = converted[int64](a.Uint64Values())
	case *array.Timestamp:
		c.ints = converted[int64](a.TimestampValues())
	case *array.Date32:
		c.ints = converted[int64](a.Date32Values())
	case *array.Date64:
		c.ints = converted[int64](a.Date64Values())
	case *array.Float16:
		c.floats = make([]float64, n)
		for i, v := range a.Values() {
			c.floats[i] = float64(v.Float32())
		}
	case *array.Float32:
		c.floats = converted[float64](a.Float32Values())
	case *array.Float64:
		c.floats = converted[float64](a.Float64Values())
	case *array.Boolean:
		c.bools = make([]bool, n)
		for i := range c.bools {
			c.bools[i] = a.Value(i)
		}
	case *array.Dictionary:
		codes, dict, err := arrowDictionary(a)
		if err != nil {
			return err
		}
		c.codes, c.dict = codes, dict
	default:
		str := stringsOf(a)
		if str == nil || c.kind != kindString {
			return fmt.Errorf("unexpected %s array", a.DataType())
		}
		var t interner
		c.codes = make([]int32, n)
		for i := range c.codes {
			if a.IsNull(i) {
				c.codes[i] = -1
			} else {
				c.codes[i] = t.code(str(i))
			}
		}
		c.dict = t.strs
	}
	if c.codes != nil {
		c.valid = nil // nulls are code -1
	}
	return nil
}

// stringsOf returns the accessor of a string or binary array, nil for other
// arrays. The strings it returns may share the array's memory.
func stringsOf(a arrow.Array) func(int) string {
	switch a := a.(type) {
	case interface{ Value(int) string }:
		return a.Value
	case interface{ Value(int) []byte }:
		return func(i int) string { return string(a.Value(i)) }
	}
	return nil
}

func converted[D, S number](src []S) []D {
	dst := make([]D, len(src))
	convertInto(dst, src)
	return dst
}

// arrowDictionary returns the codes and strings of a dictionary-encoded
// string array.
func arrowDictionary(a *array.Dictionary) ([]int32, []string, error) {
	d := a.Dictionary()
	str := stringsOf(d)
	if str == nil {
		return nil, nil, fmt.Errorf("unexpected %s dictionary", d.DataType())
	}
	dict := make([]string, d.Len())
	for j := range dict {
		dict[j] = strings.Clone(str(j))
	}
	codes := make([]int32, a.Len())
	for i := range codes {
		j := a.GetValueIndex(i)
		switch {
		case a.IsNull(i) || d.IsNull(j):
			codes[i] = -1
		case j < 0 || j >= len(dict):
			return nil, nil, fmt.Errorf("dictionary index %d out of range", j)
		default:
			codes[i] = int32(j)
		}
	}
	return codes, dict, nil
}
