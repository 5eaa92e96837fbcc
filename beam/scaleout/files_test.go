package scaleout

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"io"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strconv"
	"testing"

	"github.com/parquet-go/parquet-go"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/beam/internal/beamtest"
	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/model"
)

// The Beam run writes the files of a local run, the same set of names:
// byte for byte where no value depends on the last bits of the codebook,
// and equal up to tol in the quantization errors, confidences and model
// otherwise, in the CSV and the Parquet tables alike. The contents of the
// pictures and the report are left out: they render the codebook, and the
// report embeds the run's timings.
func TestWriteMatchesLocal(t *testing.T) {
	local, beam := bothPaths(t, options(fixture(t)), 4)
	ld, bd := t.TempDir(), t.TempDir()
	if err := local.Write(ld); err != nil {
		t.Fatal(err)
	}
	if err := beam.Write(bd); err != nil {
		t.Fatal(err)
	}
	read := func(dir, name string) []byte {
		t.Helper()
		b, err := os.ReadFile(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		return b
	}
	for _, name := range []string{export.FeaturesFile, export.SitesFile, export.RegimesFile} {
		if !bytes.Equal(read(bd, name), read(ld, name)) {
			t.Errorf("%s differs from the local run's", name)
		}
	}
	// Columns holding a float computed from the codebook, by file.
	for name, floatCol := range map[string]int{export.TimelineCSVFile: 6, export.SwitchesCSVFile: 6} {
		compareCSV(t, name, read(bd, name), read(ld, name), floatCol)
	}
	for _, name := range []string{export.TimelineParquetFile, export.SwitchesParquetFile} {
		compareParquet(t, name, read(bd, name), read(ld, name))
	}
	if bn, ln := fileNames(t, bd), fileNames(t, ld); !slices.Equal(bn, ln) {
		t.Errorf("the Beam run wrote %q, the local run %q", bn, ln)
	}
	if _, err := os.Stat(filepath.Join(ld, export.TracksFile)); !os.IsNotExist(err) {
		t.Errorf("a fleet of fixed sites should have no %s (%v)", export.TracksFile, err)
	}

	bm, err := model.ReadFile(filepath.Join(bd, export.ModelFile))
	if err != nil {
		t.Fatal(err)
	}
	lm, err := model.ReadFile(filepath.Join(ld, export.ModelFile))
	if err != nil {
		t.Fatal(err)
	}
	if d := maxDiff(bm.Map.Codebook, lm.Map.Codebook); d > tol {
		t.Errorf("written codebooks differ by %g", d)
	}
	if !reflect.DeepEqual(bm.Scaler, lm.Scaler) {
		t.Errorf("written normalisations differ")
	}
	compareModels(t, bm, lm)

	var bj, lj map[string]any
	if err := json.Unmarshal(read(bd, export.RunFile), &bj); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(read(ld, export.RunFile), &lj); err != nil {
		t.Fatal(err)
	}
	for _, volatile := range []string{"started", "finished", "timings_seconds", "command"} {
		delete(bj, volatile)
		delete(lj, volatile)
	}
	if path, ok := nearlyEqual(bj, lj); !ok {
		t.Errorf("run.json differs at %s", path)
	}
}

// compareCSV compares two CSV files cell by cell, the column floatCol to
// tol and the others exactly.
func compareCSV(t *testing.T, name string, got, want []byte, floatCol int) {
	t.Helper()
	g, err := csv.NewReader(bytes.NewReader(got)).ReadAll()
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	w, err := csv.NewReader(bytes.NewReader(want)).ReadAll()
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	if len(g) != len(w) || len(w) < 2 {
		t.Fatalf("%s: %d rows, want %d (and more than a header)", name, len(g), len(w))
	}
	for i := range w {
		if len(g[i]) != len(w[i]) {
			t.Fatalf("%s: row %d has %d cells, want %d", name, i, len(g[i]), len(w[i]))
		}
		for j := range w[i] {
			if j == floatCol && i > 0 {
				a, err1 := strconv.ParseFloat(g[i][j], 64)
				b, err2 := strconv.ParseFloat(w[i][j], 64)
				if err1 != nil || err2 != nil || math.Abs(a-b) > tol {
					t.Fatalf("%s: row %d, column %s: %s, want %s", name, i, w[0][j], g[i][j], w[i][j])
				}
			} else if g[i][j] != w[i][j] {
				t.Fatalf("%s: row %d, column %s: %q, want %q", name, i, w[0][j], g[i][j], w[i][j])
			}
		}
	}
}

// compareParquet compares two Parquet files read with parquet-go: the same
// schema and the same rows, doubles to tol and every other value exactly.
func compareParquet(t *testing.T, name string, got, want []byte) {
	t.Helper()
	rows := func(b []byte) (*parquet.Schema, []parquet.Row) {
		t.Helper()
		f, err := parquet.OpenFile(bytes.NewReader(b), int64(len(b)))
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		r := parquet.NewReader(f)
		defer r.Close()
		out := make([]parquet.Row, r.NumRows())
		if n, err := r.ReadRows(out); n != len(out) || err != nil && err != io.EOF {
			t.Fatalf("%s: read %d of %d rows: %v", name, n, len(out), err)
		}
		return r.Schema(), out
	}
	gs, g := rows(got)
	ws, w := rows(want)
	if gs.String() != ws.String() {
		t.Fatalf("%s: schema\n%s\nwant\n%s", name, gs, ws)
	}
	if len(g) != len(w) || len(w) == 0 {
		t.Fatalf("%s: %d rows, want %d (and at least one)", name, len(g), len(w))
	}
	for i := range w {
		if len(g[i]) != len(w[i]) {
			t.Fatalf("%s: row %d has %d values, want %d", name, i, len(g[i]), len(w[i]))
		}
		for j, wv := range w[i] {
			gv := g[i][j]
			same := parquet.Equal(gv, wv)
			if wv.Kind() == parquet.Double && gv.Kind() == parquet.Double {
				same = math.Abs(gv.Double()-wv.Double()) <= tol
			}
			if !same {
				t.Fatalf("%s: row %d, column %d: %v, want %v", name, i, wv.Column(), gv, wv)
			}
		}
	}
}

// fileNames lists the names of the files in dir, sorted.
func fileNames(t *testing.T, dir string) []string {
	t.Helper()
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, e := range entries {
		names = append(names, e.Name())
	}
	return names
}

// nearlyEqual compares decoded JSON values, numbers to tol, and returns the
// path of the first difference.
func nearlyEqual(got, want any) (string, bool) {
	switch w := want.(type) {
	case map[string]any:
		g, ok := got.(map[string]any)
		if !ok || len(g) != len(w) {
			return "", false
		}
		for k, v := range w {
			if p, ok := nearlyEqual(g[k], v); !ok {
				return k + "." + p, false
			}
		}
		return "", true
	case []any:
		g, ok := got.([]any)
		if !ok || len(g) != len(w) {
			return "", false
		}
		for i, v := range w {
			if p, ok := nearlyEqual(g[i], v); !ok {
				return strconv.Itoa(i) + "." + p, false
			}
		}
		return "", true
	case float64:
		g, ok := got.(float64)
		return "", ok && math.Abs(g-w) <= tol
	}
	return "", reflect.DeepEqual(got, want)
}

// A mobile fleet: positions travel with the readings, are merged across
// dumps by the rule of the readings (the same dump given twice here, so
// every reading and position has a duplicate), and place each window at
// the centroid of its positions, as in a local run; tracks.geojson is the
// same byte for byte.
func TestMobileFleetMatchesLocal(t *testing.T) {
	dump, register := beamtest.Fleet(t, "reefers", 8, 2)
	o := kinmap.DefaultOptions()
	o.Data, o.Sites = []string{dump, dump}, register
	o.Map.Epochs = 6
	local, beam := bothPaths(t, o, 3)
	if !reflect.DeepEqual(beam.Ingest, local.Ingest) {
		t.Errorf("ingest summary:\n got %+v\nwant %+v", beam.Ingest, local.Ingest)
	}
	if local.Ingest.Duplicates < local.Ingest.Readings {
		t.Errorf("%d duplicates of %d readings: the second copy should replace every reading", local.Ingest.Duplicates, local.Ingest.Readings)
	}
	compareTables(t, beam, local)
	if d := maxDiff(beam.Model.Map.Codebook, local.Model.Map.Codebook); d > tol {
		t.Errorf("codebooks differ by %g", d)
	}
	compareTimelines(t, beam, local)
	ld, bd := t.TempDir(), t.TempDir()
	if err := local.Write(ld); err != nil {
		t.Fatal(err)
	}
	if err := beam.Write(bd); err != nil {
		t.Fatal(err)
	}
	lt, err := os.ReadFile(filepath.Join(ld, export.TracksFile))
	if err != nil {
		t.Fatal(err)
	}
	bt, err := os.ReadFile(filepath.Join(bd, export.TracksFile))
	if err != nil || !bytes.Equal(bt, lt) {
		t.Errorf("%s differs from the local run's (%v)", export.TracksFile, err)
	}
}
