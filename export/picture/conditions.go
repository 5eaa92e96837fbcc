package picture

import (
	"fmt"
	"strings"
)

// minLabelShare is the share of a unit's windows its most frequent label
// must hold for the conditions picture to place the label on it.
const minLabelShare = 0.25

// conditionMap draws the map with the labels of the events placed on the
// units whose windows they marked: each label a letter, on the units where
// it marked at least a quarter of the windows, over the regimes' colours.
func conditionMap(ft *fonts, in Input) (*canvas, Picture) {
	c := in.Conditions
	if c == nil || len(c.Labels) == 0 || len(c.Counts) != in.Model.Map.Units() {
		return nil, Picture{}
	}
	m := in.Model
	l := m.Map.Lattice
	letter := func(j int) string {
		if j < 26 {
			return string(rune('A' + j))
		}
		return fmt.Sprint(j + 1)
	}
	windows, units := make([]int, len(c.Labels)), make([]int, len(c.Labels))
	mark := make([]int, l.Units()) // label placed on each unit, -1 for none
	for u, row := range c.Counts {
		mark[u] = -1
		total, best := 0, -1
		for j, n := range row {
			total += n
			if j < len(c.Labels) {
				windows[j] += n
				if n > 0 && (best < 0 || n > row[best]) {
					best = j
				}
			}
		}
		if best >= 0 && float64(row[best]) >= minLabelShare*float64(total) {
			mark[u] = best
			units[best]++
		}
	}
	const legendW = 360.0
	legendH := ascent(ft.head) + float64(len(c.Labels)+3)*2*lineGap
	cv, sh, lp := latticePage(ft, l, "Known events on the map",
		fmt.Sprintf("%s, %d labels", shapeName(l), len(c.Labels)), legendW, legendH)
	tiles := sh.tiles()
	for _, t := range tiles {
		cv.fillRegime(sh.clip, m.UnitRegime[t.u], 0.55+0.45*t.fade(), sh.body(t))
	}
	es := sh.edges(tiles)
	sh.outline(cv, es, true)
	sh.borders(cv, es, m.UnitRegime)
	for _, t := range tiles {
		if j := mark[t.u]; j >= 0 && t.main {
			numberBadge(cv, t.c, sh.s, letter(j))
		}
	}
	y := lp.Y + ascent(ft.head)
	cv.text(lp.X, y, "Labels", ft.head, ink, alignLeft)
	y += lineGap + 12
	for j, name := range c.Labels {
		numberBadge(cv, pt{lp.X + 12, y - ascent(ft.label)/2}, 30, letter(j))
		y = textLines(cv, lp.X+36, y, ft.body, ink, fit(ft.body, name, legendW-40))
		y = textLines(cv, lp.X+36, y, ft.small, softInk, fmt.Sprintf("%s on %s", plural(windows[j], "window"), plural(units[j], "unit"))) + 8
	}
	textLines(cv, lp.X, y+lineGap, ft.small, softInk, "a letter marks a unit where the", "label marked a quarter of the", "windows or more")
	return cv, Picture{Title: "Known events on the map",
		Caption: "The regime map, faded, with a letter on each unit where a label of the events (" + strings.Join(c.Labels, ", ") +
			") marked at least a quarter of the windows the unit won. " + wrapNote(l)}
}
