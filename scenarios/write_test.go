package scenarios

import (
	"context"
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
	pqfile "github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
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
// Parquet implementation (pqarrow.ReadTable), independent of the writer's.
// A UTC-adjusted timestamp maps to an Arrow timestamp with time zone "UTC"
// (Arrow's Parquet schema conversion, pqarrow).
func TestParquetWithArrowReader(t *testing.T) {
	for name, w := range writeSmall(t) {
		f := w.fleet
		for _, file := range []string{FileLongParquet, FileWideParquet} {
			fh, err := os.Open(filepath.Join(w.dir, file))
			if err != nil {
				t.Fatal(err)
			}
			tbl, err := pqarrow.ReadTable(context.Background(), fh, pqfile.NewReaderProperties(memory.DefaultAllocator),
				pqarrow.ArrowReadProperties{}, memory.DefaultAllocator)
			fh.Close()
			if err != nil {
				t.Fatalf("%s %s: %v", name, file, err)
			}
			rec := tableRecord(t, tbl)
			tbl.Release()
			checkArrowTime(t, name+" "+file, rec.Schema())
			if file == FileLongParquet {
				compareLong(t, name+" "+file+" (pqarrow)", flatsOf(f, rec), expectLong(f))
			} else {
				checkWideRecord(t, name+" "+file, f, rec)
			}
			rec.Release()
		}
	}
}

// tableRecord concatenates a table into one record.
func tableRecord(t *testing.T, tbl arrow.Table) arrow.RecordBatch {
	t.Helper()
	r := array.NewTableReader(tbl, -1)
	defer r.Release()
	var recs []arrow.RecordBatch
	for r.Next() {
		rec := r.RecordBatch()
		rec.Retain()
		recs = append(recs, rec)
	}
	return concatRecords(t, tbl.Schema(), recs)
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

func column[T arrow.Array](t *testing.T, rec arrow.RecordBatch, name string) T {
	t.Helper()
	i := rec.Schema().FieldIndices(name)
	if len(i) != 1 {
		t.Fatalf("no column %s", name)
	}
	col, ok := rec.Column(i[0]).(T)
	if !ok {
		t.Fatalf("column %s is %T", name, rec.Column(i[0]))
	}
	return col
}

func nullableAt(a *array.Float64, i int) float64 {
	if a.IsNull(i) {
		return math.NaN()
	}
	return a.Value(i)
}

// flatsOf lists a long record's values.
func flatsOf(f *Fleet, rec arrow.RecordBatch) []flat {
	var names []string
	for _, fl := range rec.Schema().Fields() {
		names = append(names, fl.Name)
	}
	if !slices.Equal(names, columnNames(f, true)) {
		return nil
	}
	site, tm := rec.Column(0).(*array.String), rec.Column(1).(*array.Timestamp)
	ch, val := rec.Column(2).(*array.String), rec.Column(3).(*array.Float64)
	out := make([]flat, rec.NumRows())
	for i := range out {
		out[i] = flat{site.Value(i), int64(tm.Value(i)), ch.Value(i), val.Value(i), math.NaN(), math.NaN()}
		if f.Mobile {
			out[i].lat = nullableAt(rec.Column(4).(*array.Float64), i)
			out[i].lon = nullableAt(rec.Column(5).(*array.Float64), i)
		}
	}
	return out
}

func checkWideRecord(t *testing.T, what string, f *Fleet, rec arrow.RecordBatch) {
	t.Helper()
	var names []string
	for _, fl := range rec.Schema().Fields() {
		names = append(names, fl.Name)
	}
	if want := columnNames(f, false); !slices.Equal(names, want) {
		t.Fatalf("%s: columns %v, want %v", what, names, want)
	}
	site, tm := column[*array.String](t, rec, "site"), column[*array.Timestamp](t, rec, "time")
	i := 0
	for _, s := range f.Sites {
		for k, ns := range s.Readings.Times {
			if site.Value(i) != s.ID || int64(tm.Value(i)) != ns/1e6 {
				t.Fatalf("%s: row %d is %s at %v", what, i, site.Value(i), tm.Value(i))
			}
			for ch, c := range f.Channels {
				if got := nullableAt(column[*array.Float64](t, rec, c.Name), i); !sameFloat(got, s.Readings.Values[ch][k]) {
					t.Fatalf("%s: row %d %s is %v, want %v", what, i, c.Name, got, s.Readings.Values[ch][k])
				}
			}
			i++
		}
	}
	if int64(i) != rec.NumRows() {
		t.Errorf("%s: %d rows, want %d", what, rec.NumRows(), i)
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
		compareLong(t, name+" arrow", flatsOf(w.fleet, rec), want)
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
