package scenarios

import (
	"io"
	"iter"
	"math"
	"slices"

	"github.com/parquet-go/parquet-go"
)

// rowGroups is the number of row groups a Parquet file is split into, so
// that readers meet more than one.
const rowGroups = 8

// Kinds of Parquet column.
const (
	textColumn     = iota // string, dictionary encoded
	timeColumn            // TIMESTAMP(MILLIS, adjusted to UTC)
	numberColumn          // double
	optionalColumn        // optional double, null for NaN
)

type parquetColumn struct {
	name string
	kind int
}

// orderedGroup is a Parquet group whose fields keep the given order rather
// than the alphabetical order of parquet.Group.
type orderedGroup struct {
	parquet.Group
	order []string
}

func (g orderedGroup) Fields() []parquet.Field {
	fields := g.Group.Fields()
	slices.SortStableFunc(fields, func(a, b parquet.Field) int {
		return slices.Index(g.order, a.Name()) - slices.Index(g.order, b.Name())
	})
	return fields
}

// longRecord is a row of the long layout of a fixed fleet.
type longRecord struct {
	Site    string  `parquet:"site,dict"`
	Time    int64   `parquet:"time,timestamp(millisecond)"`
	Channel string  `parquet:"channel,dict"`
	Value   float64 `parquet:"value"`
}

// mobileRecord is a row of the long layout of a mobile fleet.
type mobileRecord struct {
	Site    string   `parquet:"site,dict"`
	Time    int64    `parquet:"time,timestamp(millisecond)"`
	Channel string   `parquet:"channel,dict"`
	Value   float64  `parquet:"value"`
	Lat     *float64 `parquet:"lat,optional"`
	Lon     *float64 `parquet:"lon,optional"`
}

func (f *Fleet) writeLongParquet(w io.Writer) error {
	record := func(r longRow) longRecord {
		s := f.Sites[r.site]
		return longRecord{s.ID, s.Readings.Times[r.row] / 1e6, f.Channels[r.channel].Name, r.value}
	}
	if !f.Mobile {
		return writeRecordsParquet(w, f, record)
	}
	return writeRecordsParquet(w, f, func(r longRow) mobileRecord {
		l := record(r)
		m := mobileRecord{Site: l.Site, Time: l.Time, Channel: l.Channel, Value: l.Value}
		// Point into the readings rather than allocate; nil is null.
		if rd := f.Sites[r.site].Readings; !math.IsNaN(rd.Lat[r.row]) {
			m.Lat, m.Lon = &rd.Lat[r.row], &rd.Lon[r.row]
		}
		return m
	})
}

// writeRecordsParquet writes the long layout with the column types of T.
func writeRecordsParquet[T any](w io.Writer, f *Fleet, record func(longRow) T) error {
	pw := parquet.NewGenericWriter[T](w,
		parquet.Compression(&parquet.Snappy),
		parquet.MaxRowsPerRowGroup(groupRows(f.longCount())))
	buf := make([]T, 0, 4096)
	for r := range f.longRows() {
		if buf = append(buf, record(r)); len(buf) == cap(buf) {
			if _, err := pw.Write(buf); err != nil {
				return err
			}
			buf = buf[:0]
		}
	}
	if _, err := pw.Write(buf); err != nil {
		return err
	}
	return pw.Close()
}

// groupRows returns the row group size that splits n rows into rowGroups.
func groupRows(n int) int64 {
	return int64(max(1, (n+rowGroups-1)/rowGroups))
}

func (f *Fleet) writeWideParquet(w io.Writer) error {
	cols := []parquetColumn{{"site", textColumn}, {"time", timeColumn}}
	for _, c := range f.Channels {
		cols = append(cols, parquetColumn{c.Name, optionalColumn})
	}
	if f.Mobile {
		cols = append(cols, parquetColumn{"lat", optionalColumn}, parquetColumn{"lon", optionalColumn})
	}
	ids, _ := f.byteNames()
	n := 0
	for _, s := range f.Sites {
		n += s.Readings.Len()
	}
	rows := func(yield func(parquet.Row) bool) {
		row := make(parquet.Row, len(cols))
		for si, s := range f.Sites {
			for i, t := range s.Readings.Times {
				row[0] = textValue(ids[si], 0)
				row[1] = timeValue(t, 1)
				for ch, values := range s.Readings.Values {
					row[2+ch] = numberValue(values[i], 2+ch, true)
				}
				if f.Mobile {
					c := 2 + len(f.Channels)
					lat, lon := s.Readings.position(i)
					row[c], row[c+1] = numberValue(lat, c, true), numberValue(lon, c+1, true)
				}
				if !yield(row) {
					return
				}
			}
		}
	}
	return writeParquet(w, cols, n, rows)
}

// byteNames returns the site IDs and channel names as byte slices, made once
// for all rows.
func (f *Fleet) byteNames() (ids, channels [][]byte) {
	for _, s := range f.Sites {
		ids = append(ids, []byte(s.ID))
	}
	for _, c := range f.Channels {
		channels = append(channels, []byte(c.Name))
	}
	return ids, channels
}

// writeParquet writes n rows into a Snappy-compressed Parquet file with the
// given columns, each row holding one value per column in column order.
func writeParquet(w io.Writer, cols []parquetColumn, n int, rows iter.Seq[parquet.Row]) error {
	group := orderedGroup{Group: parquet.Group{}}
	for _, c := range cols {
		var node parquet.Node
		switch c.kind {
		case textColumn:
			node = parquet.Encoded(parquet.String(), &parquet.RLEDictionary)
		case timeColumn:
			node = parquet.Timestamp(parquet.Millisecond)
		case numberColumn:
			node = parquet.Leaf(parquet.DoubleType)
		case optionalColumn:
			node = parquet.Optional(parquet.Leaf(parquet.DoubleType))
		}
		group.Group[c.name] = node
		group.order = append(group.order, c.name)
	}
	pw := parquet.NewWriter(w,
		parquet.NewSchema("readings", group),
		parquet.Compression(&parquet.Snappy),
		parquet.MaxRowsPerRowGroup(groupRows(n)),
	)
	const batch = 1024
	buf := make([]parquet.Row, batch)
	for i := range buf {
		buf[i] = make(parquet.Row, len(cols))
	}
	k := 0
	for row := range rows {
		copy(buf[k], row) // the producer reuses its row
		if k++; k == batch {
			if _, err := pw.WriteRows(buf); err != nil {
				return err
			}
			k = 0
		}
	}
	if _, err := pw.WriteRows(buf[:k]); err != nil {
		return err
	}
	return pw.Close()
}

func textValue(b []byte, col int) parquet.Value {
	return parquet.ByteArrayValue(b).Level(0, 0, col)
}

// timeValue converts Unix nanoseconds to a millisecond timestamp.
func timeValue(ns int64, col int) parquet.Value {
	return parquet.Int64Value(ns/1e6).Level(0, 0, col)
}

func numberValue(v float64, col int, optional bool) parquet.Value {
	switch {
	case !optional:
		return parquet.DoubleValue(v).Level(0, 0, col)
	case math.IsNaN(v):
		return parquet.NullValue().Level(0, 0, col)
	}
	return parquet.DoubleValue(v).Level(0, 1, col)
}
