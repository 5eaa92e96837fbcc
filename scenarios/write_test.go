package scenarios

import (
	"encoding/csv"
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/schema"
	"github.com/kinmap/kinmap/internal/parquettest"
	"github.com/parquet-go/parquet-go"
	"github.com/parquet-go/parquet-go/format"
)

// flat is one value of the long layout as a reader sees it.
type flat struct {
	site     string
	ms       int64
	channel  string
	value    float64
	lat, lon float64 // NaN when absent
}

func sameFloat(a, b float64) bool { return a == b || (math.IsNaN(a) && math.IsNaN(b)) }

func (a flat) equal(b flat) bool {
	return a.site == b.site && a.ms == b.ms && a.channel == b.channel && a.value == b.value &&
		sameFloat(a.lat, b.lat) && sameFloat(a.lon, b.lon)
}

// expectLong lists the fleet's values in file order.
func expectLong(f *Fleet) []flat {
	var out []flat
	for r := range f.longRows() {
		s := f.Sites[r.site]
		lat, lon := s.Readings.position(r.row)
		out = append(out, flat{s.ID, s.Readings.Times[r.row] / 1e6, f.Channels[r.channel].Name, r.value, lat, lon})
	}
	return out
}

func compareLong(t *testing.T, what string, got, want []flat) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: %d values, want %d", what, len(got), len(want))
	}
	for i := range got {
		if !got[i].equal(want[i]) {
			t.Fatalf("%s: value %d is %+v, want %+v", what, i, got[i], want[i])
		}
	}
}

// writeSmall writes a small fleet of each scenario, large enough for more
// than one Arrow record batch.
func writeSmall(t *testing.T) map[string]struct {
	fleet *Fleet
	dir   string
} {
	t.Helper()
	out := make(map[string]struct {
		fleet *Fleet
		dir   string
	})
	// The writers do not depend on the plant: the two demo fleets and one
	// sampled every minute cover fixed and mobile sites and large files.
	for _, name := range []string{"pumping", "reefers", "masts"} {
		f := generateT(t, small(t, name, 10, 2))
		dir := t.TempDir()
		paths, err := f.Write(dir)
		if err != nil {
			t.Fatal(err)
		}
		want := []string{FileLongParquet, FileWideParquet, FileArrow, FileCSV, FileSites, FileTruthWin, FileTruthSwitch}
		for i, p := range paths {
			if p != filepath.Join(dir, want[i]) {
				t.Errorf("%s: path %d is %s, want %s", name, i, p, want[i])
			}
		}
		entries, _ := os.ReadDir(dir)
		if len(entries) != len(want) {
			t.Errorf("%s: %d entries in the folder, want %d (temporary files left?)", name, len(entries), len(want))
		}
		out[name] = struct {
			fleet *Fleet
			dir   string
		}{f, dir}
	}
	return out
}

func columnNames(f *Fleet, long bool) []string {
	names := []string{"site", "time"}
	if long {
		names = append(names, "channel", "value")
	} else {
		for _, c := range f.Channels {
			names = append(names, c.Name)
		}
	}
	if f.Mobile {
		names = append(names, "lat", "lon")
	}
	return names
}

// TestParquetFiles reads the Parquet files back with parquet-go and checks
// their schema against the Parquet format specification (LogicalTypes.md,
// "Timestamp": INT64 annotated TIMESTAMP(isAdjustedToUTC=true, MILLIS);
// "String": BYTE_ARRAY annotated STRING).
func TestParquetFiles(t *testing.T) {
	for name, w := range writeSmall(t) {
		f := w.fleet
		for _, file := range []string{FileLongParquet, FileWideParquet} {
			long := file == FileLongParquet
			pf := openParquet(t, filepath.Join(w.dir, file))
			var names []string
			for _, field := range pf.Schema().Fields() {
				names = append(names, field.Name())
			}
			if want := columnNames(f, long); !slices.Equal(names, want) {
				t.Errorf("%s %s: columns %v, want %v", name, file, names, want)
			}
			for _, field := range pf.Schema().Fields() {
				typ := field.Type()
				var logical format.LogicalTypeValue
				if lt := typ.LogicalType(); lt != nil {
					logical = lt.Value
				}
				switch field.Name() {
				case "time":
					ts, ok := logical.(*format.TimestampType)
					if !ok || !ts.IsAdjustedToUTC || typ.Kind() != parquet.Int64 {
						t.Errorf("%s %s: time column is %v %v, want a UTC-adjusted INT64 timestamp", name, file, typ.Kind(), logical)
					} else if _, ms := ts.Unit.Value.(*format.MilliSeconds); !ms {
						t.Errorf("%s %s: time unit %v, want MILLIS", name, file, ts.Unit.Value)
					}
				case "site", "channel":
					if _, ok := logical.(*format.StringType); !ok || typ.Kind() != parquet.ByteArray {
						t.Errorf("%s %s: %s column is %v %v, want a STRING byte array", name, file, field.Name(), typ.Kind(), logical)
					}
				default:
					if typ.Kind() != parquet.Double {
						t.Errorf("%s %s: %s column is %v, want DOUBLE", name, file, field.Name(), typ.Kind())
					}
				}
				if optional := field.Optional(); optional != (!long && field.Name() != "site" && field.Name() != "time" || field.Name() == "lat" || field.Name() == "lon") {
					t.Errorf("%s %s: %s column optional=%v", name, file, field.Name(), optional)
				}
			}
			if len(pf.RowGroups()) < 2 {
				t.Errorf("%s %s: %d row group", name, file, len(pf.RowGroups()))
			}
			rows := readParquetRows(t, pf)
			if long {
				var got []flat
				for _, r := range rows {
					fl := flat{r[0].String(), r[1].Int64(), r[2].String(), r[3].Double(), math.NaN(), math.NaN()}
					if f.Mobile {
						fl.lat, fl.lon = optionalDouble(r[4]), optionalDouble(r[5])
					}
					got = append(got, fl)
				}
				compareLong(t, name+" "+file, got, expectLong(f))
				continue
			}
			i := 0
			for _, s := range f.Sites {
				for k, tm := range s.Readings.Times {
					r := rows[i]
					if r[0].String() != s.ID || r[1].Int64() != tm/1e6 {
						t.Fatalf("%s %s: row %d is %v", name, file, i, r)
					}
					for ch, values := range s.Readings.Values {
						if got := optionalDouble(r[2+ch]); !sameFloat(got, values[k]) {
							t.Fatalf("%s %s: row %d %s is %v, want %v", name, file, i, f.Channels[ch].Name, got, values[k])
						}
					}
					i++
				}
			}
			if i != len(rows) {
				t.Errorf("%s %s: %d rows, want %d", name, file, len(rows), i)
			}
		}
	}
}

func openParquet(t *testing.T, path string) *parquet.File {
	t.Helper()
	fh, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { fh.Close() })
	st, _ := fh.Stat()
	pf, err := parquet.OpenFile(fh, st.Size())
	if err != nil {
		t.Fatal(err)
	}
	return pf
}

func readParquetRows(t *testing.T, pf *parquet.File) []parquet.Row {
	t.Helper()
	r := parquet.NewReader(pf)
	defer r.Close()
	var rows []parquet.Row
	buf := make([]parquet.Row, 512)
	for {
		n, err := r.ReadRows(buf)
		for _, row := range buf[:n] {
			rows = append(rows, row.Clone())
		}
		if errors.Is(err, io.EOF) {
			return rows
		}
		if err != nil {
			t.Fatal(err)
		}
	}
}

func optionalDouble(v parquet.Value) float64 {
	if v.IsNull() {
		return math.NaN()
	}
	return v.Double()
}

// TestParquetWithArrowReader reads the Parquet files with arrow-go's own
// Parquet implementation (package parquettest), independent of the
// writer's: the time is INT64 TIMESTAMP(isAdjustedToUTC=true, MILLIS)
// (Parquet format, LogicalTypes.md).
func TestParquetWithArrowReader(t *testing.T) {
	for name, w := range writeSmall(t) {
		f := w.fleet
		for _, file := range []string{FileLongParquet, FileWideParquet} {
			b, err := os.ReadFile(filepath.Join(w.dir, file))
			if err != nil {
				t.Fatal(err)
			}
			cols, err := parquettest.Read(b)
			if err != nil {
				t.Fatalf("%s %s: %v", name, file, err)
			}
			what := name + " " + file
			tc, ok := parquettest.ByName(cols, "time")
			ts, isTS := tc.Logical.(schema.TimestampLogicalType)
			if !ok || !isTS || ts.TimeUnit() != schema.TimeUnitMillis || !ts.IsAdjustedToUTC() {
				t.Errorf("%s: time is %v, want TIMESTAMP(MILLIS, UTC)", what, tc.Logical)
			}
			v := values{cols: map[string][]any{}}
			for _, c := range cols {
				v.names = append(v.names, c.Name)
				for _, x := range c.Values {
					if tm, ok := x.(time.Time); ok {
						x = tm.UnixMilli()
					}
					v.cols[c.Name] = append(v.cols[c.Name], x)
				}
			}
			if file == FileLongParquet {
				compareLong(t, what+" (arrow-go)", v.flats(f), expectLong(f))
			} else {
				v.checkWide(t, what, f)
			}
		}
	}
}

func concatRecords(t *testing.T, schema *arrow.Schema, recs []arrow.RecordBatch) arrow.RecordBatch {
	t.Helper()
	cols := make([]arrow.Array, schema.NumFields())
	for c := range cols {
		var parts []arrow.Array
		for _, rec := range recs {
			parts = append(parts, rec.Column(c))
		}
		col, err := array.Concatenate(parts, memory.DefaultAllocator)
		if err != nil {
			t.Fatal(err)
		}
		cols[c] = col
	}
	for _, rec := range recs {
		rec.Release()
	}
	return array.NewRecordBatch(schema, cols, int64(cols[0].Len()))
}

func checkArrowTime(t *testing.T, what string, schema *arrow.Schema) {
	t.Helper()
	i := schema.FieldIndices("time")
	if len(i) != 1 {
		t.Fatalf("%s: no time field in %v", what, schema)
	}
	ts, ok := schema.Field(i[0]).Type.(*arrow.TimestampType)
	if !ok || ts.Unit != arrow.Millisecond || ts.TimeZone != "UTC" {
		t.Errorf("%s: time is %v, want timestamp[ms, tz=UTC]", what, schema.Field(i[0]).Type)
	}
}

// values holds a file's columns as a reader gave them: strings, times as
// int64 milliseconds since the epoch, float64 values and nil for a null.
type values struct {
	names []string
	cols  map[string][]any
}

// recordValues returns the values of an Arrow record whose times are in
// milliseconds.
func recordValues(t *testing.T, rec arrow.RecordBatch) values {
	t.Helper()
	v := values{cols: map[string][]any{}}
	for c, fl := range rec.Schema().Fields() {
		v.names = append(v.names, fl.Name)
		col := rec.Column(c)
		for i := range col.Len() {
			var x any
			switch a := col.(type) {
			case *array.String:
				x = a.Value(i)
			case *array.Timestamp:
				x = int64(a.Value(i))
			case *array.Float64:
				x = a.Value(i)
			default:
				t.Fatalf("column %s is %T", fl.Name, col)
			}
			if col.IsNull(i) {
				x = nil
			}
			v.cols[fl.Name] = append(v.cols[fl.Name], x)
		}
	}
	return v
}

func (v values) str(name string, i int) string {
	s, _ := v.cols[name][i].(string)
	return s
}

func (v values) millis(name string, i int) int64 {
	ms, _ := v.cols[name][i].(int64)
	return ms
}

// num returns a number, NaN for a null.
func (v values) num(name string, i int) float64 {
	if f, ok := v.cols[name][i].(float64); ok {
		return f
	}
	return math.NaN()
}

// flats lists the values of a long file.
func (v values) flats(f *Fleet) []flat {
	if !slices.Equal(v.names, columnNames(f, true)) {
		return nil
	}
	out := make([]flat, len(v.cols["site"]))
	for i := range out {
		out[i] = flat{v.str("site", i), v.millis("time", i), v.str("channel", i), v.num("value", i), math.NaN(), math.NaN()}
		if f.Mobile {
			out[i].lat, out[i].lon = v.num("lat", i), v.num("lon", i)
		}
	}
	return out
}

// checkWide checks the values of a wide file against the fleet.
func (v values) checkWide(t *testing.T, what string, f *Fleet) {
	t.Helper()
	if want := columnNames(f, false); !slices.Equal(v.names, want) {
		t.Fatalf("%s: columns %v, want %v", what, v.names, want)
	}
	i := 0
	for _, s := range f.Sites {
		for k, ns := range s.Readings.Times {
			if i >= len(v.cols["site"]) || v.str("site", i) != s.ID || v.millis("time", i) != ns/1e6 {
				t.Fatalf("%s: row %d is not %s at %d ms", what, i, s.ID, ns/1e6)
			}
			for ch, c := range f.Channels {
				if got := v.num(c.Name, i); !sameFloat(got, s.Readings.Values[ch][k]) {
					t.Fatalf("%s: row %d %s is %v, want %v", what, i, c.Name, got, s.Readings.Values[ch][k])
				}
			}
			i++
		}
	}
	if n := len(v.cols["site"]); n != i {
		t.Errorf("%s: %d rows, want %d", what, n, i)
	}
}

// TestArrowFile reads the Arrow IPC file back with arrow-go's ipc.FileReader.
func TestArrowFile(t *testing.T) {
	for name, w := range writeSmall(t) {
		fh, err := os.Open(filepath.Join(w.dir, FileArrow))
		if err != nil {
			t.Fatal(err)
		}
		r, err := ipc.NewFileReader(fh, ipc.WithAllocator(memory.DefaultAllocator))
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		want := expectLong(w.fleet)
		if got, batches := r.NumRecords(), (len(want)+arrowBatch-1)/arrowBatch; got != batches || batches < 2 {
			t.Errorf("%s: %d record batches, want %d (and more than one)", name, got, batches)
		}
		var recs []arrow.RecordBatch
		for i := range r.NumRecords() {
			rec, err := r.RecordBatchAt(i)
			if err != nil {
				t.Fatal(err)
			}
			rec.Retain()
			recs = append(recs, rec)
		}
		checkArrowTime(t, name, r.Schema())
		rec := concatRecords(t, r.Schema(), recs)
		compareLong(t, name+" arrow", recordValues(t, rec).flats(w.fleet), want)
		rec.Release()
		r.Close()
		fh.Close()
	}
}

func readCSV(t *testing.T, path string) [][]string {
	t.Helper()
	fh, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	records, err := csv.NewReader(fh).ReadAll()
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return records
}

func parseOptional(t *testing.T, s string) float64 {
	t.Helper()
	if s == "" {
		return math.NaN()
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// TestCSVFiles parses the CSV files with encoding/csv (RFC 4180) and their
// times with time.RFC3339.
func TestCSVFiles(t *testing.T) {
	for name, w := range writeSmall(t) {
		f := w.fleet
		records := readCSV(t, filepath.Join(w.dir, FileCSV))
		if want := columnNames(f, true); !slices.Equal(records[0], want) {
			t.Fatalf("%s: header %v, want %v", name, records[0], want)
		}
		var got []flat
		for _, r := range records[1:] {
			tm, err := time.Parse(time.RFC3339, r[1])
			if err != nil || !strings.HasSuffix(r[1], "Z") {
				t.Fatalf("%s: time %q: %v", name, r[1], err)
			}
			fl := flat{r[0], tm.UnixMilli(), r[2], parseOptional(t, r[3]), math.NaN(), math.NaN()}
			if f.Mobile {
				fl.lat, fl.lon = parseOptional(t, r[4]), parseOptional(t, r[5])
			}
			got = append(got, fl)
		}
		compareLong(t, name+" csv", got, expectLong(f))

		sites := readCSV(t, filepath.Join(w.dir, FileSites))
		if len(sites) != len(f.Sites)+1 || !slices.Equal(sites[0][:4], []string{"site", "name", "lat", "lon"}) {
			t.Fatalf("%s: site register header %v, %d rows", name, sites[0], len(sites))
		}
		for i, s := range f.Sites {
			r := sites[i+1]
			if r[0] != s.ID || r[1] != s.Name || parseOptional(t, r[2]) != s.Lat || parseOptional(t, r[3]) != s.Lon || len(r) != 4+len(s.Attrs) {
				t.Errorf("%s: register row %v for %+v", name, r, s)
			}
		}

		windows := readCSV(t, filepath.Join(w.dir, FileTruthWin))
		if !slices.Equal(windows[0], []string{"site", "window_start", "window_end", "regime", "coverage"}) ||
			len(windows) != 1+len(f.Sites)*f.Windows() {
			t.Fatalf("%s: truth windows header %v, %d rows", name, windows[0], len(windows))
		}
		for i, r := range windows[1:] {
			s, w := f.Sites[i/f.Windows()], i%f.Windows()
			start, err1 := time.Parse(time.RFC3339, r[1])
			end, err2 := time.Parse(time.RFC3339, r[2])
			cov := parseOptional(t, r[4])
			if r[0] != s.ID || err1 != nil || err2 != nil || !start.Equal(f.WindowStart(w)) || end.Sub(start) != 24*time.Hour ||
				r[3] != f.Regimes[s.Regimes[w]] || cov < 0 || cov > 1 {
				t.Fatalf("%s: truth window row %v", name, r)
			}
		}

		switches := readCSV(t, filepath.Join(w.dir, FileTruthSwitch))
		all := f.Switches()
		if !slices.Equal(switches[0], []string{"site", "time", "from_regime", "to_regime"}) || len(switches) != 1+len(all) {
			t.Fatalf("%s: truth switches header %v, %d rows", name, switches[0], len(switches))
		}
		for i, r := range switches[1:] {
			sw := all[i]
			tm, err := time.Parse(time.RFC3339, r[1])
			if r[0] != sw.Site || err != nil || !tm.Equal(sw.Time) || r[2] != f.Regimes[sw.From] || r[3] != f.Regimes[sw.To] {
				t.Errorf("%s: switch row %v for %+v", name, r, sw)
			}
		}
	}
}

// TestWriteLeavesNoPartialFiles checks that a failed Write leaves no file,
// temporary or final.
func TestWriteLeavesNoPartialFiles(t *testing.T) {
	dir := t.TempDir()
	// A folder in the way of the last file makes its rename fail.
	f := generateT(t, small(t, "pumping", 2, 1))
	blocker := filepath.Join(dir, FileTruthSwitch)
	if err := os.MkdirAll(filepath.Join(blocker, "x"), 0o755); err != nil {
		t.Fatal(err)
	}
	if _, err := f.Write(dir); err == nil {
		t.Error("Write over a folder succeeded")
	}
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if e.Name() != FileTruthSwitch {
			t.Errorf("failed Write left %s", e.Name())
		}
	}

	file := filepath.Join(dir, "plain")
	os.WriteFile(file, nil, 0o644)
	if _, err := f.Write(filepath.Join(file, "out")); err == nil || !strings.HasPrefix(err.Error(), "scenarios: ") {
		t.Errorf("Write below a file: error %v", err)
	}
}
