// Package picture draws a run's pictures as PNG: the regime map, the
// U-matrix, the windows per unit and the feature planes of the trained
// map, a site map, the regime timelines of the sites that switched and,
// when a run has events, the labels of the events on the map.
//
// Hexagonal cells are drawn as hexagons and square ones as squares.
// A torus is drawn with a margin of faded copies of its opposite edges
// beyond a dashed seam, and faint column and row numbers on the copies, so
// that the tiles that continue across an edge are recognisable; a plane
// is drawn alone. Regimes take the colour-blind-safe palette of Okabe & Ito
// (see RegimeColour); continuous values take a sequential ramp whose CIELAB
// lightness falls steadily from low to high values.
package picture

import (
	"errors"
	"fmt"
	"time"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/lattice"
	"github.com/kinmap/kinmap/model"
	"github.com/kinmap/kinmap/timeline"
)

// Input bundles what the pictures show.
type Input struct {
	Model      *model.Model
	Windows    []features.Window // decoded (see timeline.Build), for windows per unit and strips
	Switches   []timeline.Switch
	Sites      []SitePoint
	Conditions *model.Conditions // label counts per unit from events; nil for none
}

// SitePoint is one site on the site map.
type SitePoint struct {
	ID       string
	Lon, Lat float64 // WGS 84 degrees
	Located  bool    // Lon and Lat are known
	Regime   int     // regime ID, 0 for none
}

// Picture is one drawn picture.
type Picture struct {
	File    string // file name, like "umatrix.png"
	Title   string // short title, as drawn on the picture
	Caption string // what the picture shows and how to read it
	Width   int    // pixels
	Height  int    // pixels
	PNG     []byte
}

// All draws every picture, in reading order: the regime map, the site map,
// the regime timelines, the U-matrix, the windows per unit and the
// feature planes. The site map is left out when no site is located, the timelines
// when no site switched.
func All(in Input) ([]Picture, error) {
	if err := check(in); err != nil {
		return nil, err
	}
	ft, err := newFonts()
	if err != nil {
		return nil, err
	}
	var out []Picture
	for _, pg := range pages() {
		c, p := pg.draw(ft, in)
		if c == nil {
			continue
		}
		p.File = pg.file
		p.Width, p.Height = c.img.Bounds().Dx(), c.img.Bounds().Dy()
		if p.PNG, err = c.encode(); err != nil {
			return nil, fmt.Errorf("picture: %s: %w", p.File, err)
		}
		out = append(out, p)
	}
	return out, nil
}

// Files returns the file names of every picture All can draw, in its
// order, whether or not a given run draws them, so that a caller can clear
// away the pictures an earlier run drew and this one does not.
func Files() []string {
	var out []string
	for _, pg := range pages() {
		out = append(out, pg.file)
	}
	return out
}

// drawer draws one picture: it returns the canvas and the picture's title
// and caption, or a nil canvas when it has nothing to show.
type drawer func(*fonts, Input) (*canvas, Picture)

// page is one picture All can draw, with the name of its file.
type page struct {
	file string
	draw drawer
}

// pages lists the pictures in reading order.
func pages() []page {
	return []page{
		{"regimes.png", regimeMap},
		{"sites.png", siteMap},
		{"timelines.png", timelines},
		{"umatrix.png", uMatrix},
		{"hits.png", hitMap},
		{"components.png", componentPlanes},
		{"conditions.png", conditionMap},
	}
}

// check reports inputs the pictures cannot show.
func check(in Input) error {
	m := in.Model
	if m == nil {
		return errors.New("picture: no model")
	}
	l := m.Map.Lattice
	if err := l.Validate(); err != nil {
		return fmt.Errorf("picture: %w", err)
	}
	n := l.Units()
	switch {
	case m.Map.Dim < 1:
		return fmt.Errorf("picture: map has dimension %d", m.Map.Dim)
	case len(m.Map.Codebook) != n*m.Map.Dim:
		return fmt.Errorf("picture: codebook holds %d values, want %d units × %d", len(m.Map.Codebook), n, m.Map.Dim)
	case len(m.UnitRegime) != n:
		return fmt.Errorf("picture: %d unit regimes for %d units", len(m.UnitRegime), n)
	}
	for _, w := range in.Windows {
		if w.Unit < 0 || w.Unit >= n {
			return fmt.Errorf("picture: site %q, window %s: unit %d outside the map of %d units", w.Site, w.Start.Format(time.RFC3339), w.Unit, n)
		}
	}
	return nil
}

// Page layout, in pixels.
const (
	padSide     = 40  // left and right of everything
	titleBase   = 44  // baseline of the title
	subBase     = 72  // baseline of the subtitle
	latticeTop  = 128 // top of a lattice panel, below its column numbers
	latticeLeft = 86  // left of a lattice panel, after its row numbers
	legendGap   = 56  // between a panel and its legend
	lineGap     = 22  // between lines of body text
)

// heading draws a picture's title and subtitle.
func heading(c *canvas, title, subtitle string) {
	c.text(padSide, titleBase, title, c.ft.title, ink, alignLeft)
	c.text(padSide, subBase, subtitle, c.ft.body, softInk, alignLeft)
}

// latticePage lays out a picture of the whole lattice: the heading, the
// sheet with its axis numbers on the left and a legend column of legendW ×
// legendH on the right, and under the sheet a note on how it wraps. It
// returns the canvas, the sheet and the top left corner of the legend.
func latticePage(ft *fonts, l lattice.Lattice, title, subtitle string, legendW, legendH float64) (*canvas, sheet, pt) {
	sh := pageSheet(l)
	lx := float64(sh.clip.Max.X + legendGap)
	w := int(lx+legendW) + padSide
	h := max(sh.clip.Max.Y+3*lineGap, latticeTop+int(legendH)+padSide)
	c := newCanvas(w, h, ft)
	heading(c, title, subtitle)
	sh.labelAxes(c)
	c.text(float64(sh.clip.Min.X), float64(sh.clip.Max.Y)+lineGap+4, wrapNote(l), ft.small, softInk, alignLeft)
	return c, sh, pt{lx, latticeTop}
}

// pageSheet places a lattice on a lattice picture, with 1.6 units of
// wrapped copies around a torus.
func pageSheet(l lattice.Lattice) sheet {
	return newSheet(l, latticeLeft, latticeTop, 900, 760, 1.6, 64)
}

// shapeName describes a lattice in words.
func shapeName(l lattice.Lattice) string {
	return fmt.Sprintf("%d × %d %s cells on a %s", l.Cols, l.Rows, l.Cells(), l.Surface())
}

// wrapNote says how to read the edges of the drawn lattice.
func wrapNote(l lattice.Lattice) string {
	if l.Flat {
		return "Plane: the map ends at its edges."
	}
	return "Torus: beyond the dashed seam, faded tiles repeat the opposite edges (faint numbers)."
}

// regimeIDs returns the regime IDs to show, those of the model in order, and
// 0 in front when a unit has no regime.
func regimeIDs(m *model.Model) []int {
	var ids []int
	known := make(map[int]bool)
	for _, r := range m.Regimes {
		if !known[r.ID] {
			known[r.ID] = true
			ids = append(ids, r.ID)
		}
	}
	for _, id := range m.UnitRegime {
		if !known[id] {
			known[id] = true
			ids = append(ids, id)
		}
	}
	return ids
}
