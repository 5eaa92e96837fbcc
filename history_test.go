package kinmap_test

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/parquet-go/parquet-go"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/history"
	"github.com/kinmap/kinmap/model"
)

// Regime numbers of another map mean other regimes: a run continues only
// from the history periods of its model's lineage, which an update keeps
// and a new training starts afresh, and warns of the periods it leaves out.
// A model file written before lineages still loads.
func TestHistoryOfAnotherMap(t *testing.T) {
	fleet := fleetT(t, 30, 2)
	var boundary int // a planted switch, so that the history changes what is found
	for _, sw := range fleet.Switches() {
		if sw.Window >= 5 && sw.Window <= fleet.Windows()-5 {
			boundary = sw.Window
			break
		}
	}
	if boundary == 0 {
		t.Fatal("the scenario planted no switch away from its ends")
	}
	dir := t.TempDir()
	week1, week2 := filepath.Join(dir, "week1.csv"), filepath.Join(dir, "week2.csv")
	writeDump(t, week1, fleet, fleet.WindowStart(0), fleet.WindowStart(boundary), 0, 0, 1)
	writeDump(t, week2, fleet, fleet.WindowStart(boundary), fleet.WindowStart(fleet.Windows()), 0, 0, 1)
	history := filepath.Join(dir, "history")
	withHistory := func(data string) kinmap.Options {
		o := options(data)
		o.History = history
		return o
	}
	first, err := kinmap.Train(withHistory(week1))
	if err != nil {
		t.Fatal(err)
	}
	if err := first.AppendHistory(history); err != nil {
		t.Fatal(err)
	}
	lineage := first.Model.Lineage
	if lineage == "" {
		t.Fatal("a trained model has no lineage")
	}
	const warning = "numbered by another map"
	warned := func(r *kinmap.Result) bool {
		return slices.ContainsFunc(r.Info.Warnings, func(w string) bool { return strings.Contains(w, warning) })
	}

	fresh, err := kinmap.Train(withHistory(week2))
	if err != nil {
		t.Fatal(err)
	}
	if fresh.Model.Lineage == lineage || !warned(fresh) {
		t.Errorf("a new training: lineage %q (the history's %q), warnings %q; want another lineage and a warning", fresh.Model.Lineage, lineage, fresh.Info.Warnings)
	}
	updated, err := kinmap.Update(withHistory(week2), first.Model)
	if err != nil {
		t.Fatal(err)
	}
	if updated.Model.Lineage != lineage || warned(updated) {
		t.Errorf("an update: lineage %q, warnings %q; want the lineage %q and no warning", updated.Model.Lineage, updated.Info.Warnings, lineage)
	}

	// The same map under another lineage must decode as if there were no
	// history; under its own, the history must change the switches, or the
	// check would not tell.
	other := *first.Model
	other.Lineage = "another"
	foreign, err := kinmap.Assign(withHistory(week2), &other)
	if err != nil {
		t.Fatal(err)
	}
	own, err := kinmap.Assign(withHistory(week2), first.Model)
	if err != nil {
		t.Fatal(err)
	}
	alone, err := kinmap.Assign(options(week2), first.Model)
	if err != nil {
		t.Fatal(err)
	}
	if !warned(foreign) || !reflect.DeepEqual(foreign.Switches, alone.Switches) {
		t.Errorf("history of another lineage: warnings %q, %d switches, without history %d; want a warning and the same switches", foreign.Info.Warnings, len(foreign.Switches), len(alone.Switches))
	}
	if reflect.DeepEqual(own.Switches, alone.Switches) {
		t.Errorf("the history of the model's own lineage changed no switch (%d); the check would not tell", len(own.Switches))
	}

	// A model file without a lineage, as written before lineages, loads; a
	// run with it gets one derived from the map, the same every time, so it
	// takes up the history of the same map.
	old := *first.Model
	old.Lineage = ""
	var buf bytes.Buffer
	if err := old.Write(&buf); err != nil {
		t.Fatal(err)
	}
	if bytes.Contains(buf.Bytes(), []byte("Lineage")) {
		t.Error("a model without a lineage writes one")
	}
	read, err := model.Read(&buf)
	if err != nil {
		t.Fatal(err)
	}
	a, err := kinmap.Assign(options(week2), read)
	if err != nil {
		t.Fatal(err)
	}
	b, err := kinmap.Assign(withHistory(week2), read)
	if err != nil {
		t.Fatal(err)
	}
	if a.Model.Lineage == "" || a.Model.Lineage != b.Model.Lineage || warned(b) {
		t.Errorf("runs with a model without a lineage: lineages %q and %q, warnings %q; want one, the same, and the history of the same map taken up", a.Model.Lineage, b.Model.Lineage, b.Info.Warnings)
	}
}

// The warnings of the export (here: sites without a position, since the
// dump has none and there is no register) reach run.json and the run's
// warnings, which the command prints, and the report lists them once.
func TestWeeklyWriteWarnings(t *testing.T) {
	fleet := fleetT(t, 30, 1)
	dir := t.TempDir()
	dump := filepath.Join(dir, "dump.csv")
	writeDump(t, dump, fleet, fleet.WindowStart(0), fleet.WindowStart(fleet.Windows()), 0, 0, 1)
	res, err := kinmap.Train(options(dump))
	if err != nil {
		t.Fatal(err)
	}
	const position = "have no position"
	if slices.ContainsFunc(res.Info.Warnings, func(w string) bool { return strings.Contains(w, position) }) {
		t.Fatalf("warnings %q before writing: the check would not tell", res.Info.Warnings)
	}
	out := filepath.Join(dir, "out")
	if err := res.Write(out); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(out, export.RunFile))
	if err != nil {
		t.Fatal(err)
	}
	var info kinmap.RunInfo
	if err := json.Unmarshal(b, &info); err != nil {
		t.Fatal(err)
	}
	count := func(ws []string) int {
		n := 0
		for _, w := range ws {
			n += strings.Count(w, position)
		}
		return n
	}
	if n := count(info.Warnings); n != 1 {
		t.Errorf("run.json warnings %q: %d about positions, want 1", info.Warnings, n)
	}
	if n := count(res.Info.Warnings); n != 1 {
		t.Errorf("run warnings %q: %d about positions, want 1", res.Info.Warnings, n)
	}
	report, err := os.ReadFile(filepath.Join(out, export.ReportFile))
	if err != nil {
		t.Fatal(err)
	}
	// The report also shows run.json in full; the list of warnings is apart.
	_, list, _ := bytes.Cut(report, []byte(`class="warnings"`))
	list, _, _ = bytes.Cut(list, []byte("</div>"))
	if n := bytes.Count(list, []byte(position)); n != 1 {
		t.Errorf("the report's warnings mention %q %d times, want 1:\n%s", position, n, list)
	}
}

// oldRow is a window of a history period as kinmap wrote it before the
// history package: period=YYYY-MM-DD/timeline.parquet, the cell in place
// of the unit, the lineage in the key-value metadata.
type oldRow struct {
	Site        string    `parquet:"site,dict"`
	WindowStart time.Time `parquet:"window_start,timestamp(microsecond:utc)"`
	WindowEnd   time.Time `parquet:"window_end,timestamp(microsecond:utc)"`
	Col         int32     `parquet:"col"`
	Row         int32     `parquet:"row"`
	Regime      int32     `parquet:"regime"`
	QE          float64   `parquet:"qe"`
	Unfamiliar  bool      `parquet:"unfamiliar"`
	Scaled      []float64 `parquet:"scaled,list"`
	Revised     bool      `parquet:"revised"`
}

// A history folder written the old way keeps working after the upgrade:
// a run continues from it exactly as from the same first week written by
// this version, and its first write keeps the old windows.
func TestHistoryWrittenTheOldWay(t *testing.T) {
	fleet := fleetT(t, 20, 2)
	dir := t.TempDir()
	week1, week2 := filepath.Join(dir, "week1.csv"), filepath.Join(dir, "week2.csv")
	mid := fleet.WindowStart(fleet.Windows() / 2)
	writeDump(t, week1, fleet, fleet.WindowStart(0), mid, 0, 0, 1)
	writeDump(t, week2, fleet, mid, fleet.WindowStart(fleet.Windows()), 0, 0, 1)
	first, err := kinmap.Train(options(week1))
	if err != nil {
		t.Fatal(err)
	}
	now, old := filepath.Join(dir, "now"), filepath.Join(dir, "old")
	if err := first.AppendHistory(now); err != nil {
		t.Fatal(err)
	}
	rows := make([]oldRow, len(first.Table.Windows))
	for i, e := range first.Table.Windows {
		col, row := first.Model.Map.Lattice.Cell(e.Unit)
		rows[i] = oldRow{Site: e.Site, WindowStart: e.Start, WindowEnd: e.End, Col: int32(col), Row: int32(row),
			Regime: int32(e.Regime), QE: e.QE, Unfamiliar: e.Unfamiliar, Scaled: first.X.RawRowView(i)}
	}
	period := filepath.Join(old, "period="+fleet.WindowStart(0).UTC().Format(time.DateOnly))
	if err := os.MkdirAll(period, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := parquet.WriteFile(filepath.Join(period, "timeline.parquet"), rows, parquet.KeyValueMetadata(history.LineageKey, first.Model.Lineage)); err != nil {
		t.Fatal(err)
	}
	assign := func(h string) *kinmap.Result {
		o := options(week2)
		o.History = h
		r, err := kinmap.Assign(o, first.Model)
		if err != nil {
			t.Fatal(err)
		}
		return r
	}
	a, b := assign(now), assign(old)
	if !reflect.DeepEqual(a.Table.Windows, b.Table.Windows) || !reflect.DeepEqual(a.Switches, b.Switches) {
		t.Errorf("continuing from the old folder: %d switches, from this version's: %d; want the same timelines", len(b.Switches), len(a.Switches))
	}
	alone, err := kinmap.Assign(options(week2), first.Model)
	if err != nil {
		t.Fatal(err)
	}
	if reflect.DeepEqual(alone.Switches, a.Switches) && reflect.DeepEqual(alone.Table.Windows, a.Table.Windows) {
		t.Error("the history changed no window of the second week; the check would not tell")
	}
	if err := b.AppendHistory(old); err != nil {
		t.Fatal(err)
	}
	h, err := history.Read(old)
	if err != nil {
		t.Fatal(err)
	}
	if n := len(first.Table.Windows) + len(b.Table.Windows); len(h.Windows) != n {
		t.Errorf("the old folder holds %d windows after a write, want %d", len(h.Windows), n)
	}
}
