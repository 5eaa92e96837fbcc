package picture

import (
	"fmt"
	"image"
	"image/color"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/kinmap/kinmap/mapper"
)

// dotInk is the colour of the hit-count dots, a dark slate apart from every
// regime colour.
var dotInk = color.RGBA{0x2F, 0x3B, 0x4A, 0xFF}

// regimeMap draws each unit in its regime's colour, the borders between
// regimes, the regime numbers and a legend with their descriptions.
func regimeMap(ft *fonts, in Input) (*canvas, Picture) {
	m := in.Model
	l := m.Map.Lattice
	hits := m.Map.Hits(in.Assignments)
	units := make(map[int]int)
	windows := make(map[int]int)
	for u, id := range m.UnitRegime {
		units[id]++
		windows[id] += hits[u]
	}
	desc := make(map[int]string)
	for _, r := range m.Regimes {
		desc[r.ID] = legendText(r)
	}
	// The legend is laid out first, as its entries take one or two lines
	// of description and the page must hold them.
	const legendW, entryGap = 400.0, 14
	type entry struct {
		id          int
		name, count string
		lines       []string
	}
	var legend []entry
	legendH := ascent(ft.head) + lineGap + 12
	for _, id := range regimeIDs(m) {
		e := entry{id: id, name: strconv.Itoa(id), count: plural(units[id], "unit")}
		d := desc[id]
		if id < 1 {
			e.name, d = "–", "no regime"
		} else if d == "" {
			d = "no description"
		}
		e.lines = wrap(ft.body, d, legendW-64, 2)
		if len(in.Assignments) > 0 {
			e.count += fmt.Sprintf(", %.0f %% of windows", 100*float64(windows[id])/float64(len(in.Assignments)))
		}
		legend = append(legend, e)
		legendH += float64(len(e.lines)+1)*lineGap + entryGap
	}

	c, sh, lp := latticePage(ft, l, "Regime map",
		fmt.Sprintf("%s, %d regimes", shapeName(l), len(m.Regimes)), legendW, legendH)
	tiles := sh.tiles()
	for _, t := range tiles {
		c.fillRegime(sh.clip, m.UnitRegime[t.u], t.fade(), sh.body(t))
	}
	es := sh.edges(tiles)
	sh.outline(c, es, true)
	sh.borders(c, es, m.UnitRegime)
	for _, e := range legend {
		u, ok := labelUnit(sh, m.UnitRegime, e.id)
		if !ok {
			continue
		}
		x, y := l.Position(u)
		numberBadge(c, sh.px(x, y), sh.s, strconv.Itoa(e.id))
	}

	y := lp.Y + ascent(ft.head)
	c.text(lp.X, y, "Regimes", ft.head, ink, alignLeft)
	y += lineGap + 12
	for _, e := range legend {
		swatch := sheet{lat: l, s: 26, pitch: sh.pitch}.shape(pt{lp.X + 13, y - ascent(ft.body)/2}, 0)
		c.fillRegime(c.img.Bounds(), e.id, 0, swatch)
		c.text(lp.X+36, y, e.name, ft.label, ink, alignLeft)
		y = textLines(c, lp.X+64, y, ft.body, ink, e.lines...)
		y = textLines(c, lp.X+64, y, ft.small, softInk, e.count) + entryGap
	}
	return c, Picture{Title: "Regime map",
		Caption: "Each unit of the map in the colour of its operating regime, with the regime's number at its heart and dark lines " +
			"where regimes meet. " + wrapNote(l)}
}

// numberBadge draws a number in a white disc, centred at o, for a tile of
// s pixels.
func numberBadge(c *canvas, o pt, s float64, label string) {
	r := math.Max(9, math.Min(16, 0.34*s))
	r = math.Max(r, width(c.ft.label, label)/2+4)
	c.disc(c.img.Bounds(), o, r+1.5, ink)
	c.disc(c.img.Bounds(), o, r, white)
	c.text(o.X, o.Y+ascent(c.ft.label)/2, label, c.ft.label, ink, alignCentre)
}

// labelUnit returns the unit of regime id that lies deepest inside it:
// farthest, in lattice steps, from any unit of another regime; of those,
// one off the map's edge rows and columns if any, where the seam or the
// edge would crowd its number, and the nearest to the regime's centre.
func labelUnit(sh sheet, group []int, id int) (int, bool) {
	l := sh.lat
	dist := make([]int, l.Units())
	var queue []int
	for u := range dist {
		dist[u] = -1
		for _, v := range l.Neighbours(u) {
			if group[v] != group[u] {
				dist[u] = 0
				queue = append(queue, u)
				break
			}
		}
	}
	for len(queue) > 0 {
		u := queue[0]
		queue = queue[1:]
		for _, v := range l.Neighbours(u) {
			if dist[v] < 0 {
				dist[v] = dist[u] + 1
				queue = append(queue, v)
			}
		}
	}
	var units []int
	for u, g := range group {
		if g == id {
			units = append(units, u)
		}
	}
	cx, cy := centre(l, units)
	best, bestD, bestE, bestC := -1, 0, false, math.Inf(1)
	for _, u := range units {
		d := dist[u]
		if d < 0 {
			d = math.MaxInt // one regime everywhere
		}
		col, row := l.Cell(u)
		e := col == 0 || row == 0 || col == l.Cols-1 || row == l.Rows-1
		x, y := l.Position(u)
		cd := planarDist(l, x-cx, y-cy)
		better := d > bestD || (d == bestD && (bestE && !e || bestE == e && cd < bestC))
		if best < 0 || better {
			best, bestD, bestE, bestC = u, d, e, cd
		}
	}
	return best, best >= 0
}

// centre returns the mean planar position of units: on a torus the
// circular mean along each period, so that a group across the seam has its
// centre inside it.
func centre(l mapper.Lattice, units []int) (x, y float64) {
	px, py := l.Period()
	var mx, my float64         // plain sums
	var cx, sx, cy, sy float64 // sums of cosines and sines of the phases
	for _, u := range units {
		ux, uy := l.Position(u)
		mx, my = mx+ux, my+uy
		a, b := 2*math.Pi*ux/px, 2*math.Pi*uy/py
		cx, sx = cx+math.Cos(a), sx+math.Sin(a)
		cy, sy = cy+math.Cos(b), sy+math.Sin(b)
	}
	n := max(float64(len(units)), 1)
	if l.Flat {
		return mx / n, my / n
	}
	return math.Atan2(sx, cx) / (2 * math.Pi) * px, math.Atan2(sy, cy) / (2 * math.Pi) * py
}

// planarDist returns the length of a planar step, the short way round on a
// torus.
func planarDist(l mapper.Lattice, dx, dy float64) float64 {
	if !l.Flat {
		px, py := l.Period()
		dx -= px * math.Round(dx/px)
		dy -= py * math.Round(dy/py)
	}
	return math.Hypot(dx, dy)
}

// uMatrix draws each unit in the ramp colour of its mean codebook distance
// to its lattice neighbours.
func uMatrix(ft *fonts, in Input) (*canvas, Picture) {
	m := in.Model
	l := m.Map.Lattice
	c, sh, lp := latticePage(ft, l, "U-matrix",
		shapeName(l)+", mean codebook distance of each unit to its lattice neighbours", 250, 560)
	lo, hi := sh.paintValues(c, m.Map.UMatrix())

	y := textLines(c, lp.X, lp.Y+ascent(ft.head), ft.head, ink, "Mean distance")
	y = textLines(c, lp.X, y, ft.small, softInk, "to neighbours, in", "standardised units")
	colourBar(c, lp.X, y, 28, 360, lo, hi)
	textLines(c, lp.X, y+360+lineGap+8, ft.small, softInk, "light: alike neighbours", "dark: a border between", "groups of units")
	return c, Picture{Title: "U-matrix",
		Caption: "Mean Euclidean distance between each unit's codebook vector and those of its lattice neighbours, in " +
			"standardised feature units: light tiles sit among alike neighbours, dark tiles on borders between groups. " + wrapNote(l)}
}

// unitInterval maps v from [lo, hi] to [0, 1]; a constant maps to 0.5.
func unitInterval(v, lo, hi float64) float64 {
	if hi <= lo {
		return 0.5
	}
	return (v - lo) / (hi - lo)
}

// hitMap draws a dot on each unit, its area proportional to the windows the
// unit won, and a cross on each unit that won none.
func hitMap(ft *fonts, in Input) (*canvas, Picture) {
	m := in.Model
	l := m.Map.Lattice
	hits := m.Map.Hits(in.Assignments)
	most := slices.Max(hits)
	unused := 0
	for _, h := range hits {
		if h == 0 {
			unused++
		}
	}
	c, sh, lp := latticePage(ft, l, "Hit counts",
		fmt.Sprintf("%s, %s on %s", shapeName(l), plural(len(in.Assignments), "window"), plural(l.Units(), "unit")), 280, 420)
	tiles := sh.tiles()
	rMax := 0.44 * sh.s
	for _, t := range tiles {
		sh.paint(c, t, emptyTile)
	}
	sh.outline(c, sh.edges(tiles), true)
	for _, t := range tiles {
		if h := hits[t.u]; h > 0 {
			c.disc(sh.clip, t.c, rMax*math.Sqrt(float64(h)/float64(most)), mixRGBA(dotInk, white, t.fade()))
		} else {
			cross(c, sh.clip, t.c, 0.16*sh.s, mixRGBA(softInk, white, t.fade()))
		}
	}

	y := lp.Y + ascent(ft.head)
	c.text(lp.X, y, "Windows won", ft.head, ink, alignLeft)
	step := math.Max(lineGap+8, 2*rMax+10)
	cy := y + step/2 + 4
	for _, n := range sampleCounts(most) {
		c.disc(c.img.Bounds(), pt{lp.X + rMax, cy}, rMax*math.Sqrt(float64(n)/float64(most)), dotInk)
		c.text(lp.X+2*rMax+14, cy+ascent(ft.body)/2, plural(n, "window"), ft.body, ink, alignLeft)
		cy += step
	}
	cross(c, c.img.Bounds(), pt{lp.X + rMax, cy}, 0.16*sh.s, softInk)
	c.text(lp.X+2*rMax+14, cy+ascent(ft.body)/2, "none", ft.body, ink, alignLeft)
	y = cy + 2*lineGap
	textLines(c, lp.X, y, ft.small, softInk, "dot area proportional to", "the windows a unit won;",
		fmt.Sprintf("%s unused (%.0f %%)", plural(unused, "unit"), 100*float64(unused)/float64(l.Units())))
	return c, Picture{Title: "Hit counts",
		Caption: "Windows won by each unit of the map: the area of each dot is proportional to the unit's windows, and a cross " +
			"marks a unit that won none. " + wrapNote(l)}
}

// cross draws a small × of half-size r.
func cross(c *canvas, clip image.Rectangle, o pt, r float64, col color.RGBA) {
	w := math.Max(1.2, r/3)
	c.line(clip, pt{o.X - r, o.Y - r}, pt{o.X + r, o.Y + r}, w, col)
	c.line(clip, pt{o.X - r, o.Y + r}, pt{o.X + r, o.Y - r}, w, col)
}

// sampleCounts returns up to three round counts for a dot-size legend, the
// largest not above most.
func sampleCounts(most int) []int {
	var out []int
	for k := range 3 {
		v := niceFloor(float64(most) / math.Pow(5, float64(k)))
		if v >= 1 && (len(out) == 0 || v < out[len(out)-1]) {
			out = append(out, v)
		}
	}
	return out
}

// niceFloor returns the largest 1, 2 or 5 times a power of ten not above
// x, or 0 below 1.
func niceFloor(x float64) int {
	if x < 1 {
		return 0
	}
	return int(math.Round(niceFloorF(x)))
}

// plural writes a count and a noun, in the plural unless the count is one.
func plural(n int, noun string) string {
	if n == 1 {
		return "1 " + noun
	}
	if strings.HasSuffix(noun, "ch") {
		return strconv.Itoa(n) + " " + noun + "es"
	}
	return strconv.Itoa(n) + " " + noun + "s"
}
