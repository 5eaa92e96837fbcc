package ingest

import (
	"bytes"
	"compress/gzip"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/kinmap/kinmap/internal/parquettest"
)

// writeFile writes content to a new file of the test's temporary directory.
func writeFile(t testing.TB, name string, content []byte) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(path, content, 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

func gzipped(t testing.TB, content []byte) []byte {
	t.Helper()
	var b bytes.Buffer
	w := gzip.NewWriter(&b)
	if _, err := w.Write(content); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// record builds an Arrow record batch from rows; nil is a null.
func record(t testing.TB, schema *arrow.Schema, rows [][]any) arrow.RecordBatch {
	t.Helper()
	b := array.NewRecordBuilder(memory.DefaultAllocator, schema)
	defer b.Release()
	for _, row := range rows {
		for j, v := range row {
			appendValue(t, b.Field(j), v)
		}
	}
	return b.NewRecordBatch()
}

func appendValue(t testing.TB, fb array.Builder, v any) {
	t.Helper()
	if v == nil {
		fb.AppendNull()
		return
	}
	switch fb := fb.(type) {
	case *array.StringBuilder:
		fb.Append(v.(string))
	case *array.Int8Builder:
		fb.Append(int8(v.(int)))
	case *array.Int16Builder:
		fb.Append(int16(v.(int)))
	case *array.Int32Builder:
		fb.Append(int32(v.(int)))
	case *array.Int64Builder:
		fb.Append(toInt64(v))
	case *array.Uint8Builder:
		fb.Append(uint8(v.(int)))
	case *array.Uint16Builder:
		fb.Append(uint16(v.(int)))
	case *array.Uint32Builder:
		fb.Append(uint32(v.(int)))
	case *array.Uint64Builder:
		fb.Append(v.(uint64))
	case *array.Float32Builder:
		fb.Append(v.(float32))
	case *array.Float64Builder:
		fb.Append(v.(float64))
	case *array.BooleanBuilder:
		fb.Append(v.(bool))
	case *array.TimestampBuilder:
		fb.Append(arrow.Timestamp(toInt64(v)))
	case *array.Date32Builder:
		fb.Append(arrow.Date32(v.(int)))
	default:
		t.Fatalf("no test support for %T", fb)
	}
}

func toInt64(v any) int64 {
	switch v := v.(type) {
	case int:
		return int64(v)
	case int64:
		return v
	}
	panic("not an integer")
}

// writeArrowParquet writes a record batch as Parquet with arrow-go's own
// Parquet implementation (package parquettest), independent of
// parquet-go, in row groups of at most rowGroup rows, dictionary-encoded
// when dict.
func writeArrowParquet(t testing.TB, name string, rec arrow.RecordBatch, rowGroup int64, dict bool) string {
	t.Helper()
	return writeArrowParquetWith(t, name, rec, parquettest.WriteOptions{RowGroup: rowGroup, Dictionary: dict})
}

// writeArrowParquetWith is writeArrowParquet with all of parquettest's
// options.
func writeArrowParquetWith(t testing.TB, name string, rec arrow.RecordBatch, o parquettest.WriteOptions) string {
	t.Helper()
	var b bytes.Buffer
	if err := parquettest.WriteRecord(&b, rec, o); err != nil {
		t.Fatal(err)
	}
	return writeFile(t, name, b.Bytes())
}

// writeArrowIPC writes record batches as an Arrow IPC file or stream with
// arrow-go's ipc writers.
func writeArrowIPC(t testing.TB, name string, stream bool, recs ...arrow.RecordBatch) string {
	t.Helper()
	var b bytes.Buffer
	type writer interface {
		Write(arrow.RecordBatch) error
		Close() error
	}
	var w writer
	if stream {
		w = ipc.NewWriter(&b, ipc.WithSchema(recs[0].Schema()))
	} else {
		fw, err := ipc.NewFileWriter(&b, ipc.WithSchema(recs[0].Schema()))
		if err != nil {
			t.Fatal(err)
		}
		w = fw
	}
	for _, rec := range recs {
		if err := w.Write(rec); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return writeFile(t, name, b.Bytes())
}

// mustTime parses an RFC 3339 string with the standard library, the
// reference the tests hold the package's readers to.
func mustTime(t testing.TB, s string) time.Time {
	t.Helper()
	v, err := time.Parse(time.RFC3339Nano, s)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// mustRead reads dumps with options changed by edit.
func mustRead(t testing.TB, paths []string, edit func(*Options)) *Dataset {
	t.Helper()
	opt := DefaultOptions()
	if edit != nil {
		edit(&opt)
	}
	ds, err := Read(paths, opt)
	if err != nil {
		t.Fatal(err)
	}
	checkDataset(t, ds)
	return ds
}

// seriesOf gives the readings of one site and channel.
func seriesOf(t testing.TB, ds *Dataset, site, channel string) Series {
	t.Helper()
	for _, s := range ds.Sites {
		if s.ID == site {
			ser, ok := s.Series[channel]
			if !ok {
				t.Fatalf("site %s has no channel %s", site, channel)
			}
			return ser
		}
	}
	t.Fatalf("no site %s", site)
	return Series{}
}
