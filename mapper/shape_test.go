package mapper

import (
	"encoding/json"
	"strings"
	"testing"
)

// Training settings record the lattice's shape by its names (those of
// package lattice, checked there) in place of Hex and Flat, and read back
// as they were.
func TestShapeRecordedByName(t *testing.T) {
	for _, tc := range [][2]bool{{true, false}, {false, false}, {true, true}, {false, true}} {
		c := Config{Cols: 6, Rows: 4, Hex: tc[0], Flat: tc[1], Rule: RuleOnline, Seed: 7, Workers: 3}
		b, err := json.Marshal(c)
		if err != nil {
			t.Fatal(err)
		}
		var keys map[string]any
		if err := json.Unmarshal(b, &keys); err != nil {
			t.Fatal(err)
		}
		if l := c.Lattice(); keys["cells"] != l.Cells() || keys["surface"] != l.Surface() || keys["hex"] != nil || keys["flat"] != nil || keys["rule"] != RuleOnline {
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

// Settings refuse a shape recorded both ways or half of the old way (the
// rules of package lattice, tested there in full) and fields they do not
// have.
func TestShapeRefused(t *testing.T) {
	for _, tc := range []struct{ json, want string }{
		{`{"cols":6,"rows":4,"cells":"hex","surface":"torus","hex":true}`, "both by name"},
		{`{"cols":6,"rows":4,"hex":true}`, "one of them is missing"},
		{`{"cols":6,"rows":4,"cells":"rect","surface":"torus"}`, `cells "rect"`},
		{`{"cols":6,"rows":4,"cells":"hex","surface":"torus","shape":"x"}`, "unknown field"},
	} {
		var c Config
		if err := json.Unmarshal([]byte(tc.json), &c); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("settings %s: error %v, want one saying %q", tc.json, err, tc.want)
		}
	}
}
