package ingest

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// kind is how the values of a column are held once decoded.
type kind uint8

const (
	kindUnsupported kind = iota
	kindInt              // ints; bit patterns when unsigned
	kindFloat            // floats
	kindString           // codes into dict, -1 for null
	kindText             // text: cells of a CSV file, "" for null
	kindBool             // bools
	kindTime             // ints: count of unit nanoseconds since the Unix epoch
)

// field describes a column of a file as its schema gives it.
type field struct {
	name     string
	kind     kind
	typ      string // the type in the file's own terms, for messages
	why      string // kindUnsupported: why the column cannot be read
	unsigned bool   // kindInt: the values are unsigned (64-bit ones held as bit patterns)
	unit     int64  // kindTime: nanoseconds per unit
	naive    bool   // kindTime: not adjusted to UTC
	chanUnit string // the unit its field metadata gives (unitKey), "" for none
}

// numeric reports whether the values of the field can become float64
// readings; text may, depending on what it holds.
func (f *field) numeric() bool {
	return f.kind == kindInt || f.kind == kindFloat || f.kind == kindText
}

// column is one column of a batch, decoded. Only the slices of its kind are
// set.
type column struct {
	*field
	valid  []bool // nil when no value is null (kinds with a null slot)
	ints   []int64
	floats []float64
	dict   []string
	codes  []int32
	text   []string
	bools  []bool
}

// setNull marks row i of an n-row column null.
func (c *column) setNull(i, n int) {
	if c.valid == nil {
		c.valid = make([]bool, n)
		for j := range c.valid {
			c.valid[j] = true
		}
	}
	c.valid[i] = false
}

func (c *column) null(i int) bool { return c.valid != nil && !c.valid[i] }

// batch is a run of rows of one file with the columns asked for.
type batch struct {
	n     int
	first int64     // row of the file the batch starts at, from 0
	lines []int32   // CSV: line of each row
	cols  []*column // by field index; nil for columns not asked for
	// epoch is the first integer epoch time of the batch, as written, for
	// telling the unit it looks like; epochSeen when there is one.
	epoch     int64
	epochSeen bool
}

// sawEpoch records v as the batch's first integer epoch time.
func (b *batch) sawEpoch(v int64) {
	if !b.epochSeen {
		b.epoch, b.epochSeen = v, true
	}
}

// fill decodes the columns marked in want, once it has checked that each
// can be read, and keeps them in the batch.
func (b *batch) fill(fields []field, want []bool, decode func(i int, fl *field) (*column, error)) error {
	for i, w := range want {
		if !w {
			continue
		}
		fl := &fields[i]
		if fl.kind == kindUnsupported {
			return colErr(fl.name, "%s", fl.why)
		}
		c, err := decode(i, fl)
		if err != nil {
			return err
		}
		b.cols[i] = c
	}
	return nil
}

// errAt is a problem with a value of a column at row i of the batch.
func (b *batch) errAt(i int, column, format string, args ...any) *Error {
	e := colErr(column, format, args...)
	if b.lines != nil {
		e.Line = int(b.lines[i])
	} else {
		e.Row = b.first + int64(i) + 1
	}
	return e
}

// place says where row i of the batch is in its file, as errAt does.
func (b *batch) place(i int) string {
	if b.lines != nil {
		return fmt.Sprintf("line %d", b.lines[i])
	}
	return fmt.Sprintf("row %d", b.first+int64(i)+1)
}

// wrongType is the error for a column whose type cannot serve its role.
func wrongType(c *column, want string) *Error {
	if c.kind == kindUnsupported {
		return colErr(c.name, "%s", c.why)
	}
	return colErr(c.name, "%s values cannot be %s", c.typ, want)
}

// interner gives small codes to strings.
type interner struct {
	index map[string]int32
	strs  []string
}

func (t *interner) code(s string) int32 {
	if c, ok := t.index[s]; ok {
		return c
	}
	if t.index == nil {
		t.index = make(map[string]int32)
	}
	s = strings.Clone(s) // s may point into a buffer that is reused
	c := int32(len(t.strs))
	t.index[s] = c
	t.strs = append(t.strs, s)
	return c
}

// keys returns the column as codes into a table of strings, -1 for null:
// site ids and channel names. Integers become their decimal form.
func (b *batch) keys(c *column) (codes []int32, dict []string, err error) {
	switch c.kind {
	case kindString:
		return c.codes, c.dict, nil
	case kindText:
		var t interner
		codes = make([]int32, b.n)
		for i, s := range c.text {
			if s == "" {
				codes[i] = -1
			} else {
				codes[i] = t.code(s)
			}
		}
		return codes, t.strs, nil
	case kindInt:
		index := make(map[int64]int32)
		codes = make([]int32, b.n)
		for i, v := range c.ints {
			if c.null(i) {
				codes[i] = -1
				continue
			}
			code, ok := index[v]
			if !ok {
				code = int32(len(dict))
				index[v] = code
				if c.unsigned {
					dict = append(dict, strconv.FormatUint(uint64(v), 10))
				} else {
					dict = append(dict, strconv.FormatInt(v, 10))
				}
			}
			codes[i] = code
		}
		return codes, dict, nil
	}
	return nil, nil, wrongType(c, "ids (want strings or integers)")
}

// floats returns the column as float64 values with their validity (nil:
// all valid).
func (b *batch) floats(c *column) ([]float64, []bool, error) {
	switch c.kind {
	case kindFloat:
		return c.floats, c.valid, nil
	case kindInt:
		out := make([]float64, b.n)
		for i, v := range c.ints {
			if c.unsigned {
				out[i] = float64(uint64(v))
			} else {
				out[i] = float64(v)
			}
		}
		return out, c.valid, nil
	case kindText:
		out, valid, bad, _ := parseFloats(c.text)
		if bad >= 0 {
			return nil, nil, b.errAt(bad, c.name, "%q is not a number", c.text[bad])
		}
		return out, valid, nil
	}
	return nil, nil, wrongType(c, "readings (want integers or floats)")
}

// parseFloats reads CSV cells as numbers: blank cells are null. It returns
// the values, their validity (nil: all valid), the first cell that is not a
// number (-1: none) and the number of non-blank cells.
func parseFloats(cells []string) (vals []float64, valid []bool, bad, filled int) {
	vals = make([]float64, len(cells))
	for i, s := range cells {
		s = strings.TrimSpace(s)
		if s == "" {
			if valid == nil {
				valid = allTrue(len(cells))
			}
			valid[i] = false
			continue
		}
		filled++
		v, err := strconv.ParseFloat(s, 64)
		if err != nil && !isRangeErr(err) {
			return nil, nil, i, filled
		}
		vals[i] = v
	}
	return vals, valid, -1, filled
}

// isRangeErr tells a number too large for float64 (read as ±Inf) from one
// that is not a number at all.
func isRangeErr(err error) bool {
	ne, ok := err.(*strconv.NumError)
	return ok && ne.Err == strconv.ErrRange
}

func allTrue(n int) []bool {
	v := make([]bool, n)
	for i := range v {
		v[i] = true
	}
	return v
}

// Time states of a row.
const (
	timeOK uint8 = iota
	timeNull
	timeRange
)

// Bounds of the instants a Unix-nanosecond int64 holds.
const (
	minNanos = math.MinInt64
	maxNanos = math.MaxInt64
)

// times returns the column as Unix nanoseconds with a state per row (nil:
// all timeOK), and whether some time carried no zone. epochUnit is the
// length in nanoseconds of a unit of integer epochs.
func (b *batch) times(c *column, epochUnit int64) (ns []int64, state []uint8, naive bool, err error) {
	switch c.kind {
	case kindTime, kindInt:
		unit := epochUnit
		if c.kind == kindTime {
			unit, naive = c.unit, c.naive
		}
		// Converted in place: a batch is read once.
		ns = c.ints
		hi, lo := maxNanos/unit, minNanos/unit
		if c.unsigned {
			lo = 0 // a negative bit pattern is beyond the int64 range
		}
		mark := func(i int, s uint8) {
			if state == nil {
				state = make([]uint8, b.n)
			}
			state[i] = s
		}
		for i, v := range ns {
			if c.kind == kindInt && !c.null(i) {
				b.sawEpoch(v)
			}
			switch {
			case v > hi || v < lo:
				if !c.null(i) {
					mark(i, timeRange)
				}
			default:
				ns[i] = v * unit
			}
		}
		for i := range c.valid {
			if !c.valid[i] {
				mark(i, timeNull)
			}
		}
		return ns, state, naive, nil
	case kindString:
		// Parse each distinct string once.
		dictNs := make([]int64, len(c.dict))
		dictState := make([]uint8, len(c.dict))
		for j, s := range c.dict {
			t, zoned, st := parseTime(s)
			if st == parseBad {
				return nil, nil, false, colErr(c.name, "cannot read %q as a time (want RFC 3339)", s)
			}
			naive = naive || !zoned
			dictNs[j] = t
			if st == parseRange {
				dictState[j] = timeRange
			}
		}
		ns = make([]int64, b.n)
		state = make([]uint8, b.n)
		for i, code := range c.codes {
			if code < 0 {
				state[i] = timeNull
				continue
			}
			ns[i], state[i] = dictNs[code], dictState[code]
		}
		return ns, state, naive, nil
	case kindText:
		ns = make([]int64, b.n)
		state = make([]uint8, b.n)
		for i, s := range c.text {
			s = strings.TrimSpace(s)
			if s == "" {
				state[i] = timeNull
				continue
			}
			if v, err := strconv.ParseInt(s, 10, 64); err == nil {
				b.sawEpoch(v)
				if v > maxNanos/epochUnit || v < minNanos/epochUnit {
					state[i] = timeRange
				} else {
					ns[i] = v * epochUnit
				}
				continue
			}
			t, zoned, st := parseTime(s)
			switch st {
			case parseBad:
				return nil, nil, false, b.errAt(i, c.name, "cannot read %q as a time (want RFC 3339 or an integer epoch)", s)
			case parseRange:
				state[i] = timeRange
			}
			naive = naive || !zoned
			ns[i] = t
		}
		return ns, state, naive, nil
	}
	return nil, nil, false, wrongType(c, "times (want timestamps, dates, integer epochs or RFC 3339 strings)")
}

// number is the set of Go types Parquet and Arrow hold numbers in.
type number interface {
	~int8 | ~int16 | ~int32 | ~int64 | ~uint8 | ~uint16 | ~uint32 | ~uint64 | ~float32 | ~float64
}

// convertInto converts src into dst, which is at least as long.
func convertInto[S, D number](dst []D, src []S) {
	for i, v := range src {
		dst[i] = D(v)
	}
}

// codeBytes is code for a byte slice; the map lookup does not copy b.
func (t *interner) codeBytes(b []byte) int32 {
	if c, ok := t.index[string(b)]; ok {
		return c
	}
	return t.code(string(b))
}
