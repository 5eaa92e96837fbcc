package picture

import (
	"fmt"
	"image"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/kinmap/kinmap/lattice"
)

// regimeMap draws each unit in its regime's colour, the borders between
// regimes, the regime numbers and a legend with their descriptions.
func regimeMap(ft *fonts, in Input) (*canvas, Picture) {
	m := in.Model
	l := m.Map.Lattice
	hits := m.Map.Hits(in.Windows)
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
		if len(in.Windows) > 0 {
			e.count += fmt.Sprintf(", %.0f %% of windows", 100*float64(windows[id])/float64(len(in.Windows)))
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
func centre(l lattice.Lattice, units []int) (x, y float64) {
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
func planarDist(l lattice.Lattice, dx, dy float64) float64 {
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

// hitMap fills each unit from the bottom like a gauge, to a height
// proportional to the windows the unit won (the fullest unit is full), and
// draws the borders between regimes, so that a regime's busy and idle
// units can be told apart. A unit that won none is left empty with a short
// dash at its foot.
func hitMap(ft *fonts, in Input) (*canvas, Picture) {
	m := in.Model
	l := m.Map.Lattice
	hits := m.Map.Hits(in.Windows)
	most := slices.Max(hits)
	unused := 0
	for _, h := range hits {
		if h == 0 {
			unused++
		}
	}
	c, sh, lp := latticePage(ft, l, "Windows per unit",
		fmt.Sprintf("%s, %s on %s", shapeName(l), plural(len(in.Windows), "window"), plural(l.Units(), "unit")), 280, 420)
	tiles := sh.tiles()
	for _, t := range tiles {
		gauge(c, sh.clip, sh.body(t), share(hits[t.u], most), t.fade(), sliver(sh))
	}
	es := sh.edges(tiles)
	sh.outline(c, es, true)
	sh.borders(c, es, m.UnitRegime)

	y := lp.Y + ascent(ft.head)
	c.text(lp.X, y, "Windows won", ft.head, ink, alignLeft)
	y += lineGap + 8
	key := sheet{lat: l, s: 34, pitch: sh.pitch}
	var samples []int
	for _, n := range []int{most, most / 2, most / 4} {
		if n > 0 && !slices.Contains(samples, n) {
			samples = append(samples, n)
		}
	}
	if unused > 0 {
		samples = append(samples, 0)
	}
	for _, n := range samples {
		o := pt{lp.X + 17, y + 17}
		shape := key.shape(o, 0)
		gauge(c, c.img.Bounds(), shape, share(n, most), 0, 0)
		for i := range shape {
			c.line(c.img.Bounds(), shape[i], shape[(i+1)%len(shape)], 1, softInk)
		}
		label := plural(n, "window")
		if n == 0 {
			label = "none"
		}
		c.text(lp.X+46, o.Y+ascent(ft.body)/2, label, ft.body, ink, alignLeft)
		y += 44
	}
	textLines(c, lp.X, y+lineGap, ft.small, softInk, "the filled height of a unit", "is its share of the busiest",
		fmt.Sprintf("unit's %s;", plural(most, "window")),
		fmt.Sprintf("%s unused (%.0f %%);", plural(unused, "unit"), 100*float64(unused)/float64(l.Units())),
		"dark lines: regime borders")
	return c, Picture{Title: "Windows per unit",
		Caption: "Windows won by each unit of the map: each unit is filled from its foot to a height proportional to its windows, " +
			"the busiest unit full; an empty unit with a dash at its foot won none. Dark lines are the borders between regimes. " + wrapNote(l)}
}

// share is n over most, 0 when most is 0.
func share(n, most int) float64 {
	if most == 0 {
		return 0
	}
	return float64(n) / float64(most)
}

// sliver is the least fill of a unit that won any window: it shows above
// the white grid line at the tile's foot, which on a hexagon's bottom
// corner, where two lines meet, covers about twice its width.
func sliver(sh sheet) float64 {
	if sh.lat.Hex {
		return 2*sh.gridWidth() + 2.5
	}
	return sh.gridWidth() + 1.5
}

// gauge paints a tile empty, then fills it from the bottom to the share f
// of its height in the dark end of the sequential ramp, at least minH
// pixels when f > 0 so that the grid line at its foot does not hide a
// unit that won few windows; an empty gauge gets a dash at its foot.
func gauge(c *canvas, clip image.Rectangle, body []pt, f, fade, minH float64) {
	c.fill(clip, image.NewUniform(mixRGBA(emptyTile, white, fade)), body)
	y0, y1 := math.Inf(1), math.Inf(-1)
	x0, x1 := math.Inf(1), math.Inf(-1)
	for _, p := range body {
		y0, y1 = math.Min(y0, p.Y), math.Max(y1, p.Y)
		x0, x1 = math.Min(x0, p.X), math.Max(x1, p.X)
	}
	if f <= 0 {
		w := (x1 - x0) / 5
		c.line(clip, pt{(x0+x1)/2 - w, y1 - 0.18*(y1-y0)}, pt{(x0+x1)/2 + w, y1 - 0.18*(y1-y0)}, math.Max(1.2, (y1-y0)/16), mixRGBA(softInk, white, fade))
		return
	}
	level := int(math.Round(y1 - math.Max(f*(y1-y0), minH)))
	c.fill(clip.Intersect(image.Rect(int(math.Floor(x0)), level, int(math.Ceil(x1)), int(math.Ceil(y1)))),
		image.NewUniform(mixRGBA(rampColour(0.8), white, fade)), body)
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
