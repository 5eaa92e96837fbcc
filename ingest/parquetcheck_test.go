package ingest

import (
	"bytes"
	"encoding/binary"
	"math"
	"strings"
	"testing"

	"github.com/parquet-go/parquet-go"
	"github.com/parquet-go/parquet-go/encoding/thrift"
	"github.com/parquet-go/parquet-go/format"
)

// lyingParquet writes a small long dump with parquet-go, in two row groups,
// and replaces its footer by the one lie makes of it. The layout is that of
// apache/parquet-format (README, "File Format"): "PAR1", the column chunks,
// the Thrift compact FileMetaData, its 4-byte little-endian length, "PAR1".
func lyingParquet(t *testing.T, lie func(md *format.FileMetaData)) string {
	t.Helper()
	type row struct {
		Site  string  `parquet:"site"`
		Time  int64   `parquet:"time"`
		Value float64 `parquet:"value"`
	}
	var b bytes.Buffer
	w := parquet.NewGenericWriter[row](&b, parquet.MaxRowsPerRowGroup(50))
	rows := make([]row, 100)
	for i := range rows {
		rows[i] = row{"A", 1_700_000_000 + int64(i)*60, float64(i)}
	}
	if _, err := w.Write(rows); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	file := b.Bytes()
	n := int(binary.LittleEndian.Uint32(file[len(file)-8:]))
	var md format.FileMetaData
	if err := thrift.Unmarshal(new(thrift.CompactProtocol), file[len(file)-8-n:len(file)-8], &md); err != nil {
		t.Fatal(err)
	}
	lie(&md)
	footer, err := thrift.Marshal(new(thrift.CompactProtocol), &md)
	if err != nil {
		t.Fatal(err)
	}
	out := append(file[:len(file)-8-n:len(file)-8-n], footer...)
	out = binary.LittleEndian.AppendUint32(out, uint32(len(footer)))
	return writeFile(t, "lie.parquet", append(out, "PAR1"...))
}

// TestParquetFooterLies reads footers that lie about the file: each must be
// refused with an error saying how, not read as data (a chunk offset
// pointing at another column gave values like 8.8e-312) nor crash (2^40
// rows ran out of memory).
func TestParquetFooterLies(t *testing.T) {
	value := 2 // the leaf column "value"
	tests := []struct {
		name string
		lie  func(md *format.FileMetaData)
		want string
	}{
		{"truth", func(*format.FileMetaData) {}, ""},
		{"2^40 rows", func(md *format.FileMetaData) {
			md.NumRows = 1 << 40
			md.RowGroups[0].NumRows = 1<<40 - 50
		}, "beyond the limit"},
		{"rows of the file", func(md *format.FileMetaData) { md.NumRows = 1 << 40 }, "footer states 1099511627776 rows"},
		{"offset at another chunk", func(md *format.FileMetaData) {
			cm := &md.RowGroups[0].Columns[value].MetaData
			cm.DataPageOffset = md.RowGroups[0].Columns[1].MetaData.DataPageOffset
			cm.DictionaryPageOffset = 0
		}, "overlaps"},
		{"offset beyond the data", func(md *format.FileMetaData) {
			md.RowGroups[1].Columns[value].MetaData.DataPageOffset = math.MaxInt64 - 10
		}, "outside the data"},
		{"schema type", func(md *format.FileMetaData) { md.Schema[3].Type.V = format.Int64 }, "chunk of type DOUBLE, the schema says INT64"},
		{"chunk type", func(md *format.FileMetaData) { md.RowGroups[1].Columns[value].MetaData.Type = format.Int64 }, "chunk of type INT64"},
		{"values per row", func(md *format.FileMetaData) { md.RowGroups[0].Columns[value].MetaData.NumValues = 1 << 40 }, "values for 50 rows"},
		{"column path", func(md *format.FileMetaData) { md.RowGroups[0].Columns[value].MetaData.PathInSchema = []string{"time"} }, `chunk names column "time"`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			path := lyingParquet(t, tt.lie)
			ds, err := Read([]string{path}, Options{SiteCol: "site", TimeCol: "time", TimeUnit: "s"})
			if tt.want == "" {
				if err != nil {
					t.Fatalf("the true footer: %v", err)
				}
				if got := seriesOf(t, ds, "A", "value"); len(got.Values) != 100 || got.Values[99] != 99 {
					t.Fatalf("the true footer: %d values, last %v", len(got.Values), got.Values[len(got.Values)-1])
				}
				return
			}
			if err == nil || !strings.Contains(err.Error(), tt.want) || !strings.Contains(err.Error(), "footer does not fit") {
				t.Errorf("error %v, want one saying %q", err, tt.want)
			}
		})
	}
}
