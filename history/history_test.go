package history

import (
	"bytes"
	"cmp"
	"errors"
	"maps"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/parquet-go/parquet-go"

	"github.com/kinmap/kinmap/internal/atomicfile"
	"github.com/kinmap/kinmap/internal/parquettest"
)

var day0 = time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC)

// days makes daily windows of site from day first to day last (inclusive),
// in regime 1 on unit 3, with a scaled vector (day, -day).
func days(site string, first, last int) []Window {
	var ws []Window
	for d := first; d <= last; d++ {
		start := day0.AddDate(0, 0, d)
		ws = append(ws, Window{Site: site, Start: start, End: start.AddDate(0, 0, 1), Unit: 3, Regime: 1,
			Scaled: []float64{float64(d), -float64(d)}})
	}
	return ws
}

// fleet makes the daily windows of sites site-00 … site-(n-1).
func fleet(n, first, last int) []Window {
	var ws []Window
	for i := range n {
		ws = append(ws, days(siteName(i), first, last)...)
	}
	return ws
}

func siteName(i int) string { return "site-" + string(rune('0'+i/10)) + string(rune('0'+i%10)) }

func read(t *testing.T, dir string) *History {
	t.Helper()
	h, err := Read(dir)
	if err != nil {
		t.Fatal(err)
	}
	return h
}

// held lists the windows of the history as "site day regime".
func held(t *testing.T, dir string) map[string]int {
	t.Helper()
	out := map[string]int{}
	for _, w := range read(t, dir).Windows {
		out[w.Site+" "+w.Start.Format(time.DateOnly)] = w.Regime
	}
	return out
}

func write(t *testing.T, dir, lineage string, ws []Window) {
	t.Helper()
	if err := Write(dir, lineage, ws); err != nil {
		t.Fatal(err)
	}
}

func withRegime(ws []Window, regime int) []Window {
	for i := range ws {
		ws[i].Regime = regime
	}
	return ws
}

// A history reads back as written: lineage, windows, units, scaled
// vectors (NaN and missing ones included) and revised flags; arrow-go, an
// independent Parquet implementation, finds the lineage in the file's
// key-value metadata (Parquet format specification,
// FileMetaData.key_value_metadata) and the scaled vectors as a list column.
func TestRoundTrip(t *testing.T) {
	dir := t.TempDir()
	ws := append(days("b", 0, 2), days("a", 1, 1)...)
	ws[0].Scaled[1] = math.NaN()
	ws[1].Scaled = nil
	ws[2].Revised = true
	ws[2].Regime, ws[2].Unit, ws[2].QE, ws[2].Unfamiliar = 3, 45, 0.25, true
	write(t, dir, "abc123", ws)
	h := read(t, dir)
	want := slices.Clone(ws)
	slices.SortFunc(want, func(a, b Window) int { return cmp.Or(strings.Compare(a.Site, b.Site), a.Start.Compare(b.Start)) })
	if len(h.Windows) != len(want) {
		t.Fatalf("%d windows, want %d", len(h.Windows), len(want))
	}
	for i, w := range h.Windows {
		v := want[i]
		v.Lineage = "abc123"
		if !sameWindow(w, v) {
			t.Errorf("window %d: %+v, want %+v", i, w, v)
		}
	}
	if len(h.files) != 1 || !strings.HasPrefix(h.files[0], periodPrefix+"2026-03-02"+string(filepath.Separator)) {
		t.Errorf("files %v, want one in the period of the earliest window, 2026-03-02", h.files)
	}

	b, err := os.ReadFile(filepath.Join(dir, h.files[0]))
	if err != nil {
		t.Fatal(err)
	}
	pf, err := file.NewParquetReader(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	if v := pf.MetaData().KeyValueMetadata().FindValue(LineageKey); v == nil || *v != "abc123" {
		t.Errorf("key-value metadata %s = %v, want abc123", LineageKey, v)
	}
	cols, err := parquettest.Read(b)
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, c := range cols {
		names = append(names, strings.SplitN(c.Name, ".", 2)[0])
	}
	if wantNames := []string{"site", "window_start", "window_end", "unit", "regime", "qe", "unfamiliar", "scaled", "revised"}; !slices.Equal(names, wantNames) {
		t.Errorf("columns %v, want %v", names, wantNames)
	}
	scaled := cols[slices.Index(names, "scaled")].Values
	if len(scaled) != len(want) {
		t.Fatalf("%d rows of scaled vectors, want %d", len(scaled), len(want))
	}
	for i, w := range want {
		var s []float64
		if row, _ := scaled[i].([]any); row != nil {
			for _, v := range row {
				f, ok := v.(float64)
				if !ok {
					t.Fatalf("row %d: scaled element %v, want a number", i, v)
				}
				s = append(s, f)
			}
		}
		if !sameFloats(s, w.Scaled) {
			t.Errorf("row %d: arrow-go reads scaled %v, want %v", i, s, w.Scaled)
		}
	}
}

func sameWindow(a, b Window) bool {
	return a.Site == b.Site && a.Start.Equal(b.Start) && a.End.Equal(b.End) && a.Unit == b.Unit && a.Regime == b.Regime &&
		a.QE == b.QE && a.Unfamiliar == b.Unfamiliar && sameFloats(a.Scaled, b.Scaled) && a.Revised == b.Revised && a.Lineage == b.Lineage
}

func sameFloats(a, b []float64) bool {
	return slices.EqualFunc(a, b, func(x, y float64) bool { return x == y || math.IsNaN(x) && math.IsNaN(y) })
}

// legacyPeriod writes period key the way kinmap wrote it before the
// manifest: DIR/period=KEY/timeline.parquet with the cell in place of the
// unit and the lineage (when not "") in the key-value metadata.
func legacyPeriod(t *testing.T, dir, key, lineage string, ws []Window, opts ...parquet.WriterOption) {
	t.Helper()
	folder := filepath.Join(dir, periodPrefix+key)
	if err := os.MkdirAll(folder, 0o755); err != nil {
		t.Fatal(err)
	}
	f, err := os.Create(filepath.Join(folder, legacyFile))
	if err != nil {
		t.Fatal(err)
	}
	rows := make([]legacyRow, len(ws))
	for i, w := range ws {
		rows[i] = legacyRow{Site: w.Site, WindowStart: w.Start, WindowEnd: w.End, Col: int32(i % 4), Row: 7, Regime: int32(w.Regime), Scaled: w.Scaled}
	}
	if lineage != "" {
		opts = append(opts, parquet.KeyValueMetadata(LineageKey, lineage))
	}
	pw := parquet.NewGenericWriter[legacyRow](f, opts...)
	if _, err := pw.Write(rows); err != nil {
		t.Fatal(err)
	}
	if err := pw.Close(); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
}

// A history folder written the old way reads on: cells where units were,
// lineages, several row groups, and a period of the plain timeline.parquet
// columns without lineage or scaled vectors. A later write keeps every old
// window it does not replace, with its cell.
func TestLegacyFolder(t *testing.T) {
	dir := t.TempDir()
	legacyPeriod(t, dir, "2026-03-02", "old", fleet(3, 0, 6), parquet.MaxRowsPerRowGroup(5))
	// The timeline.parquet columns only, as before lineages.
	folder := filepath.Join(dir, periodPrefix+"2026-03-09")
	os.MkdirAll(folder, 0o755)
	type plain struct {
		Site        string    `parquet:"site,dict"`
		WindowStart time.Time `parquet:"window_start,timestamp(microsecond:utc)"`
		WindowEnd   time.Time `parquet:"window_end,timestamp(microsecond:utc)"`
		Col         int32     `parquet:"col"`
		Row         int32     `parquet:"row"`
		Regime      int32     `parquet:"regime"`
		QE          float64   `parquet:"qe"`
		Unfamiliar  bool      `parquet:"unfamiliar"`
	}
	w := days("site-00", 7, 7)[0]
	if err := parquet.WriteFile(filepath.Join(folder, legacyFile), []plain{{Site: w.Site, WindowStart: w.Start, WindowEnd: w.End, Col: 2, Row: 1, Regime: 4}}); err != nil {
		t.Fatal(err)
	}
	h := read(t, dir)
	if len(h.Windows) != 22 {
		t.Fatalf("%d windows, want 21 + 1", len(h.Windows))
	}
	for _, w := range h.Windows {
		col, row, ok := w.Cell()
		switch {
		case w.Unit != -1 || !ok:
			t.Errorf("%s %s: unit %d, cell %t; want no unit and a cell", w.Site, w.Start, w.Unit, ok)
		case w.Start.Before(day0.AddDate(0, 0, 7)) && (w.Lineage != "old" || row != 7 || len(w.Scaled) != 2):
			t.Errorf("%s %s: %+v, want lineage old, row 7 and a scaled vector", w.Site, w.Start, w)
		case !w.Start.Before(day0.AddDate(0, 0, 7)) && (w.Lineage != "" || col != 2 || row != 1 || w.Scaled != nil || w.Regime != 4):
			t.Errorf("%s %s: %+v, want the plain period's window", w.Site, w.Start, w)
		}
	}
	// A rerun of site-01's week replaces its windows only.
	write(t, dir, "new", withRegime(days("site-01", 0, 6), 2))
	h = read(t, dir)
	if len(h.Windows) != 22 {
		t.Fatalf("%d windows after the rerun, want 22", len(h.Windows))
	}
	for _, w := range h.Windows {
		_, row, ok := w.Cell()
		switch {
		case w.Site == "site-01" && (w.Regime != 2 || w.Unit != 3 || ok || w.Lineage != "new"):
			t.Errorf("%s %s: %+v, want the rerun's window", w.Site, w.Start, w)
		case w.Site != "site-01" && w.Start.Before(day0.AddDate(0, 0, 7)) && (w.Regime != 1 || !ok || row != 7 || w.Lineage != "old"):
			t.Errorf("%s %s: %+v, want the old window, cell and lineage kept", w.Site, w.Start, w)
		}
	}
	if _, err := os.Stat(filepath.Join(dir, manifestFile)); err != nil {
		t.Errorf("the first write made no manifest: %v", err)
	}
}

// The data-loss cases of the old period-replacing history: a later run
// replaces exactly the (site, window) pairs it holds and keeps every other
// window. Each failed on the history that replaced a period whose key (the
// UTC date of a dump's first window) a new dump shared.
func TestRerunKeepsOtherWindows(t *testing.T) {
	t.Run("one site of a stored week again", func(t *testing.T) {
		dir := t.TempDir()
		write(t, dir, "x", fleet(40, 0, 6)) // 280 windows
		write(t, dir, "x", withRegime(days(siteName(5), 0, 6), 2))
		got := held(t, dir)
		if len(got) != 280 {
			t.Errorf("%d windows, want 280", len(got))
		}
		for k, r := range got {
			if want := 1 + b2i(strings.HasPrefix(k, siteName(5)+" ")); r != want {
				t.Errorf("%s: regime %d, want %d", k, r, want)
			}
		}
	})
	t.Run("two regions of one week", func(t *testing.T) {
		dir := t.TempDir()
		north, south := fleet(20, 0, 6), fleet(40, 0, 6)[140:]
		write(t, dir, "n", north)
		write(t, dir, "s", south)
		if got := held(t, dir); len(got) != 280 {
			t.Errorf("%d windows, want both regions' 280", len(got))
		}
	})
	for _, late := range []int{7, 10} {
		t.Run("a week-3 dump with a late day of week 2", func(t *testing.T) {
			dir := t.TempDir()
			write(t, dir, "x", fleet(10, 0, 6))
			write(t, dir, "x", fleet(10, 7, 13))
			week3 := append(withRegime(days(siteName(3), late, late), 5), fleet(10, 14, 20)...)
			write(t, dir, "x", week3)
			got := held(t, dir)
			if len(got) != 210 {
				t.Errorf("late day %d: %d windows, want 210", late, len(got))
			}
			if r := got[siteName(3)+" "+day0.AddDate(0, 0, late).Format(time.DateOnly)]; r != 5 {
				t.Errorf("late day %d: the late day has regime %d, want the new 5", late, r)
			}
		})
	}
	t.Run("a dump cut a day earlier", func(t *testing.T) {
		dir := t.TempDir()
		write(t, dir, "x", append(days("a", 1, 7), days("b", 1, 7)...))
		write(t, dir, "x", withRegime(days("a", 0, 6), 2))
		got := held(t, dir)
		if len(got) != 15 || got["a 2026-03-09"] != 1 || got["a 2026-03-08"] != 2 || got["b 2026-03-03"] != 1 {
			t.Errorf("windows %v, want a: days 0–6 new, day 7 old; b kept", got)
		}
	})
}

func b2i(b bool) int {
	if b {
		return 1
	}
	return 0
}

// What an interrupted write of an earlier kinmap left, a period folder
// without its file and a hidden temporary file, is ignored with a note;
// the next write removes the temporary file.
func TestLegacyInterruptedWrite(t *testing.T) {
	dir := t.TempDir()
	legacyPeriod(t, dir, "2026-03-02", "x", fleet(2, 0, 6))
	broken := filepath.Join(dir, periodPrefix+"2026-03-09")
	os.MkdirAll(broken, 0o755)
	temp := filepath.Join(broken, "."+legacyFile+".123456.tmp")
	if err := os.WriteFile(temp, []byte("PAR1 half a file"), 0o600); err != nil {
		t.Fatal(err)
	}
	h := read(t, dir)
	if len(h.Windows) != 14 || len(h.Notes) != 2 {
		t.Errorf("%d windows, notes %q; want 14 and two notes", len(h.Windows), h.Notes)
	}
	write(t, dir, "x", fleet(2, 7, 13))
	if _, err := os.Stat(temp); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("the temporary file is still there: %v", err)
	}
	if got := held(t, dir); len(got) != 28 {
		t.Errorf("%d windows, want 28", len(got))
	}
}

// A run whose history another run wrote after it was read is refused
// before it changes anything: its continuation would be stale and its
// write would undo the other's revisions.
func TestChangedSinceRead(t *testing.T) {
	dir := t.TempDir()
	write(t, dir, "x", fleet(2, 0, 6))
	slow := read(t, dir)
	write(t, dir, "x", fleet(2, 7, 13))
	before := snapshot(t, dir)
	tx, err := atomicfile.Begin(dir, nil, time.Second)
	if err != nil {
		t.Fatal(err)
	}
	err = slow.Stage(tx, "x", fleet(2, 14, 20))
	var changed *ChangedError
	if !errors.As(err, &changed) || changed.Read != 1 || changed.At != 2 {
		t.Errorf("error %v, want the history changed from generation 1 to 2", err)
	}
	tx.Abort()
	if after := snapshot(t, dir); !maps.Equal(before, after) {
		t.Error("a refused write changed the history")
	}
}

func snapshot(t *testing.T, dir string) map[string]string {
	t.Helper()
	out := map[string]string{}
	filepath.Walk(dir, func(p string, info os.FileInfo, err error) error {
		if err == nil && !info.IsDir() {
			b, _ := os.ReadFile(p)
			out[p] = string(b)
		}
		return err
	})
	return out
}

// A write whose every window moves to another period leaves no empty
// period folder behind once the history is read again; an aborted first
// write leaves no folder at all.
func TestNoEmptyFolders(t *testing.T) {
	dir := t.TempDir()
	write(t, dir, "x", days("a", 1, 7))
	write(t, dir, "x", days("a", 0, 7))
	read(t, dir)
	if _, err := os.Stat(filepath.Join(dir, periodPrefix+"2026-03-03")); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("the emptied period's folder remains (%v)", err)
	}
	fresh := filepath.Join(t.TempDir(), "history")
	tx, err := atomicfile.Begin(fresh, nil, time.Second)
	if err != nil {
		t.Fatal(err)
	}
	h, err := Load(fresh)
	if err != nil {
		t.Fatal(err)
	}
	if err := h.Stage(tx, "x", days("a", 0, 1)); err != nil {
		t.Fatal(err)
	}
	tx.Abort()
	if _, err := os.Stat(fresh); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("an aborted first write left %s (%v)", fresh, err)
	}
}

// shifted makes the windows of days of site on another grid: starting off
// after midnight UTC (a run with another --tz), of length dur.
func shifted(site string, first, last int, off, dur time.Duration) []Window {
	var ws []Window
	for t := day0.AddDate(0, 0, first).Add(off); t.Before(day0.AddDate(0, 0, last+1)); t = t.Add(dur) {
		ws = append(ws, Window{Site: site, Start: t, End: t.Add(dur), Unit: 3, Regime: 2, Scaled: []float64{0, 0}})
	}
	return ws
}

// A run on another window grid (another time zone, another window length,
// so another map's lineage) replaces the windows of its sites that its own
// windows mostly cover, so
// that running a week again with --tz changed does not hold the week twice,
// while a window it only grazes, and other sites' windows, stay.
func TestRerunOtherGrid(t *testing.T) {
	for _, c := range []struct {
		name    string
		lineage string
		run     []Window
		want    int // windows of site a
	}{
		// 22:00 UTC is midnight in UTC+2: 8 windows from 22:00 before day
		// 0 on, each covering 22 h of one of the UTC days 0–7; days 8–10
		// stay.
		{"another zone", "y", shifted("a", 0, 6, -2*time.Hour, 24*time.Hour), 8 + 3},
		// 06:00–18:00 and 18:00–06:00: 18 h or more of days 0–6, 6 h of
		// day 7, which stays with days 8–10.
		{"half-day windows", "y", shifted("a", 0, 6, 6*time.Hour, 12*time.Hour), 14 + 4},
		// 2 h of day 6 and 2 h of day 7: both stay.
		{"a window grazing two days", "y", shifted("a", 6, 6, 22*time.Hour, 4*time.Hour)[:1], 1 + 11},
		// The same lineage is on one grid: windows it does not hold again
		// (overlapping ones skipped for coverage) stay.
		{"the same lineage", "x", shifted("a", 0, 6, 6*time.Hour, 12*time.Hour), 14 + 11},
	} {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			write(t, dir, "x", append(days("a", 0, 10), days("b", 0, 10)...))
			write(t, dir, c.lineage, c.run)
			n := map[string]int{}
			for _, w := range read(t, dir).Windows {
				n[w.Site]++
			}
			if n["a"] != c.want || n["b"] != 11 {
				t.Errorf("windows of a %d, of b %d; want %d and 11", n["a"], n["b"], c.want)
			}
		})
	}
}
