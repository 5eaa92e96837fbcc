package picture

import (
	"math"
	"slices"
	"testing"
)

// On the picture of windows per unit, the filled share of each unit's
// height, from its foot to the topmost pixel of fill on the vertical line
// through its centre, is the unit's windows over the busiest unit's
// (mapper.Map.Hits), within the width of the white grid line that covers
// the tile's rim and a pixel of antialiasing; a unit that won any window
// shows a sliver above that line, and a unit that won none no fill.
func TestHitGaugeHeights(t *testing.T) {
	fillInk := rampColour(0.8)
	for _, l := range geometryLattices {
		in := demoInput(l, 5, 20)
		img := drawn(t, in, hitMap)
		sh := pageSheet(l)
		hits := in.Model.Map.Hits(in.Windows)
		most := slices.Max(hits)
		for u := range l.Units() {
			c := sh.px(l.Position(u))
			body := sh.shape(c, 0)
			y0, y1 := math.Inf(1), math.Inf(-1)
			for _, p := range body {
				y0, y1 = math.Min(y0, p.Y), math.Max(y1, p.Y)
			}
			filled := 0.0
			for y := math.Floor(y0); y <= y1; y++ {
				if rgbaAt(img, pt{c.X, y}) == fillInk {
					filled = y1 - y
					break
				}
			}
			want := float64(hits[u]) / float64(most) * (y1 - y0)
			if hits[u] > 0 {
				want = math.Max(want, sliver(sh))
			}
			if math.Abs(filled-want) > sh.gridWidth()+1 || hits[u] == 0 && filled > 0 || hits[u] > 0 && filled == 0 {
				t.Errorf("%s: unit %d with %d of %d windows is filled %.0f px of %.0f, want %.1f", shapeName(l), u, hits[u], most, filled, y1-y0, want)
			}
		}
	}
}
