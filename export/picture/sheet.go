package picture

import (
	"image"
	"image/color"
	"math"
	"slices"
	"strconv"

	"github.com/kinmap/kinmap/lattice"
)

// copyFade is how far the wrapped copies around a torus are faded toward
// white, so that they read as repeats of the map and not as more of it.
const copyFade = 0.55

// sheet places a lattice on a canvas. A torus is drawn with a margin of
// wrapped copies of the opposite edges around the map, faded, and the seam
// between map and copies dashed; a plane is drawn alone with its edge.
type sheet struct {
	lat    lattice.Lattice
	s      float64         // pixels per lattice unit (distance of neighbours)
	origin pt              // pixel position of the planar origin
	clip   image.Rectangle // the panel: the map and its margin
	pitch  float64         // planar distance of rows
}

// tile is one drawn copy of a unit.
type tile struct {
	u    int
	c    pt   // centre in pixels
	main bool // the unit itself, not a wrapped copy
}

// newSheet fits a lattice, with margin lattice units of wrapped copies on
// each side of a torus, into a box of at most maxW × maxH pixels whose top
// left corner is at x, y. The scale is at most maxS pixels per unit.
func newSheet(l lattice.Lattice, x, y int, maxW, maxH, margin, maxS float64) sheet {
	sh := sheet{lat: l, pitch: 1}
	if l.Hex {
		sh.pitch = math.Sqrt(3) / 2
	}
	if l.Flat {
		margin = 0.1
	} else {
		px, py := l.Period()
		margin = math.Min(margin, math.Min(px, py)/2)
	}
	x0, y0, x1, y1 := sh.extent()
	x0, y0, x1, y1 = x0-margin, y0-margin, x1+margin, y1+margin
	sh.s = math.Min(maxS, math.Min(maxW/(x1-x0), maxH/(y1-y0)))
	sh.origin = pt{float64(x) - x0*sh.s, float64(y) - y0*sh.s}
	sh.clip = image.Rect(x, y, x+int(math.Ceil((x1-x0)*sh.s)), y+int(math.Ceil((y1-y0)*sh.s)))
	return sh
}

// extent returns the planar bounding box of the map's tiles.
func (sh sheet) extent() (x0, y0, x1, y1 float64) {
	x0, y0, x1, y1 = math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
	for u := range sh.lat.Units() {
		x, y := sh.lat.Position(u)
		x0, y0, x1, y1 = math.Min(x0, x), math.Min(y0, y), math.Max(x1, x), math.Max(y1, y)
	}
	hw, hh := 0.5, 0.5
	if sh.lat.Hex {
		hh = 1 / math.Sqrt(3)
	}
	return x0 - hw, y0 - hh, x1 + hw, y1 + hh
}

// px returns the pixel position of a planar point.
func (sh sheet) px(x, y float64) pt { return pt{sh.origin.X + x*sh.s, sh.origin.Y + y*sh.s} }

// planar returns the planar position of a pixel.
func (sh sheet) planar(p pt) (x, y float64) {
	return (p.X - sh.origin.X) / sh.s, (p.Y - sh.origin.Y) / sh.s
}

// cellAt returns the unwrapped column and row of the tile centred at planar
// x, y.
func (sh sheet) cellAt(x, y float64) (col, row int) {
	row = int(math.Round(y / sh.pitch))
	if sh.lat.Hex && row%2 != 0 {
		x -= 0.5
	}
	return int(math.Round(x)), row
}

// inMain reports whether an unwrapped cell belongs to the map itself.
func (sh sheet) inMain(col, row int) bool {
	return col >= 0 && col < sh.lat.Cols && row >= 0 && row < sh.lat.Rows
}

// tiles returns the tiles that show in the panel, the map's own first.
func (sh sheet) tiles() []tile {
	var out []tile
	for u := range sh.lat.Units() {
		x, y := sh.lat.Position(u)
		out = append(out, tile{u: u, c: sh.px(x, y), main: true})
	}
	if sh.lat.Flat {
		return out
	}
	px, py := sh.lat.Period()
	reach := image.Rect(sh.clip.Min.X-int(sh.s), sh.clip.Min.Y-int(sh.s), sh.clip.Max.X+int(sh.s), sh.clip.Max.Y+int(sh.s))
	for j := -1; j <= 1; j++ {
		for i := -1; i <= 1; i++ {
			if i == 0 && j == 0 {
				continue
			}
			for u := range sh.lat.Units() {
				x, y := sh.lat.Position(u)
				c := sh.px(x+float64(i)*px, y+float64(j)*py)
				if image.Pt(int(c.X), int(c.Y)).In(reach) {
					out = append(out, tile{u: u, c: c})
				}
			}
		}
	}
	return out
}

// shape returns the outline of a tile centred at c, grown outwards by g
// pixels: a pointy-topped hexagon or a square.
func (sh sheet) shape(c pt, g float64) []pt {
	if !sh.lat.Hex {
		h := sh.s/2 + g
		return rectPath(c.X-h, c.Y-h, c.X+h, c.Y+h)
	}
	r := sh.s/math.Sqrt(3) + g/math.Cos(math.Pi/6)
	p := make([]pt, 6)
	for k := range p {
		a := math.Pi/6 + float64(k)*math.Pi/3
		p[k] = pt{c.X + r*math.Cos(a), c.Y + r*math.Sin(a)}
	}
	return p
}

// directions returns the planar unit steps to a tile's neighbours.
func (sh sheet) directions() []pt {
	if !sh.lat.Hex {
		return []pt{{1, 0}, {0, 1}, {-1, 0}, {0, -1}}
	}
	d := make([]pt, 6)
	for k := range d {
		a := float64(k) * math.Pi / 3
		d[k] = pt{math.Cos(a), math.Sin(a)}
	}
	return d
}

// edge is the side shared by a drawn tile and the tile next to it.
type edge struct {
	u, v int  // units on either side; v is -1 beyond a plane's edge
	a, b pt   // end points in pixels
	seam bool // between the map and a wrapped copy, or the plane's edge
}

// edges returns every side of the drawn tiles once.
func (sh sheet) edges(tiles []tile) []edge {
	half := 0.5 // half the side of a tile, in lattice units
	if sh.lat.Hex {
		half = 0.5 / math.Sqrt(3)
	}
	seen := make(map[[2]int]bool)
	var out []edge
	for _, t := range tiles {
		tx, ty := sh.planar(t.c)
		tc, tr := sh.cellAt(tx, ty)
		for _, d := range sh.directions() {
			nx, ny := tx+d.X, ty+d.Y
			m := sh.px((tx+nx)/2, (ty+ny)/2)
			key := [2]int{int(math.Round(m.X * 4)), int(math.Round(m.Y * 4))}
			if seen[key] {
				continue
			}
			seen[key] = true
			nc, nr := sh.cellAt(nx, ny)
			e := edge{u: t.u, v: sh.lat.Unit(nc, nr), seam: sh.inMain(tc, tr) != sh.inMain(nc, nr)}
			n := d.perp().scale(half * sh.s)
			e.a, e.b = m.add(n), m.sub(n)
			out = append(out, e)
		}
	}
	return out
}

// body returns the tile's outline grown by half a pixel, so that
// neighbouring tiles leave no line of background between them.
func (sh sheet) body(t tile) []pt { return sh.shape(t.c, 0.5) }

// paint fills a tile with col, faded if it is a wrapped copy.
func (sh sheet) paint(c *canvas, t tile, col color.RGBA) {
	c.fill(sh.clip, image.NewUniform(mixRGBA(col, white, t.fade())), sh.body(t))
}

// paintValues fills every tile in the ramp colour of its unit's value, on
// the values' own range, and returns that range.
func (sh sheet) paintValues(c *canvas, vals []float64) (lo, hi float64) {
	lo, hi = slices.Min(vals), slices.Max(vals)
	tiles := sh.tiles()
	for _, t := range tiles {
		sh.paint(c, t, rampColour(unitInterval(vals[t.u], lo, hi)))
	}
	sh.outline(c, sh.edges(tiles), false)
	return lo, hi
}

// fade returns how far the tile is faded toward white.
func (t tile) fade() float64 {
	if t.main {
		return 0
	}
	return copyFade
}

// gridWidth is the width of the white grid lines between tiles.
func (sh sheet) gridWidth() float64 { return math.Max(1, sh.s/30) }

// outline draws the grid between all tiles, then the seam or edge.
func (sh sheet) outline(c *canvas, es []edge, grid bool) {
	w := sh.gridWidth()
	if grid {
		for _, e := range es {
			c.line(sh.clip, e.a, e.b, w, white)
		}
	}
	for _, e := range es {
		if !e.seam {
			continue
		}
		if sh.lat.Flat {
			c.line(sh.clip, e.a, e.b, 1.5*w, softInk)
		} else {
			c.dashed(sh.clip, e.a, e.b, 1.5*w, math.Max(2.5, sh.s/8), ink)
		}
	}
}

// borders draws thick lines between neighbouring tiles of different groups.
func (sh sheet) borders(c *canvas, es []edge, group []int) {
	w := math.Max(2, math.Min(3.5, sh.s/12))
	for _, e := range es {
		if e.v < 0 || group[e.u] == group[e.v] {
			continue
		}
		c.line(sh.clip, e.a, e.b, w, ink)
		c.disc(sh.clip, e.a, w/2, ink)
		c.disc(sh.clip, e.b, w/2, ink)
	}
}

// labelAxes writes column numbers above the panel and row numbers left of
// it, faint for the wrapped copies, so that the wrap reads off the numbers.
func (sh sheet) labelAxes(c *canvas) {
	f := c.ft.small
	step := 1
	for _, k := range []int{1, 2, 5, 10, 20, 50} {
		step = k
		if float64(k)*sh.s >= 24 {
			break
		}
	}
	x0, y0 := sh.planar(pt{float64(sh.clip.Min.X), float64(sh.clip.Min.Y)})
	x1, y1 := sh.planar(pt{float64(sh.clip.Max.X), float64(sh.clip.Max.Y)})
	// label returns the number of the k-th column or row of n, in the
	// colour of the map or of a copy, unless it is left out.
	label := func(k, n int) (string, color.RGBA, bool) {
		m := mod(k, n)
		if m%step != 0 || (sh.lat.Flat && k != m) {
			return "", ink, false
		}
		if k != m {
			return strconv.Itoa(m), faintInk, true
		}
		return strconv.Itoa(m), softInk, true
	}
	for col := int(math.Ceil(x0)); float64(col) <= x1; col++ {
		if s, ink, ok := label(col, sh.lat.Cols); ok {
			c.text(sh.px(float64(col), 0).X, float64(sh.clip.Min.Y)-6, s, f, ink, alignCentre)
		}
	}
	for row := int(math.Ceil(y0 / sh.pitch)); float64(row)*sh.pitch <= y1; row++ {
		if s, ink, ok := label(row, sh.lat.Rows); ok {
			y := sh.px(0, float64(row)*sh.pitch).Y + ascent(f)/2
			c.text(float64(sh.clip.Min.X)-6, y, s, f, ink, alignRight)
		}
	}
	c.text(float64(sh.clip.Min.X+sh.clip.Max.X)/2, float64(sh.clip.Min.Y)-6-ascent(f)-8, "column", f, softInk, alignCentre)
	c.vtext(float64(sh.clip.Min.X)-6-width(f, "00")-16, float64(sh.clip.Min.Y+sh.clip.Max.Y)/2, "row", f, softInk)
}

func mod(a, n int) int { return ((a % n) + n) % n }
