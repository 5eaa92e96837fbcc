package mapper

import (
	"bytes"
	"encoding/json"
	"strings"
	"testing"
)

// Training settings name the lattice's shape in kinmap's words and read
// back as they were.
func TestShapeRecordedByName(t *testing.T) {
	for _, tc := range []struct {
		hex, flat      bool
		cells, surface string
	}{
		{true, false, "hex", "torus"},
		{false, false, "square", "torus"},
		{true, true, "hex", "plane"},
		{false, true, "square", "plane"},
	} {
		c := Config{Cols: 6, Rows: 4, Hex: tc.hex, Flat: tc.flat, Rule: RuleOnline, Seed: 7, Workers: 3}
		b, err := json.Marshal(c)
		if err != nil {
			t.Fatal(err)
		}
		var keys map[string]any
		if err := json.Unmarshal(b, &keys); err != nil {
			t.Fatal(err)
		}
		if keys["cells"] != tc.cells || keys["surface"] != tc.surface || keys["hex"] != nil || keys["flat"] != nil || keys["rule"] != RuleOnline {
			t.Errorf("settings %+v recorded as %s", c, b)
		}
		var cb Config
		if err := json.Unmarshal(b, &cb); err != nil {
			t.Fatal(err)
		}
		c.Workers = 0 // not recorded
		if cb.Lattice() != c.Lattice() || cb.Rule != c.Rule || cb.Seed != c.Seed || cb.Workers != 0 {
			t.Errorf("settings %s read as %+v, want %+v", b, cb, c)
		}
	}
}

// Shapes that are neither one way of recording nor the other are refused,
// as are fields the settings do not have.
func TestShapeRefused(t *testing.T) {
	for _, tc := range []struct{ json, want string }{
		{`{"Cols":6,"Rows":4,"Cells":"rect","Surface":"torus"}`, `cells "rect"`},
		{`{"Cols":6,"Rows":4,"Cells":"hex","Surface":"sheet"}`, `surface "sheet"`},
		{`{"Cols":6,"Rows":4,"Cells":"hex"}`, `surface ""`},
		{`{"Cols":6,"Rows":4}`, `cells ""`},
		{`{"Cols":6,"Rows":4,"Cells":"hex","Surface":"torus","Hex":true}`, "both by name"},
		{`{"Cols":6,"Rows":4,"Hex":true}`, "one of them is missing"},
		{`{"Cols":6,"Rows":4,"Cells":"hex","Surface":"torus","Shape":"x"}`, "unknown field"},
	} {
		var c Config
		cfg := bytes.ToLower([]byte(tc.json))
		if err := json.Unmarshal(cfg, &c); err == nil || !strings.Contains(strings.ToLower(err.Error()), strings.ToLower(tc.want)) {
			t.Errorf("settings %s: error %v, want one saying %q", cfg, err, tc.want)
		}
	}
}
