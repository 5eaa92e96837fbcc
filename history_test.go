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

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/mapper"
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
	read, err := mapper.ReadModel(&buf)
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
