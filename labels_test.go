package kinmap_test

import (
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/labels"
	"github.com/kinmap/kinmap/model"
)

// Names and statuses survive run → label → assign → update → assign, with
// the history kept throughout, on an update whose regimes split: the
// regimes that keep their numbers keep their labels, a new regime has
// none, and every table and GeoJSON layer shows the model's labels.
func TestLabelsSurviveUpdate(t *testing.T) {
	fleet := fleetT(t, 60, 2)
	dir := t.TempDir()
	week1, week2 := filepath.Join(dir, "week1.csv"), filepath.Join(dir, "week2.csv")
	writeDump(t, week1, fleet, fleet.WindowStart(0), fleet.WindowStart(7), 0, 0, 1)
	writeDump(t, week2, fleet, fleet.WindowStart(7), fleet.WindowStart(14), 0, 0, 2)
	hist := filepath.Join(dir, "history")

	// Two regimes first, four in the update: the update must split.
	o := options(week1)
	o.Map.Regimes = 2
	first, err := kinmap.Train(o)
	if err != nil {
		t.Fatal(err)
	}
	if err := first.Save(kinmap.Targets{Out: filepath.Join(dir, "run"), History: hist}); err != nil {
		t.Fatal(err)
	}
	modelFile := filepath.Join(dir, "run", "model")
	m, err := model.ReadFile(modelFile)
	if err != nil {
		t.Fatal(err)
	}
	ls, err := labels.Read(strings.NewReader("regime,name,status\n1,baseline,normal\n2,\"wet well, high\",watch\n"))
	if err != nil {
		t.Fatal(err)
	}
	if _, err := labels.Apply(m, ls); err != nil {
		t.Fatal(err)
	}
	if err := m.WriteFile(modelFile); err != nil {
		t.Fatal(err)
	}
	if m, err = model.ReadFile(modelFile); err != nil {
		t.Fatal(err)
	}
	want := map[int][2]string{1: {"baseline", "normal"}, 2: {"wet well, high", "watch"}}
	checkLabels(t, "labelled model", m, want)

	assigned, err := kinmap.Assign(options(week1), m)
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "assign1")
	if err := assigned.Save(kinmap.Targets{Out: out, History: hist}); err != nil {
		t.Fatal(err)
	}
	checkOutputs(t, out, want)

	o = options(week2)
	o.Map.Regimes = 4
	updated, err := kinmap.Update(o, m)
	if err != nil {
		t.Fatal(err)
	}
	split := slices.ContainsFunc(updated.Changes, func(c model.RegimeChange) bool { return c.Kind == model.ChangeSplit })
	if !split {
		t.Fatalf("the update from 2 to 4 regimes split none: changes %+v", updated.Changes)
	}
	t.Logf("update changes: %+v", updated.Changes)
	// The regimes that kept 1 and 2 keep their labels; 3 and 4 are new.
	checkLabels(t, "updated model", updated.Model, want)
	if updated.Model.Lineage != m.Lineage {
		t.Errorf("the update's lineage %q, the model's %q: labels must not change the numbering's lineage", updated.Model.Lineage, m.Lineage)
	}
	var warned int
	for _, w := range updated.Info.Warnings {
		if strings.Contains(w, "has no name or status") {
			warned++
		}
	}
	if warned != 2 {
		t.Errorf("%d warnings of unlabelled new regimes, want 2: %q", warned, updated.Info.Warnings)
	}
	out = filepath.Join(dir, "update")
	if err := updated.Save(kinmap.Targets{Out: out, History: hist}); err != nil {
		t.Fatal(err)
	}
	checkOutputs(t, out, want)

	m2, err := model.ReadFile(filepath.Join(out, "model"))
	if err != nil {
		t.Fatal(err)
	}
	again, err := kinmap.Assign(options(week2), m2)
	if err != nil {
		t.Fatal(err)
	}
	out = filepath.Join(dir, "assign2")
	if err := again.Save(kinmap.Targets{Out: out, History: hist}); err != nil {
		t.Fatal(err)
	}
	checkOutputs(t, out, want)
}

// checkLabels checks that the regimes of m named in want carry those
// labels and that every other regime has none.
func checkLabels(t *testing.T, what string, m *model.Model, want map[int][2]string) {
	t.Helper()
	for _, g := range m.Regimes {
		if got := [2]string{g.Name, g.Status}; got != want[g.ID] {
			t.Errorf("%s: regime %d labelled %q, want %q", what, g.ID, got, want[g.ID])
		}
	}
}

// checkOutputs checks that timeline.csv, switches.csv, sites.geojson and
// regimes.geojson of dir label every regime as want, read with
// encoding/csv and encoding/json, and that some window shows a label.
func checkOutputs(t *testing.T, dir string, want map[int][2]string) {
	t.Helper()
	shown := 0
	rows := readCSVFile(t, filepath.Join(dir, "timeline.csv"))
	for _, r := range rows {
		id, _ := strconv.Atoi(r["regime"])
		if got := [2]string{r["regime_name"], r["regime_status"]}; got != want[id] {
			t.Fatalf("%s: timeline.csv: %v labels regime %d %q, want %q", dir, r, id, got, want[id])
		}
		if r["regime_name"] != "" {
			shown++
		}
	}
	if shown == 0 {
		t.Errorf("%s: no window of timeline.csv is in a labelled regime", dir)
	}
	for _, r := range readCSVFile(t, filepath.Join(dir, "switches.csv")) {
		from, _ := strconv.Atoi(r["from_regime"])
		to, _ := strconv.Atoi(r["to_regime"])
		if got := [2]string{r["from_name"], r["from_status"]}; got != want[from] {
			t.Errorf("%s: switches.csv: %v labels regime %d %q", dir, r, from, got)
		}
		if got := [2]string{r["to_name"], r["to_status"]}; got != want[to] {
			t.Errorf("%s: switches.csv: %v labels regime %d %q", dir, r, to, got)
		}
	}
	for _, file := range []string{"sites.geojson", "regimes.geojson"} {
		b, err := os.ReadFile(filepath.Join(dir, file))
		if err != nil {
			t.Fatal(err)
		}
		var fc struct {
			Features []struct {
				Properties struct {
					Regime int    `json:"regime"`
					Name   string `json:"regime_name"`
					Status string `json:"regime_status"`
				} `json:"properties"`
			} `json:"features"`
		}
		if err := json.Unmarshal(b, &fc); err != nil {
			t.Fatal(err)
		}
		for _, f := range fc.Features {
			p := f.Properties
			if got := [2]string{p.Name, p.Status}; got != want[p.Regime] {
				t.Errorf("%s: %s labels regime %d %q, want %q", dir, file, p.Regime, got, want[p.Regime])
			}
		}
	}
}

// readCSVFile reads a CSV file with a header into one map per row.
func readCSVFile(t *testing.T, path string) []map[string]string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var out []map[string]string
	for _, r := range recs[1:] {
		m := map[string]string{}
		for i, h := range recs[0] {
			m[h] = r[i]
		}
		out = append(out, m)
	}
	return out
}
