package ingest

import (
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"os"
	"slices"

	"github.com/apache/arrow-go/v18/arrow/float16"
	"github.com/parquet-go/parquet-go"
	"github.com/parquet-go/parquet-go/deprecated"
	"github.com/parquet-go/parquet-go/encoding"
	"github.com/parquet-go/parquet-go/format"
)

// parquetSource reads a Parquet file a row group at a time, column chunk by
// column chunk through the page API.
type parquetSource struct {
	file    *parquet.File
	fields  []field
	leaves  []int // leaf column index of each field, -1 when not a leaf
	maxDefs []byte
	rg      int
	firsts  []int64     // first row of each row group
	free    chan *batch // batches read, whose buffers batchAt may reuse
}

func openParquet(f *os.File) (src *parquetSource, err error) {
	st, err := f.Stat()
	if err != nil {
		return nil, err
	}
	defer recoverCorrupt(&err)
	pf, err := parquet.OpenFile(f, st.Size(), parquet.SkipPageIndex(true), parquet.SkipBloomFilters(true))
	if err != nil {
		return nil, fmt.Errorf("not a readable Parquet file (truncated or corrupt?): %w", err)
	}
	elems, paths := leafElements(pf.Metadata().Schema)
	var tail [8]byte
	if _, err := f.ReadAt(tail[:], st.Size()-8); err != nil {
		return nil, err
	}
	dataEnd := st.Size() - 8 - int64(binary.LittleEndian.Uint32(tail[:4]))
	if err := checkParquetFooter(pf.Metadata(), elems, paths, dataEnd); err != nil {
		return nil, fmt.Errorf("Parquet footer does not fit the file (corrupt?): %w", err)
	}
	src = &parquetSource{file: pf, free: make(chan *batch, 4)}
	var row int64
	for _, g := range pf.RowGroups() {
		src.firsts = append(src.firsts, row)
		row += g.NumRows()
	}
	units := parquetUnits(pf.Metadata().KeyValueMetadata)
	for _, c := range pf.Root().Columns() {
		fl := field{name: c.Name()}
		leaf := -1
		switch {
		case !c.Leaf():
			fl.typ, fl.why = "group", "nested columns are not supported"
		case c.Repeated():
			fl.typ, fl.why = "repeated", "repeated columns are not supported"
		case c.Index() >= len(elems):
			return nil, errors.New("corrupt schema")
		default:
			leaf = c.Index()
			fl = parquetField(elems[leaf])
		}
		fl.chanUnit = units[fl.name]
		src.fields = append(src.fields, fl)
		src.leaves = append(src.leaves, leaf)
		src.maxDefs = append(src.maxDefs, byte(c.MaxDefinitionLevel()))
	}
	return src, nil
}

// recoverCorrupt turns a panic of a decoder on malformed input into an
// error: a damaged file must not bring the program down.
func recoverCorrupt(err *error) {
	if r := recover(); r != nil {
		*err = fmt.Errorf("corrupt file: %v", r)
	}
}

// leafElements lists the schema elements of the leaf columns in column
// order (depth first, as the schema stores them) and their paths.
func leafElements(schema []format.SchemaElement) ([]*format.SchemaElement, [][]string) {
	var (
		leaves []*format.SchemaElement
		paths  [][]string
		path   []string
		left   []int32 // children still to come at each level
	)
	for i := range schema {
		for len(left) > 0 && left[len(left)-1] == 0 {
			left, path = left[:len(left)-1], path[:max(len(path)-1, 0)]
		}
		if len(left) > 0 {
			left[len(left)-1]--
		}
		e := &schema[i]
		if i == 0 { // the root, not part of paths
			left = append(left, e.NumChildren.V)
			continue
		}
		if e.Type.Valid {
			leaves = append(leaves, e)
			paths = append(paths, append(slices.Clone(path), e.Name))
			continue
		}
		path = append(path, e.Name)
		left = append(left, e.NumChildren.V)
	}
	return leaves, paths
}

// parquetField maps the types of a leaf column as the Parquet format's
// LogicalTypes.md defines them: the logical type first, then the legacy
// converted type, then the physical type.
func parquetField(e *format.SchemaElement) field {
	phys := e.Type.V
	fl := field{name: e.Name, typ: lowerPhysical(phys)}
	unsupported := func(why string) field {
		fl.kind, fl.why = kindUnsupported, why
		return fl
	}
	switch lt := e.LogicalType.Value.(type) {
	case nil:
	case *format.TimestampType:
		fl.typ = lt.String()
		if phys != format.Int64 {
			return unsupported("TIMESTAMP not stored as int64")
		}
		fl.kind, fl.naive = kindTime, !lt.IsAdjustedToUTC
		switch lt.Unit.Value.(type) {
		case *format.MilliSeconds:
			fl.unit = 1e6
		case *format.MicroSeconds:
			fl.unit = 1e3
		case *format.NanoSeconds:
			fl.unit = 1
		default:
			return unsupported("TIMESTAMP of unknown unit")
		}
		return fl
	case *format.DateType:
		fl.typ = "DATE"
		return dateField(fl, phys)
	case *format.IntType:
		fl.typ = lt.String()
		return intField(fl, phys, !lt.IsSigned)
	case *format.StringType, *format.EnumType:
		fl.typ = lt.String()
		if phys != format.ByteArray {
			return unsupported(fl.typ + " not stored as a byte array")
		}
		fl.kind = kindString
		return fl
	case *format.Float16Type:
		fl.typ = "FLOAT16"
		if phys != format.FixedLenByteArray || e.TypeLength.V != 2 {
			return unsupported("FLOAT16 not stored in 2 bytes")
		}
		fl.kind = kindFloat
		return fl
	default:
		fl.typ = lt.String()
		return unsupported(fl.typ + " values are not supported")
	}
	if e.ConvertedType.Valid {
		ct := e.ConvertedType.V
		fl.typ = convertedName(ct)
		switch ct {
		case deprecated.UTF8, deprecated.Enum:
			if phys == format.ByteArray {
				fl.kind = kindString
				return fl
			}
		case deprecated.Date:
			return dateField(fl, phys)
		case deprecated.TimestampMillis, deprecated.TimestampMicros:
			if phys == format.Int64 {
				fl.kind, fl.unit = kindTime, 1e6
				if ct == deprecated.TimestampMicros {
					fl.unit = 1e3
				}
				return fl
			}
		case deprecated.Int8, deprecated.Int16, deprecated.Int32, deprecated.Int64:
			return intField(fl, phys, false)
		case deprecated.Uint8, deprecated.Uint16, deprecated.Uint32, deprecated.Uint64:
			return intField(fl, phys, true)
		}
		return unsupported(fl.typ + " values are not supported")
	}
	switch phys {
	case format.Boolean:
		fl.kind = kindBool
	case format.Int32, format.Int64:
		fl.kind = kindInt
	case format.Float, format.Double:
		fl.kind = kindFloat
	case format.ByteArray:
		fl.kind = kindString
	case format.Int96:
		return unsupported("int96 timestamps are not supported")
	default:
		return unsupported(fl.typ + " values are not supported")
	}
	return fl
}

// convertedName names a legacy converted type as parquet.thrift does.
func convertedName(ct deprecated.ConvertedType) string {
	names := map[deprecated.ConvertedType]string{
		deprecated.UTF8: "UTF8", deprecated.Enum: "ENUM", deprecated.Date: "DATE",
		deprecated.TimestampMillis: "TIMESTAMP_MILLIS", deprecated.TimestampMicros: "TIMESTAMP_MICROS",
		deprecated.Int8: "INT_8", deprecated.Int16: "INT_16", deprecated.Int32: "INT_32", deprecated.Int64: "INT_64",
		deprecated.Uint8: "UINT_8", deprecated.Uint16: "UINT_16", deprecated.Uint32: "UINT_32", deprecated.Uint64: "UINT_64",
		deprecated.Decimal: "DECIMAL", deprecated.TimeMillis: "TIME_MILLIS", deprecated.TimeMicros: "TIME_MICROS",
		deprecated.Json: "JSON", deprecated.Bson: "BSON", deprecated.Interval: "INTERVAL",
	}
	if name, ok := names[ct]; ok {
		return name
	}
	return fmt.Sprintf("converted type %d", ct)
}

func dateField(fl field, phys format.Type) field {
	if phys != format.Int32 {
		fl.why = "DATE not stored as int32"
		return fl
	}
	// Days since 1970-01-01 (LogicalTypes.md, DATE); a calendar date has no
	// zone, so it is read as UTC midnight.
	fl.kind, fl.unit, fl.naive = kindTime, 86400e9, true
	return fl
}

func intField(fl field, phys format.Type, unsigned bool) field {
	if phys != format.Int32 && phys != format.Int64 {
		fl.why = fl.typ + " not stored as an integer"
		return fl
	}
	fl.kind = kindInt
	fl.unsigned = unsigned
	return fl
}

func lowerPhysical(t format.Type) string {
	switch t {
	case format.Boolean:
		return "boolean"
	case format.Int32:
		return "int32"
	case format.Int64:
		return "int64"
	case format.Int96:
		return "int96"
	case format.Float:
		return "float"
	case format.Double:
		return "double"
	case format.ByteArray:
		return "binary"
	}
	return "fixed_len_byte_array"
}

func (s *parquetSource) schema() []field { return s.fields }

func (s *parquetSource) close() error { return nil }

func (s *parquetSource) next(want []bool) (*batch, error) {
	if s.rg >= s.numBatches() {
		return nil, io.EOF
	}
	s.rg++
	return s.batchAt(s.rg-1, want)
}

func (s *parquetSource) numBatches() int { return len(s.file.RowGroups()) }

// numRows gives the rows of the file, which lets Read make room for
// series ahead.
func (s *parquetSource) numRows() int64 { return s.file.NumRows() }

// batchAt decodes row group i; row groups may be decoded at the same time.
func (s *parquetSource) batchAt(i int, want []bool) (b *batch, err error) {
	defer recoverCorrupt(&err)
	g := s.file.RowGroups()[i]
	n64 := g.NumRows()
	if n64 < 0 || n64 > 1<<31 {
		return nil, fmt.Errorf("row group of %d rows", n64)
	}
	n := int(n64)
	old := &batch{cols: make([]*column, len(s.fields))}
	select {
	case old = <-s.free:
	default:
	}
	b = &batch{n: n, first: s.firsts[i], cols: make([]*column, len(s.fields))}
	chunks := g.ColumnChunks()
	err = b.fill(s.fields, want, func(i int, fl *field) (*column, error) {
		if s.leaves[i] >= len(chunks) {
			return nil, colErr(fl.name, "missing column chunk")
		}
		return readChunk(chunks[s.leaves[i]], fl, n, s.maxDefs[i], old.cols[i])
	})
	if err != nil {
		return nil, err
	}
	return b, nil
}

// readChunk decodes a column chunk of n rows of a flat column. Values are
// taken from the decoded page buffers; dictionary pages give codes into the
// chunk's dictionary without building a string per row.
func readChunk(chunk parquet.ColumnChunk, fl *field, n int, maxDef byte, old *column) (*column, error) {
	if old == nil {
		old = &column{}
	}
	c := &column{field: fl}
	switch fl.kind {
	case kindInt, kindTime:
		c.ints = reuse(old.ints, n)
	case kindFloat:
		c.floats = reuse(old.floats, n)
	case kindString:
		c.codes = reuse(old.codes, n)
	case kindBool:
		c.bools = make([]bool, n)
	}
	var (
		strs       interner // strings of plain pages, coded after the dictionary
		dict       parquet.Dictionary
		dictInts   []int64
		dictFloats []float64
	)
	pages := chunk.Pages()
	defer pages.Close()
	row := 0
	for row < n {
		p, err := pages.ReadPage()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, colErr(fl.name, "%v", err)
		}
		r := pageRun{defs: p.DefinitionLevels(), maxDef: maxDef, c: c, base: row, n: n}
		m := int(p.NumValues())
		switch d := p.Dictionary(); {
		case m > n-row || len(r.defs) > 0 && len(r.defs) != m:
			err = errors.New("page does not fit the row group")
		case fl.kind == kindBool:
			err = r.booleans(p, m)
		case d == nil:
			data := p.Data()
			err = r.plain(&data, &strs, int32(len(c.dict)))
		default:
			if d != dict {
				if dict != nil || len(strs.strs) > 0 {
					err = errors.New("second dictionary in a column chunk")
					break
				}
				dict = d
				dv := d.Page().Data()
				if fl.kind == kindString {
					c.dict = dictStrings(&dv)
				} else {
					dictInts, dictFloats, err = numbersOf(&dv, fl)
				}
			}
			if err == nil {
				data := p.Data()
				err = r.indexed(data.Int32(), len(c.dict)+len(dictInts)+len(dictFloats), dictInts, dictFloats)
			}
		}
		parquet.Release(p)
		if err != nil {
			return nil, colErr(fl.name, "%v", err)
		}
		row += m
	}
	if row != n {
		return nil, colErr(fl.name, "%d values for %d rows", row, n)
	}
	c.dict = append(c.dict, strs.strs...)
	return c, nil
}

func dictStrings(v *encoding.Values) []string {
	data, offs := v.ByteArray()
	out := make([]string, 0, max(len(offs)-1, 0))
	for k := 0; k+1 < len(offs); k++ {
		out = append(out, string(data[offs[k]:offs[k+1]]))
	}
	return out
}

// numbersOf converts decoded values to int64 (integer and time fields) or
// float64; it shares the buffer when no conversion is needed.
func numbersOf(v *encoding.Values, fl *field) ([]int64, []float64, error) {
	switch v.Kind() {
	case encoding.Int32:
		out := make([]int64, len(v.Int32()))
		if fl.unsigned {
			convertInto(out, v.Uint32())
		} else {
			convertInto(out, v.Int32())
		}
		return out, nil, nil
	case encoding.Int64:
		return v.Int64(), nil, nil
	case encoding.Float:
		out := make([]float64, len(v.Float()))
		convertInto(out, v.Float())
		return nil, out, nil
	case encoding.Double:
		return nil, v.Double(), nil
	case encoding.FixedLenByteArray:
		data, size := v.FixedLenByteArray()
		if size == 2 && fl.kind == kindFloat {
			out := make([]float64, len(data)/2)
			for i := range out {
				out[i] = float64(float16.FromLEBytes(data[2*i:]).Float32())
			}
			return nil, out, nil
		}
	}
	return nil, nil, fmt.Errorf("unexpected %s page", v.Kind())
}

// pageRun places the values of one page into rows base.. of a column.
type pageRun struct {
	defs   []byte // definition levels, empty when the column is required
	maxDef byte
	c      *column
	base   int
	n      int
}

// slots calls put(row, k) with the row of the k-th non-null value of the
// page, for have values, and marks the null rows.
func (r *pageRun) slots(have int, put func(row, k int)) error {
	if len(r.defs) == 0 {
		for k := 0; k < have; k++ {
			put(r.base+k, k)
		}
		return nil
	}
	k := 0
	for i, d := range r.defs {
		if d != r.maxDef {
			r.c.setNull(r.base+i, r.n)
			if r.c.codes != nil {
				r.c.codes[r.base+i] = -1
			}
			continue
		}
		if k >= have {
			return errors.New("page holds fewer values than its levels say")
		}
		put(r.base+i, k)
		k++
	}
	return nil
}

func place[T int32 | int64 | float64](r *pageRun, dst, src []T) error {
	if len(r.defs) == 0 {
		copy(dst[r.base:], src)
		return nil
	}
	return r.slots(len(src), func(row, k int) { dst[row] = src[k] })
}

func placeIndexed[T int64 | float64](r *pageRun, dst, dict []T, idx []int32) error {
	return r.slots(len(idx), func(row, k int) { dst[row] = dict[idx[k]] })
}

// plain places a page without dictionary; strings of a string column are
// coded from base on.
func (r *pageRun) plain(v *encoding.Values, strs *interner, base int32) error {
	c := r.c
	if c.kind == kindString {
		if v.Kind() != encoding.ByteArray {
			return fmt.Errorf("unexpected %s page", v.Kind())
		}
		data, offs := v.ByteArray()
		if len(offs) == 0 {
			offs = []uint32{0}
		}
		return r.slots(len(offs)-1, func(row, k int) {
			c.codes[row] = base + strs.codeBytes(data[offs[k]:offs[k+1]])
		})
	}
	ints, floats, err := numbersOf(v, c.field)
	switch {
	case err != nil:
		return err
	case c.ints != nil && ints != nil:
		return place(r, c.ints, ints)
	case c.floats != nil && floats != nil:
		return place(r, c.floats, floats)
	}
	return fmt.Errorf("unexpected %s page", v.Kind())
}

// indexed places a dictionary-encoded page: idx are the dictionary indexes
// of its non-null values, size the length of the dictionary.
func (r *pageRun) indexed(idx []int32, size int, dictInts []int64, dictFloats []float64) error {
	for _, j := range idx {
		if j < 0 || int(j) >= size {
			return fmt.Errorf("dictionary index %d out of range [0, %d)", j, size)
		}
	}
	c := r.c
	switch {
	case c.codes != nil:
		return place(r, c.codes, idx)
	case c.ints != nil && dictInts != nil:
		return placeIndexed(r, c.ints, dictInts, idx)
	case c.floats != nil && dictFloats != nil:
		return placeIndexed(r, c.floats, dictFloats, idx)
	}
	return errors.New("dictionary of an unexpected type")
}

// booleans places a boolean page through the generic value reader: boolean
// columns only occur in site registers, which are small.
func (r *pageRun) booleans(p parquet.Page, m int) error {
	vals := make([]parquet.Value, m)
	got, err := p.Values().ReadValues(vals)
	if err != nil && err != io.EOF {
		return err
	}
	if got != m {
		return errors.New("short boolean page")
	}
	for k, v := range vals {
		if v.IsNull() {
			r.c.setNull(r.base+k, r.n)
		} else {
			r.c.bools[r.base+k] = v.Boolean()
		}
	}
	return nil
}

// recycle hands back a batch whose data is no longer needed.
func (s *parquetSource) recycle(b *batch) {
	select {
	case s.free <- b:
	default:
	}
}

// reuse returns s resized to n, reallocated when too small.
func reuse[T any](s []T, n int) []T {
	if cap(s) >= n {
		return s[:n]
	}
	return make([]T, n)
}
