package picture

import (
	"image"
	"image/color"
	"math"
	"testing"

	"github.com/kinmap/kinmap/lattice"
	"github.com/kinmap/kinmap/model"
	"github.com/paulmach/orb"
	"github.com/paulmach/orb/geo"
)

// drawn returns the image one drawer makes of in.
func drawn(t *testing.T, in Input, d drawer) *image.RGBA {
	t.Helper()
	if err := check(in); err != nil {
		t.Fatal(err)
	}
	ft, err := newFonts()
	if err != nil {
		t.Fatal(err)
	}
	c, _ := d(ft, in)
	if c == nil {
		t.Fatal("nothing drawn")
	}
	return c.img
}

func rgbaAt(img image.Image, p pt) color.RGBA {
	return color.RGBAModel.Convert(img.At(int(math.Floor(p.X)), int(math.Floor(p.Y)))).(color.RGBA)
}

// badges returns the centres of the regime numbers, which cover their tiles.
func badges(sh sheet, m *model.Model) []pt {
	var out []pt
	for _, r := range m.Regimes {
		if u, ok := labelUnit(sh, m.UnitRegime, r.ID); ok {
			out = append(out, sh.px(sh.lat.Position(u)))
		}
	}
	return out
}

func nearAny(p pt, ps []pt, r float64) bool {
	for _, q := range ps {
		if p.sub(q).length() < r {
			return true
		}
	}
	return false
}

// step returns the planar step from unit u to its neighbour v, the short
// way round a torus, and whether it crosses the seam.
func step(l lattice.Lattice, u, v int) (d pt, wrapped bool) {
	ux, uy := l.Position(u)
	vx, vy := l.Position(v)
	d = pt{vx - ux, vy - uy}
	if !l.Flat {
		px, py := l.Period()
		d.X -= px * math.Round(d.X/px)
		d.Y -= py * math.Round(d.Y/py)
	}
	return d, math.Abs(ux+d.X-vx) > 1e-9 || math.Abs(uy+d.Y-vy) > 1e-9
}

// tileColour returns the colour of unit v's tile in the regime map: faded
// for a wrapped copy.
func tileColour(m *model.Model, v int, wrapped bool) color.RGBA {
	c := RegimeColour(m.UnitRegime[v])
	if wrapped {
		return mixRGBA(c, white, copyFade)
	}
	return c
}

// regimeMapOf draws the regime map of a demonstration run of five regimes
// on l, and returns the model, the image, its sheet and the centres of the
// regime numbers, which cover their tiles.
func regimeMapOf(t *testing.T, l lattice.Lattice) (*model.Model, *image.RGBA, sheet, []pt) {
	in := demoInput(l, 5, 20)
	sh := pageSheet(l)
	return in.Model, drawn(t, in, regimeMap), sh, badges(sh, in.Model)
}

// Lattices of up to seven regimes, whose colours carry no hatch.
var geometryLattices = []lattice.Lattice{
	{Cols: 20, Rows: 16, Hex: true},
	{Cols: 9, Rows: 7, Hex: true, Flat: true},
	{Cols: 10, Rows: 8},
	{Cols: 6, Rows: 5, Flat: true},
}

func TestRegimeMapTileCentres(t *testing.T) {
	for _, l := range geometryLattices {
		m, img, sh, skip := regimeMapOf(t, l)
		for u := range l.Units() {
			p := sh.px(l.Position(u))
			if nearAny(p, skip, 1) {
				continue
			}
			if got, want := rgbaAt(img, p), RegimeColour(m.UnitRegime[u]); got != want {
				t.Errorf("%s: unit %d at %.0f,%.0f: %v, want regime %d's %v", shapeName(l), u, p.X, p.Y, got, m.UnitRegime[u], want)
			}
		}
	}
}

func TestRegimeMapNeighboursAdjacent(t *testing.T) {
	// Three quarters of the way from a unit's centre toward each lattice
	// neighbour (lattice.Lattice.Neighbours, placed by Lattice.Position, the
	// short way round a torus) lies inside the neighbour's tile, which must
	// show the neighbour's regime: a wrapped copy, faded, where the step
	// crosses the seam.
	for _, l := range geometryLattices {
		m, img, sh, skip := regimeMapOf(t, l)
		for u := range l.Units() {
			ux, uy := l.Position(u)
			for _, v := range l.Neighbours(u) {
				d, wrapped := step(l, u, v)
				if math.Abs(d.length()-1) > 1e-9 {
					t.Fatalf("%s: units %d and %d are %.3f apart", shapeName(l), u, v, d.length())
				}
				probe := sh.px(ux+0.75*d.X, uy+0.75*d.Y)
				if nearAny(probe, skip, 20) {
					continue
				}
				want := tileColour(m, v, wrapped)
				if got := rgbaAt(img, probe); got != want {
					t.Errorf("%s: from unit %d toward neighbour %d (wrapped %v): %v, want %v", shapeName(l), u, v, wrapped, got, want)
				}
			}
		}
	}
}

func TestTorusMarginRepeatsOppositeEdge(t *testing.T) {
	// Beyond each edge of a torus lies a faded copy of the opposite edge:
	// column 0 again right of the last column, the last row again above
	// row 0, and so on, in the regime map and in the U-matrix alike.
	for _, l := range []lattice.Lattice{{Cols: 20, Rows: 16, Hex: true}, {Cols: 10, Rows: 8}} {
		in := demoInput(l, 5, 20)
		sh := pageSheet(l)
		um := in.Model.Map.UMatrix()
		lo, hi := um[0], um[0]
		for _, v := range um {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
		for _, tc := range []struct {
			file string
			draw drawer
			col  func(u int) color.RGBA
		}{
			{"regimes.png", regimeMap, func(u int) color.RGBA { return RegimeColour(in.Model.UnitRegime[u]) }},
			{"umatrix.png", uMatrix, func(u int) color.RGBA { return rampColour(unitInterval(um[u], lo, hi)) }},
		} {
			img := drawn(t, in, tc.draw)
			px, py := l.Period()
			checked := 0
			check := func(u int, dx, dy float64) {
				x, y := l.Position(u)
				p := sh.px(x+dx, y+dy)
				if !image.Pt(int(p.X), int(p.Y)).In(sh.clip.Inset(2)) {
					return
				}
				checked++
				if got, want := rgbaAt(img, p), mixRGBA(tc.col(u), white, copyFade); got != want {
					t.Errorf("%s %s: copy of unit %d shifted by %.1f,%.1f: %v, want %v", shapeName(l), tc.file, u, dx, dy, got, want)
				}
			}
			for r := range l.Rows {
				check(l.Unit(0, r), px, 0)
				check(l.Unit(l.Cols-1, r), -px, 0)
			}
			for c := range l.Cols {
				check(l.Unit(c, 0), 0, py)
				check(l.Unit(c, l.Rows-1), 0, -py)
			}
			if checked < l.Cols+l.Rows {
				t.Errorf("%s %s: only %d copies inside the picture", shapeName(l), tc.file, checked)
			}
		}
	}
}

func TestPlaneHasNoCopies(t *testing.T) {
	l := lattice.Lattice{Cols: 9, Rows: 7, Hex: true, Flat: true}
	_, img, sh, _ := regimeMapOf(t, l)
	for r := range l.Rows {
		for _, c := range []int{0, l.Cols - 1} {
			x, y := l.Position(l.Unit(c, r))
			side := -1.0
			if c > 0 {
				side = 1
			}
			if got := rgbaAt(img, sh.px(x+side, y)); got != white {
				t.Errorf("beside unit %d,%d: %v, want the white page", c, r, got)
			}
		}
	}
}

func TestSquaresOnSquareCells(t *testing.T) {
	// Near the corner of a square tile the tile's own colour shows; on a
	// hexagonal lattice that point would lie in a neighbour.
	l := lattice.Lattice{Cols: 10, Rows: 8}
	m, img, sh, skip := regimeMapOf(t, l)
	for u := range l.Units() {
		c := sh.px(l.Position(u))
		p := c.add(pt{0.4 * sh.s, -0.4 * sh.s})
		if nearAny(p, skip, 20) {
			continue
		}
		if got, want := rgbaAt(img, p), RegimeColour(m.UnitRegime[u]); got != want {
			t.Errorf("unit %d corner: %v, want %v", u, got, want)
		}
	}
}

func TestHexagonsOnHexLattice(t *testing.T) {
	// A point 0.45 tile widths across and up from a hexagon's centre lies
	// beyond its slanted side, in the neighbour half a unit across and a
	// row up (Lattice.Position's offsets); inside a square it would not.
	l := lattice.Lattice{Cols: 20, Rows: 16, Hex: true}
	m, img, sh, skip := regimeMapOf(t, l)
	for u := range l.Units() {
		for _, v := range l.Neighbours(u) {
			d, wrapped := step(l, u, v)
			if math.Abs(math.Abs(d.X)-0.5) > 1e-9 {
				continue // a neighbour in the same row
			}
			probe := sh.px(l.Position(u)).add(pt{math.Copysign(0.45, d.X), math.Copysign(0.45, d.Y)}.scale(sh.s))
			if nearAny(probe, skip, 20) {
				continue
			}
			if got, want := rgbaAt(img, probe), tileColour(m, v, wrapped); got != want {
				t.Errorf("unit %d toward %d: %v, want %v", u, v, got, want)
			}
		}
	}
}

// markerCentre returns the centroid of the pixels of exactly colour c in b.
func markerCentre(t *testing.T, img image.Image, b image.Rectangle, c color.RGBA) pt {
	t.Helper()
	var sx, sy, n float64
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			if color.RGBAModel.Convert(img.At(x, y)).(color.RGBA) == c {
				sx, sy, n = sx+float64(x)+0.5, sy+float64(y)+0.5, n+1
			}
		}
	}
	if n == 0 {
		t.Fatalf("no pixel of %v", c)
	}
	return pt{sx / n, sy / n}
}

// longestRun returns the longest horizontal run of pixels of exactly c in b.
func longestRun(img image.Image, b image.Rectangle, c color.RGBA) int {
	best := 0
	for y := b.Min.Y; y < b.Max.Y; y++ {
		n := 0
		for x := b.Min.X; x < b.Max.X; x++ {
			if color.RGBAModel.Convert(img.At(x, y)).(color.RGBA) == c {
				n++
				best = max(best, n)
			} else {
				n = 0
			}
		}
	}
	return best
}

func TestSiteMapScale(t *testing.T) {
	// Two probe sites of their own regimes, one degree of longitude and half
	// a degree of latitude apart, and four corner sites; the map is centred
	// on latitude 48.2°N.
	sites := []SitePoint{
		{ID: "a", Lon: 10, Lat: 48, Located: true, Regime: 1},
		{ID: "b", Lon: 11, Lat: 48.5, Located: true, Regime: 2},
		{ID: "sw", Lon: 9, Lat: 47.5, Located: true, Regime: 3},
		{ID: "se", Lon: 12.5, Lat: 47.5, Located: true, Regime: 3},
		{ID: "nw", Lon: 9, Lat: 48.9, Located: true, Regime: 3},
		{ID: "ne", Lon: 12.5, Lat: 48.9, Located: true, Regime: 3},
		{ID: "lost", Located: false, Regime: 4},
	}
	in := demoInput(lattice.Lattice{Cols: 6, Rows: 6, Hex: true}, 3, 0)
	in.Sites = sites
	img := drawn(t, in, siteMap)
	var located []SitePoint
	for _, s := range sites {
		if s.Located {
			located = append(located, s)
		}
	}
	// The plot's place on the page; the sites' places in it are measured.
	g := newGeoFrame(located, plotLeft, plotTop, plotMaxW, plotMaxH)
	a, b := markerCentre(t, img, g.plot, RegimeColour(1)), markerCentre(t, img, g.plot, RegimeColour(2))
	const midLat = (47.5 + 48.9) / 2
	// Kilometres per pixel east–west along the middle latitude and
	// north–south, by orb/geo's haversine distance.
	ew := geo.DistanceHaversine(orb.Point{10, midLat}, orb.Point{11, midLat}) / 1000 / (b.X - a.X)
	ns := geo.DistanceHaversine(orb.Point{10, 48}, orb.Point{10, 48.5}) / 1000 / (a.Y - b.Y)
	if r := ew / ns; math.Abs(r-1) > 0.01 {
		t.Errorf("km per pixel east–west %.4f, north–south %.4f: ratio %.3f, want 1 (x shrunk by cos φ)", ew, ns, r)
	}

	km, _ := g.scaleBar()
	if p := math.Pow(10, math.Floor(math.Log10(km))); km != p && km != 2*p && km != 5*p {
		t.Errorf("scale bar of %v km is not a round length", km)
	}
	bar := float64(longestRun(img, g.plot, ink))
	if got := bar * ew; math.Abs(got-km)/km > 0.03 {
		t.Errorf("scale bar %.0f px measures %.2f km on the map, labelled %v km", bar, got, km)
	}
}
