package export

import (
	"bytes"
	"cmp"
	"context"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
	"github.com/parquet-go/parquet-go"

	"github.com/kinmap/kinmap/timeline"
)

var histDay0 = time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC)

// days makes daily history windows of site from day first to day last
// (inclusive), in regime 1, with a scaled vector (day, -day).
func days(site string, first, last int) []HistoryWindow {
	var ws []HistoryWindow
	for d := first; d <= last; d++ {
		start := histDay0.AddDate(0, 0, d)
		ws = append(ws, HistoryWindow{
			Entry:  timeline.Entry{Site: site, Start: start, End: start.AddDate(0, 0, 1), BMU: -1, Regime: 1},
			Scaled: []float64{float64(d), -float64(d)},
		})
	}
	return ws
}

// A period reads back as written: lineage, timeline, scaled vectors (NaN
// and missing ones included) and revised flags; arrow-go, an independent
// Parquet implementation, finds the lineage in the file's key-value
// metadata (Parquet format specification, FileMetaData.key_value_metadata)
// and the scaled vectors as a list column.
func TestHistoryRoundTrip(t *testing.T) {
	dir := t.TempDir()
	p := Period{Lineage: "abc123", Windows: days("b", 0, 2)}
	p.Windows = append(p.Windows, days("a", 1, 1)...)
	p.Windows[0].Scaled[1] = math.NaN()
	p.Windows[1].Scaled = nil
	p.Windows[2].Revised = true
	p.Windows[2].Regime, p.Windows[2].Col, p.Windows[2].Row, p.Windows[2].QE, p.Windows[2].Unfamiliar = 3, 4, 5, 0.25, true
	key, err := AppendHistory(dir, p)
	if err != nil {
		t.Fatal(err)
	}
	if key != "2026-03-02" {
		t.Errorf("key %s, want the date of the earliest window, 2026-03-02", key)
	}
	got, err := ReadHistory(dir)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 1 || got[0].Key != key || got[0].Lineage != p.Lineage {
		t.Fatalf("periods %+v, want one, %s, lineage %s", got, key, p.Lineage)
	}
	want := slices.Clone(p.Windows)
	slices.SortFunc(want, func(a, b HistoryWindow) int { return cmp.Or(strings.Compare(a.Site, b.Site), a.Start.Compare(b.Start)) })
	if len(got[0].Windows) != len(want) {
		t.Fatalf("%d windows, want %d", len(got[0].Windows), len(want))
	}
	for i, w := range got[0].Windows {
		v := want[i]
		if w.Entry != v.Entry || w.Revised != v.Revised || !sameFloats(w.Scaled, v.Scaled) {
			t.Errorf("window %d: %+v, want %+v", i, w, v)
		}
	}

	b, err := os.ReadFile(filepath.Join(dir, periodPrefix+key, TimelineParquetFile))
	if err != nil {
		t.Fatal(err)
	}
	pf, err := file.NewParquetReader(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	if v := pf.MetaData().KeyValueMetadata().FindValue(LineageKey); v == nil || *v != p.Lineage {
		t.Errorf("key-value metadata %s = %v, want %s", LineageKey, v, p.Lineage)
	}
	tbl, err := pqarrow.ReadTable(context.Background(), bytes.NewReader(b), nil, pqarrow.ArrowReadProperties{}, memory.DefaultAllocator)
	if err != nil {
		t.Fatal(err)
	}
	defer tbl.Release()
	var names []string
	for _, f := range tbl.Schema().Fields() {
		names = append(names, f.Name)
	}
	var wantNames []string
	for _, c := range timelineColumns {
		wantNames = append(wantNames, c.name)
	}
	if wantNames = append(wantNames, "scaled", "revised"); !slices.Equal(names, wantNames) {
		t.Errorf("columns %v, want %v", names, wantNames)
	}
	idx := tbl.Schema().FieldIndices("scaled")[0]
	list := tbl.Column(idx).Data().Chunk(0).(*array.List)
	values := list.ListValues().(*array.Float64)
	for i, w := range want {
		from, to := list.ValueOffsets(i)
		var s []float64
		for j := from; j < to; j++ {
			s = append(s, values.Value(int(j)))
		}
		if !sameFloats(s, w.Scaled) {
			t.Errorf("row %d: arrow-go reads scaled %v, want %v", i, s, w.Scaled)
		}
	}
}

func sameFloats(a, b []float64) bool {
	return slices.EqualFunc(a, b, func(x, y float64) bool { return x == y || math.IsNaN(x) && math.IsNaN(y) })
}

// periodFile creates the timeline file of period key in the history folder
// dir, for a test to write as it likes.
func periodFile(t *testing.T, dir, key string) *os.File {
	t.Helper()
	folder := filepath.Join(dir, periodPrefix+key)
	if err := os.MkdirAll(folder, 0o755); err != nil {
		t.Fatal(err)
	}
	f, err := os.Create(filepath.Join(folder, TimelineParquetFile))
	if err != nil {
		t.Fatal(err)
	}
	return f
}

// A period in the plain timeline.parquet format, as written before periods
// recorded a lineage, reads with no lineage and no scaled vectors.
func TestHistoryWithoutLineage(t *testing.T) {
	dir := t.TempDir()
	f := periodFile(t, dir, "2026-03-02")
	w := days("a", 0, 1)
	if err := writeParquet(f, []timelineRow{rowOf(w[0].Entry), rowOf(w[1].Entry)}); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
	got, err := ReadHistory(dir)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 1 || got[0].Lineage != "" || len(got[0].Windows) != 2 {
		t.Fatalf("periods %+v, want one of 2 windows without lineage", got)
	}
	for i, hw := range got[0].Windows {
		if hw.Entry != w[i].Entry || hw.Scaled != nil || hw.Revised {
			t.Errorf("window %d: %+v, want %+v without scaled vector", i, hw, w[i].Entry)
		}
	}
}

// A period written in several row groups, as a long one may be, reads
// whole.
func TestHistoryOfRowGroups(t *testing.T) {
	dir := t.TempDir()
	f := periodFile(t, dir, "2026-03-02")
	ws := days("a", 0, 9)
	rows := make([]historyRow, len(ws))
	for i, w := range ws {
		rows[i] = historyRow{timelineRow: rowOf(w.Entry), Scaled: w.Scaled}
	}
	pw := parquet.NewGenericWriter[historyRow](f, parquet.MaxRowsPerRowGroup(3))
	if _, err := pw.Write(rows); err != nil {
		t.Fatal(err)
	}
	if err := pw.Close(); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
	got, err := ReadHistory(dir)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 1 || len(got[0].Windows) != len(ws) {
		t.Fatalf("periods %+v, want one of %d windows", got, len(ws))
	}
	for i, hw := range got[0].Windows {
		if hw.Entry != ws[i].Entry || !sameFloats(hw.Scaled, ws[i].Scaled) {
			t.Errorf("window %d: %+v, want %+v", i, hw, ws[i])
		}
	}
}

// Running a dump again replaces its windows: one cut a day earlier makes
// another period, and the windows it holds leave the first one; a period
// whose every window is held by a later run is removed.
func TestAppendHistoryReplacesWindows(t *testing.T) {
	dir := t.TempDir()
	first := Period{Lineage: "x", Windows: append(days("a", 1, 7), days("b", 1, 7)...)}
	if _, err := AppendHistory(dir, first); err != nil {
		t.Fatal(err)
	}
	again := Period{Lineage: "x", Windows: days("a", 0, 6)} // site a again, one day earlier
	for i := range again.Windows {
		again.Windows[i].Regime = 2
	}
	if _, err := AppendHistory(dir, again); err != nil {
		t.Fatal(err)
	}
	count := func() map[string][]string {
		periods, err := ReadHistory(dir)
		if err != nil {
			t.Fatal(err)
		}
		out := map[string][]string{}
		seen := map[string]bool{}
		for _, p := range periods {
			for _, w := range p.Windows {
				id := w.Site + " " + w.Start.Format(time.DateOnly)
				if seen[id] {
					t.Errorf("window %s twice in the history", id)
				}
				seen[id] = true
				out[p.Key] = append(out[p.Key], id)
			}
		}
		return out
	}
	got := count()
	if n := len(got["2026-03-02"]); n != 7 {
		t.Errorf("period 2026-03-02 holds %d windows, want 7 (site a, days 0–6)", n)
	}
	// The first period keeps site a's last day and all of site b.
	if w := got["2026-03-03"]; len(w) != 8 || w[0] != "a 2026-03-09" {
		t.Errorf("period 2026-03-03 holds %v, want a 2026-03-09 and site b's 7 days", w)
	}
	if _, err := AppendHistory(dir, Period{Lineage: "x", Windows: append(days("a", 7, 7), days("b", 1, 7)...)}); err != nil {
		t.Fatal(err)
	}
	got = count()
	if len(got) != 2 || len(got["2026-03-02"]) != 7 || len(got["2026-03-03"]) != 8 {
		t.Errorf("periods %v, want 2026-03-02 and a rewritten 2026-03-03", got)
	}
	// A run holding all of period 2026-03-02's windows under another key.
	if _, err := AppendHistory(dir, Period{Lineage: "x", Windows: days("a", -1, 6)}); err != nil {
		t.Fatal(err)
	}
	got = count()
	if _, ok := got["2026-03-02"]; ok {
		t.Errorf("period 2026-03-02, emptied, is still there: %v", got)
	}
	if _, err := os.Stat(filepath.Join(dir, periodPrefix+"2026-03-02")); !os.IsNotExist(err) {
		t.Errorf("the emptied period's folder remains (%v)", err)
	}
	if len(got["2026-03-01"]) != 8 {
		t.Errorf("periods %v, want 2026-03-01 to hold site a's 8 days", got)
	}
}
