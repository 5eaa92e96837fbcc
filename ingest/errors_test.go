package ingest

import (
	"errors"
	"os"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/kinmap/kinmap/internal/parquettest"
)

const goodCSV = "site,time,channel,value\nA,2024-01-01T00:00:00Z,flow,1\n"

func smallRecord(t testing.TB) arrow.RecordBatch {
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "site", Type: arrow.BinaryTypes.String},
		{Name: "time", Type: &arrow.TimestampType{Unit: arrow.Millisecond, TimeZone: "UTC"}},
		{Name: "channel", Type: arrow.BinaryTypes.String},
		{Name: "value", Type: arrow.PrimitiveTypes.Float64},
	}, nil)
	var rows [][]any
	for i := 0; i < 50; i++ {
		rows = append(rows, []any{"A", i * 1000, "flow", float64(i)})
	}
	return record(t, schema, rows)
}

func truncated(t *testing.T, path, name string) string {
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return writeFile(t, name, b[:len(b)/2])
}

func TestBadInput(t *testing.T) {
	rec := smallRecord(t)
	defer rec.Release()
	goodParquet := writeArrowParquet(t, "good.parquet", rec, 10, true)
	int96Rec := record(t, arrow.NewSchema([]arrow.Field{
		{Name: "site", Type: arrow.BinaryTypes.String},
		{Name: "time", Type: &arrow.TimestampType{Unit: arrow.Nanosecond, TimeZone: "UTC"}},
		{Name: "v", Type: arrow.PrimitiveTypes.Float64},
	}, nil), [][]any{{"A", 1, 1.0}})
	defer int96Rec.Release()
	stringValues := record(t, arrow.NewSchema([]arrow.Field{
		{Name: "site", Type: arrow.BinaryTypes.String},
		{Name: "time", Type: arrow.PrimitiveTypes.Int64},
		{Name: "channel", Type: arrow.BinaryTypes.String},
		{Name: "value", Type: arrow.BinaryTypes.String},
	}, nil), [][]any{{"A", 1, "flow", "high"}})
	defer stringValues.Release()
	floatSites := record(t, arrow.NewSchema([]arrow.Field{
		{Name: "site", Type: arrow.PrimitiveTypes.Float64},
		{Name: "time", Type: arrow.PrimitiveTypes.Int64},
		{Name: "v", Type: arrow.PrimitiveTypes.Float64},
	}, nil), [][]any{{1.5, 1, 1.0}})
	defer floatSites.Release()

	tests := []struct {
		name  string
		paths func() []string
		edit  func(*Options)
		usage bool
		want  []string // parts of the message
	}{
		{"truncated parquet", func() []string { return []string{truncated(t, goodParquet, "cut.parquet")} },
			nil, false, []string{"cut.parquet: ", "Parquet"}},
		{"truncated arrow file", func() []string { return []string{truncated(t, writeArrowIPC(t, "a.arrow", false, rec), "cut.arrow")} },
			nil, false, []string{"cut.arrow: "}},
		{"truncated arrow stream", func() []string {
			return []string{truncated(t, writeArrowIPC(t, "a.arrows", true, rec), "cut.arrows")}
		}, nil, false, []string{"cut.arrows: "}},
		{"truncated gzip", func() []string {
			gz := gzipped(t, []byte(strings.Repeat(goodCSV, 200)))
			return []string{writeFile(t, "cut.csv.gz", gz[:len(gz)/2])}
		}, nil, false, []string{"cut.csv.gz: "}},
		{"binary with a parquet name", func() []string {
			return []string{writeFile(t, "fake.parquet", []byte{0x00, 0x01, 0x02, 0x03, 0x89, 0xfe, 0x00, 0x10})}
		}, nil, false, []string{"fake.parquet: not a Parquet, Arrow IPC, CSV or GeoJSON file"}},
		{"empty file", func() []string { return []string{writeFile(t, "empty.csv", nil)} },
			nil, false, []string{"empty.csv: empty file"}},
		{"only a byte order mark", func() []string { return []string{writeFile(t, "bom.csv", utf8BOM)} },
			nil, false, []string{"bom.csv: empty file"}},
		{"header only", func() []string { return []string{writeFile(t, "header.csv", []byte("site,time,channel,value\n"))} },
			nil, false, []string{"no readings", "header.csv"}},
		{"missing column", func() []string { return []string{writeFile(t, "m.csv", []byte("site,when,value\nA,1,2\n"))} },
			nil, false, []string{`m.csv: column "time": no such column (the file has "site", "when", "value")`}},
		{"text in the value column", func() []string {
			return []string{writeFile(t, "v.csv", []byte(goodCSV+"A,2024-01-01T00:01:00Z,flow,high\n"))}
		}, nil, false, []string{`v.csv: line 3: column "value": "high" is not a number`}},
		{"string value column", func() []string { return []string{writeArrowParquet(t, "s.parquet", stringValues, 10, true)} },
			nil, false, []string{`s.parquet: column "value": `, "cannot be readings"}},
		{"float site ids", func() []string { return []string{writeArrowIPC(t, "f.arrow", false, floatSites)} },
			nil, false, []string{`f.arrow: column "site": float64 values cannot be ids`}},
		{"int96 timestamps", func() []string {
			return []string{writeArrowParquetWith(t, "i96.parquet", int96Rec, parquettest.WriteOptions{RowGroup: 10, Int96: true})}
		}, nil, false, []string{`i96.parquet: column "time": int96 timestamps are not supported`}},
		{"unreadable time", func() []string {
			return []string{writeFile(t, "t.csv", []byte("site,time,v\nA,yesterday,1\n"))}
		}, nil, false, []string{`t.csv: line 2: column "time": cannot read "yesterday" as a time`}},
		{"ragged row", func() []string { return []string{writeFile(t, "r.csv", []byte(goodCSV+"A,2024-01-01T00:01:00Z\n"))} },
			nil, false, []string{"r.csv: line 3: wrong number of fields"}},
		{"bad quote", func() []string { return []string{writeFile(t, "q.csv", []byte(goodCSV+"A,\"2024\"x,flow,1\n"))} },
			nil, false, []string{"q.csv: line 3: "}},
		{"repeated header name", func() []string { return []string{writeFile(t, "h.csv", []byte("site,time,v,v\nA,1,2,3\n"))} },
			nil, false, []string{`h.csv: line 1: column "v": column name repeated`}},
		{"mixed layouts", func() []string {
			return []string{writeFile(t, "long.csv", []byte(goodCSV)), writeFile(t, "wide.csv", []byte("site,time,flow\nA,1,2\n"))}
		}, nil, false, []string{"wide.csv: wide layout, but the files before are long"}},
		{"unknown channel", func() []string { return []string{writeFile(t, "c.csv", []byte(goodCSV))} },
			func(o *Options) { o.Channels = []string{"flow", "pressure"} }, false, []string{`c.csv: selected channel "pressure" is not in the dump, whose channels are "flow"`}},
		{"unknown channel of a wide dump", func() []string { return []string{writeFile(t, "w.csv", []byte("site,time,temp,flow\nA,1,2,3\n"))} },
			func(o *Options) { o.Channels = []string{"rain"} }, false, []string{`w.csv: selected channel "rain" is not in the dump, whose channels are "flow", "temp"`}},
		{"non-numeric selected channel", func() []string { return []string{writeFile(t, "n.csv", []byte("site,time,note\nA,1,hello\n"))} },
			func(o *Options) { o.Channels = []string{"note"} }, false, []string{`n.csv: line 2: column "note": "hello" is not a number`}},
		{"position out of range", func() []string {
			return []string{writeFile(t, "p.csv", []byte("site,time,lat,lon,v\nA,1,48.1,11.5,1\nA,2,148.1,11.5,1\n"))}
		}, nil, false, []string{"p.csv: line 3: latitude 148.1", "look swapped"}},
		{"one latitude of 999", func() []string {
			return []string{writeFile(t, "p.csv", []byte("site,time,lat,lon,v\nA,1,48.1,11.5,1\nA,2,999,11.5,1\n"))}
		}, nil, false, []string{`p.csv: line 3: latitude 999 (column "lat") is outside [-90, 90]`}},
		{"NaN latitude", func() []string {
			return []string{writeFile(t, "p.csv", []byte("site,time,lat,lon,v\nA,1,48.1,11.5,1\nA,2,NaN,11.5,1\n"))}
		}, nil, false, []string{`p.csv: line 3: latitude NaN (column "lat") is not a number`}},
		{"lat without lon", func() []string { return []string{writeFile(t, "l.csv", []byte("site,time,lat,v\nA,1,48.1,1\n"))} },
			nil, false, []string{`l.csv: column "lat": position column without its partner "lon"`}},
		{"unknown time unit", func() []string { return []string{writeFile(t, "u.csv", []byte(goodCSV))} },
			func(o *Options) { o.TimeUnit = "minutes" }, true, []string{`unknown time unit "minutes"`}},
		{"empty site column name", func() []string { return []string{writeFile(t, "u.csv", []byte(goodCSV))} },
			func(o *Options) { o.SiteCol = "" }, true, []string{"site column name is empty"}},
		{"pattern matching nothing", func() []string { return []string{t.TempDir() + "/*.parquet"} },
			nil, true, []string{"matches no file"}},
		{"missing file", func() []string { return []string{t.TempDir() + "/none.csv"} },
			nil, true, []string{"none.csv: no such file"}},
		{"no paths", func() []string { return nil }, nil, true, []string{"no input file"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			opt := DefaultOptions()
			if tt.edit != nil {
				tt.edit(&opt)
			}
			_, err := Read(tt.paths(), opt)
			if err == nil {
				t.Fatal("no error")
			}
			msg := err.Error()
			if !strings.HasPrefix(msg, "ingest: ") || strings.Contains(msg, "\n") {
				t.Errorf("not a one-line ingest error: %q", msg)
			}
			for _, part := range tt.want {
				if !strings.Contains(msg, part) {
					t.Errorf("error %q lacks %q", msg, part)
				}
			}
			if errors.Is(err, ErrUsage) != tt.usage {
				t.Errorf("errors.Is(%q, ErrUsage) = %v, want %v", msg, !tt.usage, tt.usage)
			}
			var e *Error
			if !tt.usage && !errors.As(err, &e) {
				t.Errorf("data error %q is not an *Error", msg)
			}
		})
	}
}

// TestDetectionOverName reads a CSV file whose name says Parquet: the
// content decides.
func TestDetectionOverName(t *testing.T) {
	ds := mustRead(t, []string{writeFile(t, "dump.parquet", []byte(goodCSV))}, nil)
	if ds.Summary.Files[0].Format != formatCSV || ds.Summary.Readings != 1 {
		t.Errorf("summary %+v", ds.Summary)
	}
}

func TestValidate(t *testing.T) {
	tests := []struct {
		name string
		edit func(*Options)
		want string // "" for valid
	}{
		{"defaults", func(*Options) {}, ""},
		{"every unit", func(o *Options) { o.TimeUnit = "us" }, ""},
		{"no channel or value column", func(o *Options) { o.ChannelCol, o.ValueCol = "", "" }, ""},
		{"no position columns", func(o *Options) { o.LatCol, o.LonCol = "", "" }, ""},
		{"unit in capitals", func(o *Options) { o.TimeUnit = "MS" }, "unknown time unit"},
		{"empty unit", func(o *Options) { o.TimeUnit = "" }, "unknown time unit"},
		{"empty time column", func(o *Options) { o.TimeCol = "" }, "time column name is empty"},
		{"lat only", func(o *Options) { o.LonCol = "" }, "both a lat and a lon"},
		{"one name two roles", func(o *Options) { o.ValueCol = "time" }, `"time" is named as both`},
		{"empty channel", func(o *Options) { o.Channels = []string{"a", ""} }, "empty channel name"},
		{"repeated channel", func(o *Options) { o.Channels = []string{"a", "a"} }, `"a" is listed twice`},
		{"channel is the site", func(o *Options) { o.Channels = []string{"site"} }, "is the site column"},
	}
	for _, tt := range tests {
		o := DefaultOptions()
		tt.edit(&o)
		err := o.Validate()
		switch {
		case tt.want == "" && err != nil:
			t.Errorf("%s: %v", tt.name, err)
		case tt.want != "" && (err == nil || !strings.Contains(err.Error(), tt.want) || !errors.Is(err, ErrUsage)):
			t.Errorf("%s: error %v, want a usage error with %q", tt.name, err, tt.want)
		}
	}
}

// Names that are not UTF-8 are refused naming the row and the encoding
// problem: written as they are they make invalid GeoJSON (RFC 8259 section
// 8.1), and replaced by U+FFFD the distinct ids caf\xe9 and caf\xe8 merged
// into one site.
func TestNotUTF8(t *testing.T) {
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "site", Type: arrow.BinaryTypes.String},
		{Name: "time", Type: arrow.PrimitiveTypes.Int64},
		{Name: "flow", Type: arrow.PrimitiveTypes.Float64},
	}, nil)
	rec := record(t, schema, [][]any{{"café", 1, 1.0}, {"caf\xe9", 2, 1.0}, {"caf\xe8", 3, 1.0}})
	defer rec.Release()
	latin1 := "site,time,flow\ncaf\xe9,1,1\ncaf\xe8,2,1\n"
	late := "site,time,flow\n" + strings.Repeat("plain,1,1\n", 500) + "caf\xe9,1,1\n"
	tests := []struct {
		name, path, want string
	}{
		{"arrow site ids", writeArrowIPC(t, "ids.arrow", false, rec), `row 2: column "site": site id "caf\xe9" is not UTF-8 (byte 0xe9 at offset 3)`},
		{"Latin-1 CSV", writeFile(t, "latin1.csv", []byte(latin1)), "line 2: text that is not UTF-8 (byte 0xe9)"},
		{"Latin-1 past the head", writeFile(t, "late.csv", []byte(late)), `line 502: column "site": site id "caf\xe9" is not UTF-8`},
		{"Latin-1 channel", writeFile(t, "long.csv", []byte("site,time,channel,value\na,1,d\xe9bit,1\n")), "line 2: text that is not UTF-8 (byte 0xe9)"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := Read([]string{tt.path}, DefaultOptions())
			if err == nil || !strings.Contains(err.Error(), tt.want) || !strings.Contains(err.Error(), "convert it to UTF-8") {
				t.Errorf("error %v, want one saying %q", err, tt.want)
			}
		})
	}
}

// Integer epochs read in the wrong unit once ended in "time out of range"
// (milliseconds read as seconds) or in a coverage error far downstream
// (seconds read as milliseconds). The summary, and the error when nothing
// is left, say which unit the values look like. 1780000000 s is
// 2026-05-28T20:26:40Z (date -u -d @1780000000).
func TestEpochUnitHint(t *testing.T) {
	tests := []struct {
		name, cells, unit, likely string
		fails                     bool
	}{
		{"ms read as s", "1780000000000", "s", "ms", true},
		{"s read as ms", "1780000000", "ms", "s", false},
		{"us read as ns", "1780000000000000", "ns", "us", false},
		{"s read as s", "1780000000", "s", "", false},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			path := writeFile(t, "epochs.csv", []byte("site,time,channel,value\na,"+tt.cells+",flow,1\n"))
			ds, err := Read([]string{path}, Options{SiteCol: "site", TimeCol: "time", ChannelCol: "channel", ValueCol: "value", TimeUnit: tt.unit})
			var ue *UnitError
			switch {
			case tt.fails:
				if !errors.As(err, &ue) || ue.Likely != tt.likely || !strings.Contains(err.Error(), "look like epochs in milliseconds, not seconds") {
					t.Fatalf("error %v, want one saying the times look like %s", err, tt.likely)
				}
			case err != nil:
				t.Fatal(err)
			case tt.likely == "":
				if ds.Summary.EpochUnit != nil {
					t.Errorf("hint %v for times in the unit given", ds.Summary.EpochUnit)
				}
			case ds.Summary.EpochUnit == nil || ds.Summary.EpochUnit.Likely != tt.likely || ds.Summary.EpochUnit.Given != tt.unit:
				t.Errorf("hint %+v, want %s for %s", ds.Summary.EpochUnit, tt.likely, tt.unit)
			}
		})
	}
}
