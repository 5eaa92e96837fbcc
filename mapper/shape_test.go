package mapper

import (
	"bytes"
	"encoding/json"
	"strings"
	"testing"
)

// A model's lattice and training settings name the shape in kinmap's words
// and read back as they were.
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
		l := Lattice{Cols: 6, Rows: 4, Hex: tc.hex, Flat: tc.flat}
		b, err := json.Marshal(l)
		if err != nil {
			t.Fatal(err)
		}
		want := `{"Cols":6,"Rows":4,"Cells":"` + tc.cells + `","Surface":"` + tc.surface + `"}`
		if string(b) != want {
			t.Errorf("lattice %+v recorded as %s, want %s", l, b, want)
		}
		var back Lattice
		if err := json.Unmarshal(b, &back); err != nil || back != l {
			t.Errorf("lattice %s read as %+v, %v; want %+v", b, back, err, l)
		}

		c := Config{Cols: 6, Rows: 4, Hex: tc.hex, Flat: tc.flat, Rule: RuleOnline, Seed: 7, Workers: 3}
		if b, err = json.Marshal(c); err != nil {
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
// as are fields a lattice does not have.
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
		var l Lattice
		if err := json.Unmarshal([]byte(tc.json), &l); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("lattice %s: error %v, want one saying %q", tc.json, err, tc.want)
		}
		var c Config
		cfg := bytes.ToLower([]byte(tc.json))
		if err := json.Unmarshal(cfg, &c); err == nil || !strings.Contains(strings.ToLower(err.Error()), strings.ToLower(tc.want)) {
			t.Errorf("settings %s: error %v, want one saying %q", cfg, err, tc.want)
		}
	}
}
