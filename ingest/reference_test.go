package ingest

import (
	"encoding/csv"
	"math"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// reading is one row of the reference dump; a nil field is a null.
type reading struct {
	site    any
	t       time.Time
	channel string
	value   any
}

// referenceRows is a small long dump with the awkward cases: rows out of
// time order, a repeated (site, channel, time) whose later value must win,
// nulls, NaN, infinities and floats that need all 17 digits.
func referenceRows() []reading {
	base := time.Date(2024, 5, 6, 7, 0, 0, 0, time.UTC)
	var rows []reading
	for k := 7; k >= 0; k-- { // newest first: the reader must sort
		for _, site := range []string{"A", "B", "C"} {
			for j, ch := range []string{"flow", "temp"} {
				v := float64(k)*0.1 + float64(j) + 1/3.0
				rows = append(rows, reading{site, base.Add(time.Duration(k) * 15 * time.Minute), ch, v})
			}
		}
	}
	at := func(k int) time.Time { return base.Add(time.Duration(k) * 15 * time.Minute) }
	return append(rows,
		reading{"A", at(3), "flow", 42.125},                   // replaces the reading at 3
		reading{"B", at(9), "flow", nil},                      // null value
		reading{"B", at(10), "flow", math.NaN()},              // NaN
		reading{"C", at(11), "temp", math.Inf(-1)},            // -Inf
		reading{nil, at(12), "temp", 1.0},                     // null site
		reading{"C", at(13), "temp", 5e-324},                  // smallest subnormal
		reading{"A", at(14), "temp", -1.7976931348623157e308}, // a historian's bad-quality marker
		reading{"A", at(15), "temp", 9.999999999999999e29},    // the largest kept below the sentinel rule
	)
}

// expectedSiteDrops applies the drop rules to the rows directly and counts
// the drops by site and reason; a row without a site has none.
func expectedSiteDrops(rows []reading) map[string]map[string]int64 {
	out := map[string]map[string]int64{}
	for _, r := range rows {
		site, ok := r.site.(string)
		if !ok {
			continue
		}
		v, ok := r.value.(float64)
		reason := ""
		switch {
		case !ok:
			reason = DropNullValue
		case math.IsNaN(v):
			reason = DropNaN
		case math.IsInf(v, 0):
			reason = DropInf
		case math.Abs(v) >= 1e30:
			reason = DropSentinel
		default:
			continue
		}
		if out[site] == nil {
			out[site] = map[string]int64{}
		}
		out[site][reason]++
	}
	return out
}

// expectedSeries applies the documented rule to the rows directly: last
// read wins, nulls, NaN, infinities and sentinels (magnitude 1e30 or more)
// dropped, times ascending.
func expectedSeries(rows []reading) map[string]Series {
	last := map[string]map[int64]float64{}
	for _, r := range rows {
		v, ok := r.value.(float64)
		if r.site == nil || !ok || math.IsNaN(v) || math.IsInf(v, 0) || math.Abs(v) >= 1e30 {
			continue
		}
		key := r.site.(string) + "/" + r.channel
		if last[key] == nil {
			last[key] = map[int64]float64{}
		}
		last[key][r.t.UnixNano()] = v
	}
	out := map[string]Series{}
	for key, m := range last {
		var s Series
		for t := range m {
			s.Times = append(s.Times, t)
		}
		slices.Sort(s.Times)
		for _, t := range s.Times {
			s.Values = append(s.Values, m[t])
		}
		out[key] = s
	}
	return out
}

func flatten(ds *Dataset) map[string]Series {
	out := map[string]Series{}
	for _, s := range ds.Sites {
		for ch, ser := range s.Series {
			out[s.ID+"/"+ch] = ser
		}
	}
	return out
}

func referenceCSV(t *testing.T, rows []reading) []byte {
	var b strings.Builder
	w := csv.NewWriter(&b)
	w.Write([]string{"site", "time", "channel", "value"})
	for _, r := range rows {
		site, value := "", ""
		if r.site != nil {
			site = r.site.(string)
		}
		if v, ok := r.value.(float64); ok {
			value = strconv.FormatFloat(v, 'g', -1, 64)
		}
		// The standard library writes the RFC 3339 form.
		w.Write([]string{site, r.t.Format(time.RFC3339Nano), r.channel, value})
	}
	w.Flush()
	if err := w.Error(); err != nil {
		t.Fatal(err)
	}
	return []byte(b.String())
}

func referenceRecord(t *testing.T, rows []reading) arrow.RecordBatch {
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "site", Type: arrow.BinaryTypes.String, Nullable: true},
		{Name: "time", Type: &arrow.TimestampType{Unit: arrow.Millisecond, TimeZone: "UTC"}},
		{Name: "channel", Type: arrow.BinaryTypes.String},
		{Name: "value", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
	}, nil)
	data := make([][]any, len(rows))
	for i, r := range rows {
		data[i] = []any{r.site, r.t.UnixMilli(), r.channel, r.value}
	}
	return record(t, schema, data)
}

// TestSameSeriesAcrossFormats checks the Parquet reader against a file
// written by arrow-go's own Parquet implementation (package parquettest,
// independent of parquet-go), and the CSV and Arrow IPC readers against
// the same data.
func TestSameSeriesAcrossFormats(t *testing.T) {
	rows := referenceRows()
	want := expectedSeries(rows)
	rec := referenceRecord(t, rows)
	defer rec.Release()
	files := map[string]string{
		"arrow-go parquet, dictionary": writeArrowParquet(t, "dict.parquet", rec, 20, true),
		"arrow-go parquet, plain":      writeArrowParquet(t, "plain.parquet", rec, 1000, false),
		"arrow ipc file":               writeArrowIPC(t, "dump.arrow", false, rec.NewSlice(0, 20), rec.NewSlice(20, rec.NumRows())),
		"arrow ipc stream":             writeArrowIPC(t, "dump.arrows", true, rec.NewSlice(0, 7), rec.NewSlice(7, rec.NumRows())),
		"csv":                          writeFile(t, "dump.csv", referenceCSV(t, rows)),
		"csv gzip":                     writeFile(t, "dump.csv.gz", gzipped(t, referenceCSV(t, rows))),
	}
	formats := map[string]string{
		"arrow-go parquet, dictionary": formatParquet, "arrow-go parquet, plain": formatParquet,
		"arrow ipc file": formatArrowFile, "arrow ipc stream": formatArrowStream,
		"csv": formatCSV, "csv gzip": formatCSV,
	}
	for name, path := range files {
		t.Run(name, func(t *testing.T) {
			ds := mustRead(t, []string{path}, nil)
			if got := flatten(ds); !reflect.DeepEqual(got, want) {
				t.Errorf("series differ from the rows:\ngot  %v\nwant %v", got, want)
			}
			sum := ds.Summary
			wantDrops := map[string]int64{DropNullValue: 1, DropNaN: 1, DropInf: 1, DropNullSite: 1, DropSentinel: 1}
			if !reflect.DeepEqual(sum.Dropped, wantDrops) {
				t.Errorf("dropped %v, want %v", sum.Dropped, wantDrops)
			}
			if want := expectedSiteDrops(rows); !reflect.DeepEqual(sum.SiteDropped, want) {
				t.Errorf("drops by site %v, want %v", sum.SiteDropped, want)
			}
			if sum.Duplicates != 1 || sum.Rows != int64(len(rows)) || sum.Layout != "long" ||
				sum.Files[0].Format != formats[name] || sum.NaiveTime {
				t.Errorf("summary %+v", sum)
			}
			if !slices.Equal(ds.Channels, []string{"flow", "temp"}) || len(ds.Sites) != 3 {
				t.Errorf("channels %v, %d sites", ds.Channels, len(ds.Sites))
			}
		})
	}
}

// TestWideSameAcrossFormats reads one wide dump with a text column and
// positions from arrow-go Parquet, Arrow IPC and CSV.
func TestWideSameAcrossFormats(t *testing.T) {
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "site", Type: arrow.PrimitiveTypes.Int32},
		{Name: "time", Type: arrow.BinaryTypes.String},
		{Name: "lat", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "lon", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "flow", Type: arrow.PrimitiveTypes.Float32, Nullable: true},
		{Name: "speed", Type: arrow.PrimitiveTypes.Int16, Nullable: true},
		{Name: "note", Type: arrow.BinaryTypes.String, Nullable: true},
	}, nil)
	rows := [][]any{
		{7, "2024-01-01T00:00:00Z", 52.5, 13.25, float32(1.5), 3, "ok"},
		{7, "2024-01-01T01:00:00+01:00", 52.5, 13.25, float32(2), 4, nil}, // same instant: replaces
		{7, "2024-01-01T00:30:00Z", nil, nil, nil, 5, "late"},
		{12, "2024-01-01T00:00:00Z", -33.75, 151.0, float32(-0.25), nil, "x"},
	}
	csvText := "site;time;lat;lon;flow;speed;note\n" +
		"7;2024-01-01T00:00:00Z;52.5;13.25;1.5;3;ok\n" +
		"7;2024-01-01T01:00:00+01:00;52.5;13.25;2;4;\n" +
		"7;2024-01-01T00:30:00Z;;;;5;late\n" +
		"12;2024-01-01T00:00:00Z;-33.75;151;-0.25;;x\n"
	rec := record(t, schema, rows)
	defer rec.Release()
	paths := []string{
		writeArrowParquet(t, "wide.parquet", rec, 2, true),
		writeArrowIPC(t, "wide.arrow", false, rec),
		writeFile(t, "wide.csv", []byte(csvText)),
	}
	t0 := mustTime(t, "2024-01-01T00:00:00Z").UnixNano()
	t30 := mustTime(t, "2024-01-01T00:30:00Z").UnixNano()
	want := map[string]Series{
		"7/flow":  {Times: []int64{t0}, Values: []float64{2}},
		"7/speed": {Times: []int64{t0, t30}, Values: []float64{4, 5}},
		"12/flow": {Times: []int64{t0}, Values: []float64{-0.25}},
	}
	for _, p := range paths {
		ds := mustRead(t, []string{p}, nil)
		if got := flatten(ds); !reflect.DeepEqual(got, want) {
			t.Errorf("%s: got %v, want %v", p, got, want)
		}
		sum := ds.Summary
		if sum.Layout != "wide" || !slices.Equal(sum.SkippedColumns, []string{"note"}) ||
			sum.Duplicates != 2 || sum.Dropped[DropNullValue] != 2 {
			t.Errorf("%s: summary %+v", p, sum)
		}
		tr := ds.Sites[1].Track // sites sort as strings: "12" < "7"
		if ds.Sites[1].ID != "7" || !reflect.DeepEqual(tr, Track{Times: []int64{t0}, Lat: []float64{52.5}, Lon: []float64{13.25}}) {
			t.Errorf("%s: track of %s: %+v", p, ds.Sites[1].ID, tr)
		}
	}
}

// TestArrowDictionaryStrings reads dictionary-encoded string columns of an
// Arrow IPC stream (the Arrow format's dictionary encoding, as
// arrow-go's ipc writer sends it).
func TestArrowDictionaryStrings(t *testing.T) {
	dictType := &arrow.DictionaryType{IndexType: arrow.PrimitiveTypes.Int16, ValueType: arrow.BinaryTypes.String}
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "site", Type: dictType, Nullable: true},
		{Name: "time", Type: arrow.PrimitiveTypes.Int64},
		{Name: "channel", Type: dictType},
		{Name: "value", Type: arrow.PrimitiveTypes.Int32},
	}, nil)
	b := array.NewRecordBuilder(memory.DefaultAllocator, schema)
	defer b.Release()
	rows := []struct {
		site    string
		t       int64
		channel string
		v       int32
	}{{"east", 2, "flow", 20}, {"west", 1, "flow", 10}, {"east", 1, "flow", 5}, {"", 3, "temp", 1}, {"west", 1, "temp", -3}}
	for _, r := range rows {
		if r.site == "" {
			b.Field(0).AppendNull()
		} else if err := b.Field(0).(*array.BinaryDictionaryBuilder).AppendString(r.site); err != nil {
			t.Fatal(err)
		}
		b.Field(1).(*array.Int64Builder).Append(r.t)
		if err := b.Field(2).(*array.BinaryDictionaryBuilder).AppendString(r.channel); err != nil {
			t.Fatal(err)
		}
		b.Field(3).(*array.Int32Builder).Append(r.v)
	}
	rec := b.NewRecordBatch()
	defer rec.Release()
	ds := mustRead(t, []string{writeArrowIPC(t, "dict.arrows", true, rec)}, nil)
	want := map[string]Series{
		"east/flow": {Times: []int64{1e9, 2e9}, Values: []float64{5, 20}},
		"west/flow": {Times: []int64{1e9}, Values: []float64{10}},
		"west/temp": {Times: []int64{1e9}, Values: []float64{-3}},
	}
	if got := flatten(ds); !reflect.DeepEqual(got, want) || ds.Summary.Dropped[DropNullSite] != 1 {
		t.Errorf("got %v (dropped %v), want %v", got, ds.Summary.Dropped, want)
	}
}
