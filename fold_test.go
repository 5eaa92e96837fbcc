package kinmap_test

import (
	"fmt"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/model"
	"github.com/kinmap/kinmap/scenarios"
)

// The air handlers of the family run to a weekly calendar whose weekends
// the grouping finds as an area of their own that no site holds: a new
// map folds it as a phase, counts held regimes only, and the saved model
// assigns the same dump to the same regimes and updates with the same
// number of regimes. A number of regimes given is kept.
func TestFoldWeekendPhase(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end runs")
	}
	spec, err := scenarios.DefaultSpec("ahus")
	if err != nil {
		t.Fatal(err)
	}
	fleet, o := scenarioOptions(t, spec)
	res, err := kinmap.Train(o)
	if err != nil {
		t.Fatal(err)
	}
	m := res.Model
	if len(m.Phases) == 0 {
		// Then the grouping found no area that no site holds, and the
		// checks below that every regime is held still apply.
		t.Log("no phase folded")
	}
	if len(m.Regimes) != len(fleet.Regimes) || m.Choice.K != len(m.Regimes) {
		t.Errorf("%d regimes (choice K %d), want the true %d", len(m.Regimes), m.Choice.K, len(fleet.Regimes))
	}
	held := heldRegimes(res.Table.Windows)
	for k, r := range m.Regimes {
		if r.ID != k+1 || held[r.ID] == 0 {
			t.Errorf("regime %d (position %d) holds %d windows; want numbers 1… and every regime held", r.ID, k, held[r.ID])
		}
	}
	if len(m.Phases) > 0 && !strings.Contains(res.Info.Regimes.Note, "is a phase of regime") {
		t.Errorf("choice note %q names no phase", res.Info.Regimes.Note)
	}
	// The runner-up is one split from the number the grouping found, which
	// the note and run.json state beside the regimes held.
	if found := len(m.Regimes) + len(m.Phases); len(m.Phases) > 0 &&
		(res.Info.Regimes.Found != found || !strings.Contains(res.Info.Regimes.Note, fmt.Sprintf("; the grouping: %d regimes", found))) {
		t.Errorf("choice found %d, note %q; want %d found, in the note too", res.Info.Regimes.Found, res.Info.Regimes.Note, found)
	}
	path := filepath.Join(t.TempDir(), "fleet.model")
	if err := m.WriteFile(path); err != nil {
		t.Fatal(err)
	}
	saved, err := model.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	asg, err := kinmap.Assign(o, saved)
	if err != nil {
		t.Fatal(err)
	}
	if got, want := regimesBySite(asg.Table.Windows), regimesBySite(res.Table.Windows); !slices.Equal(got, want) {
		t.Error("assigning the training dump with the saved model decodes other regimes")
	}
	up, err := kinmap.Update(o, saved)
	if err != nil {
		t.Fatal(err)
	}
	if held := heldRegimes(up.Table.Windows); len(up.Model.Regimes) != len(m.Regimes) || len(held) != len(up.Model.Regimes) {
		t.Errorf("update: %d regimes, %d held, want %d", len(up.Model.Regimes), len(held), len(m.Regimes))
	}
	o.Map.Regimes = len(m.Regimes) + len(m.Phases)
	given, err := kinmap.Train(o)
	if err != nil {
		t.Fatal(err)
	}
	if len(given.Model.Regimes) != o.Map.Regimes || len(given.Model.Phases) != 0 {
		t.Errorf("--regimes %d gave %d regimes and %d phases", o.Map.Regimes, len(given.Model.Regimes), len(given.Model.Phases))
	}
}

func heldRegimes(ws []features.Window) map[int]int {
	n := map[int]int{}
	for _, w := range ws {
		n[w.Regime]++
	}
	return n
}

// regimesBySite lists the windows' regimes in order of site and start.
func regimesBySite(ws []features.Window) []int {
	ws = slices.Clone(ws)
	slices.SortStableFunc(ws, func(a, b features.Window) int {
		if c := strings.Compare(a.Site, b.Site); c != 0 {
			return c
		}
		return a.Start.Compare(b.Start)
	})
	out := make([]int, len(ws))
	for i, w := range ws {
		out[i] = w.Regime
	}
	return out
}

// Folding renumbers the regimes of a new map, and so names another lineage
// than the map's before it: the run must read its history under the
// lineage it writes. Run again on the same dump with the history of the
// first run, it continues that history: every switch it reports is a
// revision of the same switch, not news again.
func TestFoldHistoryContinues(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end runs")
	}
	spec, err := scenarios.DefaultSpec("ahus")
	if err != nil {
		t.Fatal(err)
	}
	_, o := scenarioOptions(t, spec)
	o.History = filepath.Join(t.TempDir(), "history")
	first, err := kinmap.Train(o)
	if err != nil {
		t.Fatal(err)
	}
	if len(first.Model.Phases) == 0 {
		t.Skip("no phase folded on this fleet: nothing renumbered")
	}
	if err := first.AppendHistory(o.History); err != nil {
		t.Fatal(err)
	}
	again, err := kinmap.Train(o)
	if err != nil {
		t.Fatal(err)
	}
	if again.Model.Lineage != first.Model.Lineage {
		t.Errorf("lineage %q, the first run's %q", again.Model.Lineage, first.Model.Lineage)
	}
	switches, news := 0, 0
	for _, r := range again.Attention {
		if r.Time.IsZero() || r.Site == "" {
			continue // not a site's switch
		}
		switches++
		if !r.Revision {
			news++
			if news <= 3 {
				t.Errorf("row %d: %s, reported as new by the same dump's second run", r.Rank, r.Reason)
			}
		}
	}
	if switches == 0 {
		t.Fatal("no switch in the work list")
	}
	t.Logf("%d of %d switch rows new", news, switches)
}
