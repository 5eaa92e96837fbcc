package picture

import (
	"bytes"
	"fmt"
	"image"
	"image/color"
	"image/draw"
	"image/png"
	"math"

	"codeberg.org/go-fonts/liberation/liberationsansbold"
	"codeberg.org/go-fonts/liberation/liberationsansregular"
	"golang.org/x/image/font"
	"golang.org/x/image/font/opentype"
	"golang.org/x/image/math/fixed"
	"golang.org/x/image/vector"
)

// Colours of the drawing itself, apart from the data.
var (
	white     = color.RGBA{0xFF, 0xFF, 0xFF, 0xFF}
	ink       = color.RGBA{0x1A, 0x1A, 0x1A, 0xFF} // text, borders, scale bar
	softInk   = color.RGBA{0x59, 0x59, 0x59, 0xFF} // secondary text
	faintInk  = color.RGBA{0x8C, 0x8C, 0x8C, 0xFF} // labels of wrapped copies
	gridLine  = color.RGBA{0xE3, 0xE3, 0xE3, 0xFF}
	emptyTile = color.RGBA{0xEE, 0xEE, 0xEE, 0xFF}
)

// pt is a point in pixels, y downwards.
type pt struct{ X, Y float64 }

func (p pt) add(q pt) pt                   { return pt{p.X + q.X, p.Y + q.Y} }
func (p pt) scale(k float64) pt            { return pt{p.X * k, p.Y * k} }
func (p pt) sub(q pt) pt                   { return pt{p.X - q.X, p.Y - q.Y} }
func (p pt) length() float64               { return math.Hypot(p.X, p.Y) }
func (p pt) perp() pt                      { return pt{-p.Y, p.X} }
func (p pt) unit() pt                      { return p.scale(1 / p.length()) }
func rectPath(x0, y0, x1, y1 float64) []pt { return []pt{{x0, y0}, {x1, y0}, {x1, y1}, {x0, y1}} }

// fonts holds the faces the pictures use, all Liberation Sans.
type fonts struct {
	title, head, body, small, label font.Face
}

func newFonts() (*fonts, error) {
	regular, err := opentype.Parse(liberationsansregular.TTF)
	if err != nil {
		return nil, fmt.Errorf("picture: font: %w", err)
	}
	bold, err := opentype.Parse(liberationsansbold.TTF)
	if err != nil {
		return nil, fmt.Errorf("picture: font: %w", err)
	}
	face := func(f *opentype.Font, size float64) font.Face {
		// NewFace never fails; its error is for the interface.
		fc, _ := opentype.NewFace(f, &opentype.FaceOptions{Size: size, DPI: 72, Hinting: font.HintingNone})
		return unkerned{fc}
	}
	return &fonts{
		title: face(bold, 26),
		head:  face(bold, 16),
		body:  face(regular, 15),
		small: face(regular, 13),
		label: face(bold, 15),
	}, nil
}

// unkerned is a face without kerning. The pictures are mostly numbers
// (axis labels, counts, levels), and the fonts' kerning pairs pull "11"
// together until its ones touch; digits set at their own advance read as
// in a table. Text is measured and drawn with the same face, so widths stay
// true.
type unkerned struct{ font.Face }

// Kern reports no kerning between any two runes.
func (unkerned) Kern(r0, r1 rune) fixed.Int26_6 { return 0 }

// canvas is an opaque white RGBA image with antialiased drawing.
type canvas struct {
	img *image.RGBA
	z   vector.Rasterizer
	ft  *fonts
}

func newCanvas(w, h int, ft *fonts) *canvas {
	c := &canvas{img: image.NewRGBA(image.Rect(0, 0, w, h)), ft: ft}
	draw.Draw(c.img, c.img.Bounds(), image.NewUniform(white), image.Point{}, draw.Src)
	return c
}

// fill paints src through the union of the closed paths, clipped to clip.
// Paths of one call must wind the same way.
func (c *canvas) fill(clip image.Rectangle, src image.Image, paths ...[]pt) {
	x0, y0, x1, y1 := math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
	for _, p := range paths {
		for _, q := range p {
			x0, y0 = math.Min(x0, q.X), math.Min(y0, q.Y)
			x1, y1 = math.Max(x1, q.X), math.Max(y1, q.Y)
		}
	}
	r := image.Rect(int(math.Floor(x0)), int(math.Floor(y0)), int(math.Ceil(x1)), int(math.Ceil(y1))).
		Intersect(clip).Intersect(c.img.Bounds())
	if r.Empty() {
		return
	}
	c.z.Reset(r.Dx(), r.Dy())
	ox, oy := float64(r.Min.X), float64(r.Min.Y)
	for _, p := range paths {
		if len(p) < 3 {
			continue
		}
		c.z.MoveTo(float32(p[0].X-ox), float32(p[0].Y-oy))
		for _, q := range p[1:] {
			c.z.LineTo(float32(q.X-ox), float32(q.Y-oy))
		}
		c.z.ClosePath()
	}
	c.z.Draw(c.img, r, src, r.Min)
}

// poly fills one polygon with a colour, anywhere on the canvas.
func (c *canvas) poly(col color.Color, p []pt) { c.fill(c.img.Bounds(), image.NewUniform(col), p) }

// rect fills an axis-aligned rectangle.
func (c *canvas) rect(x0, y0, x1, y1 float64, col color.Color) { c.poly(col, rectPath(x0, y0, x1, y1)) }

// frame outlines an axis-aligned rectangle with a line of width w inside it.
func (c *canvas) frame(x0, y0, x1, y1, w float64, col color.Color) {
	c.rect(x0, y0, x1, y0+w, col)
	c.rect(x0, y1-w, x1, y1, col)
	c.rect(x0, y0, x0+w, y1, col)
	c.rect(x1-w, y0, x1, y1, col)
}

// segment returns the quadrilateral of a straight line of width w from a to b.
func segment(a, b pt, w float64) []pt {
	d := b.sub(a)
	if d.length() == 0 {
		return nil
	}
	n := d.unit().perp().scale(w / 2)
	return []pt{a.add(n), b.add(n), b.sub(n), a.sub(n)}
}

// line draws a straight line of width w, clipped to clip.
func (c *canvas) line(clip image.Rectangle, a, b pt, w float64, col color.Color) {
	if s := segment(a, b, w); s != nil {
		c.fill(clip, image.NewUniform(col), s)
	}
}

// dashed draws a dashed line with dashes of length dash and equal gaps,
// starting and ending with a dash.
func (c *canvas) dashed(clip image.Rectangle, a, b pt, w, dash float64, col color.Color) {
	d := b.sub(a)
	l := d.length()
	n := max(1, int(math.Round((l/dash+1)/2))) // dashes
	step := l / float64(2*n-1)
	u := d.unit()
	for i := range n {
		p := a.add(u.scale(float64(2*i) * step))
		c.line(clip, p, p.add(u.scale(step)), w, col)
	}
}

// circle returns a polygon approximating a circle.
func circle(o pt, r float64) []pt {
	n := max(12, min(64, int(r*2)))
	p := make([]pt, n)
	for i := range p {
		a := 2 * math.Pi * float64(i) / float64(n)
		p[i] = pt{o.X + r*math.Cos(a), o.Y + r*math.Sin(a)}
	}
	return p
}

// disc fills a circle, clipped to clip.
func (c *canvas) disc(clip image.Rectangle, o pt, r float64, col color.Color) {
	c.fill(clip, image.NewUniform(col), circle(o, r))
}

type align int

const (
	alignLeft align = iota
	alignCentre
	alignRight
)

// width returns the advance of s in face, in pixels.
func width(face font.Face, s string) float64 {
	return float64(font.MeasureString(face, s)) / 64
}

// ascent returns the height of capitals above the baseline, roughly.
func ascent(face font.Face) float64 { return float64(face.Metrics().CapHeight) / 64 }

// text draws s with its baseline at y, aligned at x.
func (c *canvas) text(x, y float64, s string, face font.Face, col color.Color, a align) {
	switch a {
	case alignCentre:
		x -= width(face, s) / 2
	case alignRight:
		x -= width(face, s)
	}
	d := font.Drawer{Dst: c.img, Src: image.NewUniform(col), Face: face,
		Dot: fixed.Point26_6{X: fixed.Int26_6(math.Round(x * 64)), Y: fixed.I(int(math.Round(y)))}}
	d.DrawString(s)
}

// vtext draws s turned a quarter left (reading upwards), centred at x, y.
func (c *canvas) vtext(x, y float64, s string, face font.Face, col color.Color) {
	m := face.Metrics()
	w, h := int(math.Ceil(width(face, s))), (m.Ascent + m.Descent).Ceil()
	tmp := newCanvas(w, h, c.ft)
	tmp.text(0, float64(m.Ascent.Ceil()), s, face, col, alignLeft)
	x0, y0 := int(math.Round(x))-h/2, int(math.Round(y))+w/2
	b := c.img.Bounds()
	for ty := range h {
		for tx := range w {
			// (tx, ty) turns to (ty, -tx).
			p := image.Pt(x0+ty, y0-tx)
			if !p.In(b) {
				continue
			}
			if v := tmp.img.RGBAAt(tx, ty); v != white {
				c.img.SetRGBA(p.X, p.Y, v)
			}
		}
	}
}

// fit shortens s with an ellipsis until it is at most w pixels wide.
func fit(face font.Face, s string, w float64) string {
	if width(face, s) <= w {
		return s
	}
	r := []rune(s)
	for len(r) > 0 && width(face, string(r)+"…") > w {
		r = r[:len(r)-1]
	}
	return string(r) + "…"
}

// encode returns the canvas as a PNG.
func (c *canvas) encode() ([]byte, error) {
	var b bytes.Buffer
	enc := png.Encoder{CompressionLevel: png.DefaultCompression}
	if err := enc.Encode(&b, c.img); err != nil {
		return nil, err
	}
	return b.Bytes(), nil
}

// hatch is an endless pattern of thin diagonal lines, transparent between
// them, used to mark the palette's shaded and tinted variants.
type hatch struct {
	col    color.RGBA
	rising bool // "/" rather than "\"
}

const hatchPeriod, hatchWidth = 7, 2

func (h hatch) ColorModel() color.Model { return color.RGBAModel }
func (h hatch) Bounds() image.Rectangle {
	return image.Rect(-1<<20, -1<<20, 1<<20, 1<<20)
}
func (h hatch) At(x, y int) color.Color {
	k := x - y
	if h.rising {
		k = x + y
	}
	if ((k%hatchPeriod)+hatchPeriod)%hatchPeriod < hatchWidth {
		return h.col
	}
	return color.RGBA{}
}

// regimeHatch returns the pattern laid over regime id's colour; ok is false
// for the palette's own colours, which have none.
func regimeHatch(id int) (h hatch, ok bool) {
	if id < 1 {
		return hatch{}, false
	}
	switch _, v := regimeVariant(id); v {
	case variantShade:
		return hatch{col: white, rising: true}, true
	case variantTint:
		return hatch{col: color.RGBA{0x40, 0x40, 0x40, 0xFF}}, true
	}
	return hatch{}, false
}

// fillRegime fills the paths with regime id's colour, faded toward white by
// fade in [0, 1], and its hatch if any.
func (c *canvas) fillRegime(clip image.Rectangle, id int, fade float64, paths ...[]pt) {
	c.fill(clip, image.NewUniform(mixRGBA(RegimeColour(id), white, fade)), paths...)
	if h, ok := regimeHatch(id); ok {
		h.col = mixRGBA(h.col, white, fade)
		c.fill(clip, h, paths...)
	}
}
