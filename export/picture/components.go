package picture

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	"github.com/kinmap/kinmap/model"
)

// Layout of the feature planes, in pixels.
const (
	planeMaxW   = 250 // largest plane, margin included
	planeGap    = 36  // between planes
	planeTop    = 118 // top of the first row of planes
	planeName   = 24  // room for a feature's name above its plane
	planeBar    = 10  // height of a plane's colour strip
	planeBottom = 48  // below a plane: strip, numbers and gap
	planesWide  = 5   // planes per row
)

// MaxPlanes is the most feature planes one picture draws: a dump of
// thousands of channels once asked for a picture of 17 GB. Beyond it the
// planes of the features whose codebook values vary most across the units,
// those the map orders most, are drawn, and the picture says how many were
// left out.
const MaxPlanes = 60

// componentPlanes draws one small plane per codebook dimension, each unit
// in the ramp colour of its value, with the feature's name above and its
// own colour range below.
func componentPlanes(ft *fonts, in Input) (*canvas, Picture) {
	m := in.Model
	l := m.Map.Lattice
	names := dimNames(m)
	dims := informativeDims(m, MaxPlanes)
	n := len(dims)
	wide := min(n, planesWide)
	probe := newSheet(l, 0, 0, planeMaxW, planeMaxW, 1, 40)
	pw, ph := float64(probe.clip.Dx()), float64(probe.clip.Dy())
	cellW, cellH := pw+planeGap, planeName+ph+planeBottom
	rows := (n + wide - 1) / wide
	w := int(math.Max(2*padSide+float64(wide)*cellW-planeGap, 900))
	c := newCanvas(w, planeTop+int(float64(rows)*cellH)+lineGap, ft)
	sub := fmt.Sprintf("%s: one plane per feature, each with its own colour range shown below it", shapeName(l))
	left := ""
	if out := m.Map.Dim - n; out > 0 {
		left = fmt.Sprintf(" The %d features whose values vary most across the units are drawn; %d others are left out.", n, out)
		sub = fmt.Sprintf("%s: the %d of %d features that vary most across the units, each with its own colour range", shapeName(l), n, m.Map.Dim)
	}
	heading(c, "Feature planes", sub)
	c.text(padSide, subBase+lineGap, scaleNote(m)+" "+wrapNote(l), ft.small, softInk, alignLeft)

	for k, dim := range dims {
		x := padSide + float64(k%wide)*cellW
		y := planeTop + float64(k/wide)*cellH
		c.text(x, y+ascent(ft.label), fit(ft.label, names[dim], pw), ft.label, ink, alignLeft)
		sh := newSheet(l, int(x), int(y+planeName), planeMaxW, planeMaxW, 1, 40)
		vals := make([]float64, l.Units())
		for u := range vals {
			vals[u] = m.Map.Vector(u)[dim]
		}
		lo, hi := sh.paintValues(c, vals)
		by := float64(sh.clip.Max.Y) + 6
		rampStrip(c, x, by, pw, planeBar, lo, hi)
	}
	return c, Picture{Title: "Feature planes",
		Caption: "One plane per feature: each unit in the colour of its codebook value for that feature, light for low and " +
			"dark for high, on the feature's own range." + left + " " + scaleNote(m) + " " + wrapNote(l)}
}

// informativeDims returns the codebook dimensions to draw, in order: all of
// them up to limit, else the limit of them whose values have the largest
// variance across the units.
func informativeDims(m *model.Model, limit int) []int {
	dims := make([]int, m.Map.Dim)
	for k := range dims {
		dims[k] = k
	}
	if len(dims) <= limit {
		return dims
	}
	spread := make([]float64, m.Map.Dim)
	units := float64(m.Map.Units())
	for k := range spread {
		var sum, sq float64
		for u := range m.Map.Units() {
			v := m.Map.Vector(u)[k]
			sum += v
			sq += v * v
		}
		spread[k] = sq/units - (sum/units)*(sum/units)
	}
	slices.SortStableFunc(dims, func(a, b int) int { return cmp.Compare(spread[b], spread[a]) })
	dims = dims[:limit]
	slices.Sort(dims)
	return dims
}

// rampStrip draws the ramp left to right at x, y, w × h, with lo and hi
// written under its ends.
func rampStrip(c *canvas, x, y, w, h, lo, hi float64) {
	for i := 0; i < int(w); i++ {
		c.rect(x+float64(i), y, x+float64(i+1), y+h, rampColour((float64(i)+0.5)/w))
	}
	c.frame(x, y, x+w, y+h, 1, softInk)
	base := y + h + 4 + ascent(c.ft.small)
	if hi <= lo {
		c.text(x+w/2, base, "constant "+number(lo, 2), c.ft.small, softInk, alignCentre)
		return
	}
	// Ends to about a hundredth of the range.
	d := max(0, 2-int(math.Floor(math.Log10(hi-lo))))
	c.text(x, base, number(lo, d), c.ft.small, softInk, alignLeft)
	c.text(x+w, base, number(hi, d), c.ft.small, softInk, alignRight)
}

// dimNames returns the name of each codebook dimension: the scaler's kept
// features, or the model's feature names when they match the dimension.
func dimNames(m *model.Model) []string {
	if m.Scaler != nil && len(m.Scaler.Names) == m.Map.Dim {
		return m.Scaler.Names
	}
	if len(m.FeatureNames) == m.Map.Dim {
		return m.FeatureNames
	}
	out := make([]string, m.Map.Dim)
	for i := range out {
		out[i] = fmt.Sprintf("dimension %d", i+1)
	}
	return out
}

// scaleNote says in which units the codebook values are.
func scaleNote(m *model.Model) string {
	s := "Values in standardised units"
	if m.Scaler == nil {
		return s + "."
	}
	switch m.Scaler.Method {
	case "zscore":
		s += " (x − mean) / standard deviation"
	case "robust":
		s += " (x − median) / interquartile range"
	}
	for _, w := range m.Scaler.Weight {
		if w != 1 {
			return s + ", times the feature's weight."
		}
	}
	return s + "."
}
