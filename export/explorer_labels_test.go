package export

import (
	"encoding/json"
	"slices"
	"testing"
)

// The explorer's regimes carry the user's names and statuses, so that its
// chips and site pages show them as the report's tables do.
func TestExplorerRegimeLabels(t *testing.T) {
	r := fixtureRun()
	ss, _ := sites(r)
	data, _, err := explorerJSON(r, ss, nil)
	if err != nil {
		t.Fatal(err)
	}
	var d struct {
		Regimes []struct {
			ID     int    `json:"id"`
			Name   string `json:"name"`
			Status string `json:"status"`
		} `json:"regimes"`
	}
	if err := json.Unmarshal(data, &d); err != nil {
		t.Fatal(err)
	}
	got := map[int][2]string{}
	for _, g := range d.Regimes {
		got[g.ID] = [2]string{g.Name, g.Status}
	}
	for _, g := range r.Model.Regimes {
		if want := [2]string{g.Name, g.Status}; got[g.ID] != want {
			t.Errorf("explorer regime %d labelled %q, want %q", g.ID, got[g.ID], want)
		}
	}
	if got[2][0] == "" {
		t.Error("the fixture's labelled regime 2 has no name in the explorer")
	}
}

// A register attribute whose name reads as one of kinmap's own columns,
// in any case, is shown prefixed in the explorer, as sites.geojson
// prefixes the names it uses itself; other names are shown as they are.
func TestExplorerAttrs(t *testing.T) {
	got := explorerAttrs([]string{"regime", "Regime", "RANK", "owner", "switches", "Last switch", "district"})
	want := []string{"register_regime", "register_Regime", "register_RANK", "owner", "register_switches", "register_Last switch", "district"}
	if !slices.Equal(got, want) {
		t.Errorf("explorerAttrs = %q, want %q", got, want)
	}
}
