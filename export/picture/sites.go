package picture

import (
	"fmt"
	"image"
	"math"
	"slices"
	"strconv"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/geo"
)

// Layout of the site map, in pixels.
const (
	plotLeft   = 118 // left of the plot, after latitude numbers and title
	plotTop    = 104
	plotMaxW   = 1000
	plotMaxH   = 760
	plotBottom = 76 // below the plot: longitude numbers and title
)

// geoFrame maps longitude and latitude to pixels on an equirectangular
// projection whose x is shrunk by the cosine of the middle latitude, so
// that a kilometre is about as long east–west as north–south.
type geoFrame struct {
	lon0, lat1 float64 // west and north edges, degrees
	lon1, lat0 float64 // east and south edges
	ky, kx     float64 // pixels per degree of latitude and of longitude
	plot       image.Rectangle
}

// newGeoFrame fits the points into the largest plot of at most w × h
// pixels at x, y, with a margin of 6 % of the span, or 0.01° at least.
func newGeoFrame(pts []SitePoint, x, y int, w, h float64) geoFrame {
	g := geoFrame{lon0: math.Inf(1), lon1: math.Inf(-1), lat0: math.Inf(1), lat1: math.Inf(-1)}
	for _, p := range pts {
		g.lon0, g.lon1 = math.Min(g.lon0, p.Lon), math.Max(g.lon1, p.Lon)
		g.lat0, g.lat1 = math.Min(g.lat0, p.Lat), math.Max(g.lat1, p.Lat)
	}
	padLon := math.Max(0.06*(g.lon1-g.lon0), 0.01)
	padLat := math.Max(0.06*(g.lat1-g.lat0), 0.01)
	g.lon0, g.lon1 = g.lon0-padLon, g.lon1+padLon
	g.lat0, g.lat1 = math.Max(-90, g.lat0-padLat), math.Min(90, g.lat1+padLat)
	// Near a pole the cosine is floored, or the map would have no width.
	cos := math.Max(0.05, math.Cos(g.midLat()*math.Pi/180))
	g.ky = math.Min(w/((g.lon1-g.lon0)*cos), h/(g.lat1-g.lat0))
	g.kx = g.ky * cos
	g.plot = image.Rect(x, y, x+int(math.Ceil((g.lon1-g.lon0)*g.kx)), y+int(math.Ceil((g.lat1-g.lat0)*g.ky)))
	return g
}

func (g geoFrame) midLat() float64 { return (g.lat0 + g.lat1) / 2 }

// px returns the pixel position of a longitude and latitude.
func (g geoFrame) px(lon, lat float64) pt {
	return pt{float64(g.plot.Min.X) + (lon-g.lon0)*g.kx, float64(g.plot.Min.Y) + (g.lat1-lat)*g.ky}
}

// scaleBar returns a round length in km for a bar of about a fifth of the
// plot's width, and its length in pixels, measured east–west along the
// middle latitude with orb/geo's haversine distance.
func (g geoFrame) scaleBar() (km, px float64) {
	lat := g.midLat()
	span := geo.DistanceHaversine(orb.Point{g.lon0, lat}, orb.Point{g.lon1, lat}) / 1000
	kmPerPx := span / float64(g.plot.Dx())
	km = niceFloorF(kmPerPx * float64(g.plot.Dx()) / 5)
	return km, km / kmPerPx
}

// niceFloorF returns the largest 1, 2 or 5 times a power of ten not above
// x > 0.
func niceFloorF(x float64) float64 {
	p := math.Pow(10, math.Floor(math.Log10(x)))
	for _, k := range []float64{5, 2, 1} {
		if k*p <= x*(1+1e-9) {
			return k * p
		}
	}
	return p
}

// siteMap draws the located sites on longitude and latitude, coloured by
// regime, with a scale bar and a north mark.
func siteMap(ft *fonts, in Input) (*canvas, Picture) {
	var located []SitePoint
	for _, s := range in.Sites {
		if s.Located && math.Abs(s.Lon) <= 180 && math.Abs(s.Lat) <= 90 {
			located = append(located, s)
		}
	}
	if len(located) == 0 {
		return nil, Picture{}
	}
	g := newGeoFrame(located, plotLeft, plotTop, plotMaxW, plotMaxH)
	count := make(map[int]int)
	for _, s := range located {
		count[s.Regime]++
	}
	ids := make([]int, 0, len(count))
	for id := range count {
		ids = append(ids, id)
	}
	slices.Sort(ids)

	const legendW = 260.0
	lx := float64(g.plot.Max.X + legendGap)
	h := max(g.plot.Max.Y+plotBottom+lineGap, plotTop+len(ids)*(lineGap+6)+9*lineGap)
	c := newCanvas(int(lx+legendW)+padSide, h, ft)
	heading(c, "Site map", fmt.Sprintf("%s by regime at the end of the run, WGS 84 longitude and latitude",
		plural(len(located), "located site")))
	geoAxes(c, g)
	marks := make([]pt, len(located))
	r := siteRadius(len(located))
	for i, s := range located {
		marks[i] = g.px(s.Lon, s.Lat)
		marker(c, g.plot, marks[i], r, s.Regime)
	}
	decorate(c, g, marks, r)
	c.frame(float64(g.plot.Min.X), float64(g.plot.Min.Y), float64(g.plot.Max.X), float64(g.plot.Max.Y), 1, softInk)

	y := float64(plotTop) + ascent(ft.head)
	c.text(lx, y, "Regimes", ft.head, ink, alignLeft)
	y += lineGap + 10
	for _, id := range ids {
		marker(c, c.img.Bounds(), pt{lx + 8, y - ascent(ft.body)/2}, 6, id)
		name := "Regime " + strconv.Itoa(id)
		if id < 1 {
			name = "no regime"
		}
		c.text(lx+24, y, name, ft.body, ink, alignLeft)
		c.text(lx+legendW, y, plural(count[id], "site"), ft.small, softInk, alignRight)
		y += lineGap + 6
	}
	y += lineGap
	if n := len(in.Sites) - len(located); n > 0 {
		verb := "are"
		if n == 1 {
			verb = "is"
		}
		y = textLines(c, lx, y, ft.small, softInk, plural(n, "site")+" without a valid position", verb+" not shown.") + 8
	}
	textLines(c, lx, y, ft.small, softInk, "Longitude is shrunk by cos φ",
		fmt.Sprintf("at φ = %s, so that a", degrees(g.midLat(), 1, "N", "S")), "kilometre is as long east–west", "as north–south.")
	return c, Picture{Title: "Site map",
		Caption: "Located sites on WGS 84 longitude and latitude, coloured by the regime of their last window. The " +
			"longitude axis is shrunk by the cosine of the middle latitude, so that distances read the same in every " +
			"direction; the scale bar is measured along that latitude."}
}

// siteRadius returns a marker radius that keeps crowded maps legible.
func siteRadius(n int) float64 {
	switch {
	case n > 2000:
		return 3
	case n > 500:
		return 4
	}
	return 5.5
}

// marker draws a site marker of regime id: a circle for the palette's own
// colours, a square for its shades and a triangle for its tints, each with
// a dark rim.
func marker(c *canvas, clip image.Rectangle, o pt, r float64, id int) {
	v := variantBase
	if id >= 1 {
		_, v = regimeVariant(id)
	}
	shape := func(r float64) []pt {
		switch v {
		case variantShade:
			r *= 0.9
			return rectPath(o.X-r, o.Y-r, o.X+r, o.Y+r)
		case variantTint:
			r *= 1.25
			return []pt{{o.X, o.Y - r}, {o.X + r*0.866, o.Y + r/2}, {o.X - r*0.866, o.Y + r/2}}
		}
		return circle(o, r)
	}
	c.fill(clip, image.NewUniform(ink), shape(r+1))
	c.fill(clip, image.NewUniform(RegimeColour(id)), shape(r))
}

// degrees formats an angle with a hemisphere letter.
func degrees(v float64, d int, pos, neg string) string {
	h := pos
	if v < 0 {
		h, v = neg, -v
	}
	return number(v, d) + "°" + h
}

// geoAxes draws the graticule, the degree numbers and the axis titles.
func geoAxes(c *canvas, g geoFrame) {
	f := c.ft.small
	x0, y0, x1, y1 := float64(g.plot.Min.X), float64(g.plot.Min.Y), float64(g.plot.Max.X), float64(g.plot.Max.Y)
	lons, ls := ticks(g.lon0, g.lon1, int(math.Max(3, float64(g.plot.Dx())/140)))
	lats, as := ticks(g.lat0, g.lat1, int(math.Max(3, float64(g.plot.Dy())/110)))
	for _, lon := range lons {
		x := g.px(lon, 0).X
		c.rect(x-0.5, y0, x+0.5, y1, gridLine)
		c.rect(x-0.5, y1, x+0.5, y1+5, softInk)
		c.text(x, y1+8+ascent(f), degrees(lon, decimals(ls), "E", "W"), f, ink, alignCentre)
	}
	for _, lat := range lats {
		y := g.px(0, lat).Y
		c.rect(x0, y-0.5, x1, y+0.5, gridLine)
		c.rect(x0-5, y-0.5, x0, y+0.5, softInk)
		c.text(x0-8, y+ascent(f)/2, degrees(lat, decimals(as), "N", "S"), f, ink, alignRight)
	}
	c.text((x0+x1)/2, y1+8+ascent(f)+lineGap+8, "longitude (degrees)", c.ft.body, softInk, alignCentre)
	c.vtext(x0-8-width(f, "00.00°N")-18, (y0+y1)/2, "latitude (degrees)", c.ft.body, softInk)
}

// Corners of the plot, for the scale bar and the north mark.
const (
	lowerLeft = iota
	lowerRight
	upperLeft
	upperRight
)

// corner returns the top left of a w × h box in corner k of the plot.
func (g geoFrame) corner(k int, w, h float64) pt {
	const inset = 10
	p := pt{float64(g.plot.Min.X) + inset, float64(g.plot.Max.Y) - inset - h}
	if k == lowerRight || k == upperRight {
		p.X = float64(g.plot.Max.X) - inset - w
	}
	if k == upperLeft || k == upperRight {
		p.Y = float64(g.plot.Min.Y) + inset
	}
	return p
}

// quietCorner returns the corner, of those in prefs and in that order of
// preference, whose w × h box covers the fewest site markers.
func (g geoFrame) quietCorner(marks []pt, r, w, h float64, prefs ...int) int {
	best, fewest := prefs[0], math.MaxInt
	for _, k := range prefs {
		o := g.corner(k, w, h)
		n := 0
		for _, m := range marks {
			if m.X+r >= o.X && m.X-r <= o.X+w && m.Y+r >= o.Y && m.Y-r <= o.Y+h {
				n++
			}
		}
		if n < fewest {
			best, fewest = k, n
		}
	}
	return best
}

// Sizes of the north mark's box and the scale bar's box, without the bar.
const (
	northW, northH = 40, 58
	scaleH         = 48
)

// decorate draws the scale bar and the north mark in the plot's corners
// that hide the fewest sites.
func decorate(c *canvas, g geoFrame, marks []pt, r float64) {
	km, px := g.scaleBar()
	f := c.ft.small
	label := number(km, decimals(km)) + " km"
	w := px + width(f, label)/2 + 22
	sk := g.quietCorner(marks, r, w, scaleH, lowerLeft, lowerRight, upperLeft, upperRight)
	o := g.corner(sk, w, scaleH)
	c.rect(o.X, o.Y, o.X+w, o.Y+scaleH, white)
	c.frame(o.X, o.Y, o.X+w, o.Y+scaleH, 1, gridLine)
	x, y := o.X+10, o.Y+scaleH-12 // left and bottom of the bar
	c.rect(x, y-6, x+px, y, ink)
	for _, t := range []float64{0, 0.5, 1} {
		tx := x + t*px
		c.rect(tx-0.75, y-12, tx+0.75, y, ink)
	}
	c.text(x, y-16, "0", f, ink, alignCentre)
	c.text(x+px, y-16, label, f, ink, alignCentre)

	var rest []int
	for _, k := range []int{upperRight, upperLeft, lowerRight, lowerLeft} {
		if k != sk {
			rest = append(rest, k)
		}
	}
	o = g.corner(g.quietCorner(marks, r, northW, northH, rest...), northW, northH)
	nx := o.X + northW/2
	c.text(nx, o.Y+ascent(c.ft.head)+4, "N", c.ft.head, ink, alignCentre)
	top := o.Y + ascent(c.ft.head) + 10
	c.poly(ink, []pt{{nx, top}, {nx + 9, top + 22}, {nx, top + 16}, {nx - 9, top + 22}})
}
