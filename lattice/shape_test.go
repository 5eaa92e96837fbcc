package lattice

import (
	"encoding/json"
	"strings"
	"testing"
)

// A lattice records its shape in kinmap's words and reads back as it was.
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
	}
}
