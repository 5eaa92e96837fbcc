package picture

import (
	"image/color"
	"math"
)

// okabeIto is the categorical palette of Okabe & Ito, "Color Universal
// Design (CUD): how to make figures and presentations that are friendly to
// colorblind people" (2008), without its black, which the pictures keep for
// borders and text: orange, sky blue, bluish green, yellow, blue, vermillion,
// reddish purple.
var okabeIto = [...]color.RGBA{
	{0xE6, 0x9F, 0x00, 0xFF},
	{0x56, 0xB4, 0xE9, 0xFF},
	{0x00, 0x9E, 0x73, 0xFF},
	{0xF0, 0xE4, 0x42, 0xFF},
	{0x00, 0x72, 0xB2, 0xFF},
	{0xD5, 0x5E, 0x00, 0xFF},
	{0xCC, 0x79, 0xA7, 0xFF},
}

// Variants of the palette beyond its seven colours. A darker shade stays
// distinct from its base colour under colour-vision deficiency, a lighter
// tint does not always (yellow), so both also carry a hatch pattern wherever
// an area or a marker is drawn.
const (
	variantBase  = iota // the palette colour, solid
	variantShade        // mixed 40 % toward black, hatched "/" or square markers
	variantTint         // mixed 50 % toward white, hatched "\" or triangle markers
	variants
)

// noRegime is the colour of units and sites without a regime.
var noRegime = color.RGBA{0xBB, 0xBB, 0xBB, 0xFF}

// RegimeColour returns the colour of regime id (regime IDs start at 1).
// Regimes 1–7 take the seven colours of Okabe & Ito's colour-universal-design
// palette (2008) in its order, without black; 8–14 take the same colours
// mixed 40 % toward black and 15–21 mixed 50 % toward white, and the
// pictures add a hatch pattern or a different marker to both; from 22 on the
// colours repeat and only the regime number tells regimes apart. An id below
// 1 (no regime) is a neutral grey.
func RegimeColour(id int) color.RGBA {
	if id < 1 {
		return noRegime
	}
	base, v := regimeVariant(id)
	c := okabeIto[base]
	switch v {
	case variantShade:
		return mixRGBA(c, color.RGBA{0, 0, 0, 0xFF}, 0.4)
	case variantTint:
		return mixRGBA(c, color.RGBA{0xFF, 0xFF, 0xFF, 0xFF}, 0.5)
	}
	return c
}

// regimeVariant returns the palette index and the variant of regime id ≥ 1.
func regimeVariant(id int) (base, variant int) {
	k := (id - 1) % (len(okabeIto) * variants)
	return k % len(okabeIto), k / len(okabeIto)
}

// mixRGBA mixes a toward b by w in [0, 1], in sRGB-encoded values.
func mixRGBA(a, b color.RGBA, w float64) color.RGBA {
	m := func(x, y uint8) uint8 { return uint8(math.Round(float64(x)*(1-w) + float64(y)*w)) }
	return color.RGBA{m(a.R, b.R), m(a.G, b.G), m(a.B, b.B), m(a.A, b.A)}
}

// D65 reference white of sRGB, Y = 1 (IEC 61966-2-1).
const whiteX, whiteY, whiteZ = 0.9505, 1.0, 1.0890

// srgbToLinear undoes the sRGB transfer function (IEC 61966-2-1).
func srgbToLinear(v float64) float64 {
	if v <= 0.04045 {
		return v / 12.92
	}
	return math.Pow((v+0.055)/1.055, 2.4)
}

// linearToSRGB applies the sRGB transfer function (IEC 61966-2-1).
func linearToSRGB(v float64) float64 {
	if v <= 0.0031308 {
		return 12.92 * v
	}
	return 1.055*math.Pow(v, 1/2.4) - 0.055
}

// lab is a colour in CIELAB (CIE 15) under D65.
type lab struct{ L, A, B float64 }

// linearToLab converts linear sRGB to CIELAB.
func linearToLab(r, g, b float64) lab {
	x := 0.4124*r + 0.3576*g + 0.1805*b
	y := 0.2126*r + 0.7152*g + 0.0722*b
	z := 0.0193*r + 0.1192*g + 0.9505*b
	fx, fy, fz := labF(x/whiteX), labF(y/whiteY), labF(z/whiteZ)
	return lab{116*fy - 16, 500 * (fx - fy), 200 * (fy - fz)}
}

// rgbaToLab converts an opaque 8-bit sRGB colour to CIELAB.
func rgbaToLab(c color.RGBA) lab {
	return linearToLab(srgbToLinear(float64(c.R)/255), srgbToLinear(float64(c.G)/255), srgbToLinear(float64(c.B)/255))
}

// labToLinear converts CIELAB to linear sRGB, which may fall outside [0, 1].
func labToLinear(c lab) (r, g, b float64) {
	fy := (c.L + 16) / 116
	x := whiteX * labFInv(fy+c.A/500)
	y := whiteY * labFInv(fy)
	z := whiteZ * labFInv(fy-c.B/200)
	r = 3.2406*x - 1.5372*y - 0.4986*z
	g = -0.9689*x + 1.8758*y + 0.0415*z
	b = 0.0557*x - 0.2040*y + 1.0570*z
	return r, g, b
}

const labEps = 216.0 / 24389 // (6/29)³, CIE 15

func labF(t float64) float64 {
	if t > labEps {
		return math.Cbrt(t)
	}
	return (24389.0/27*t + 16) / 116
}

func labFInv(f float64) float64 {
	if t := f * f * f; t > labEps {
		return t
	}
	return (116*f - 16) * 27 / 24389
}

// Anchors of the sequential ramp in CIELAB lightness and hue: from a pale
// yellow for low values through green and teal to a deep blue for high
// values, so that more of a quantity reads as more ink.
const (
	rampLightL, rampDarkL = 96.0, 20.0
	rampLightH, rampDarkH = 100.0, 290.0 // hue angle in degrees
	rampChromaEnds        = 28.0
	rampChromaBulge       = 27.0
)

// rampColour returns the sequential ramp's colour at t in [0, 1]. L* falls
// linearly with t, the hue turns steadily, and the chroma, largest in the
// middle, is reduced where needed to stay inside the sRGB gamut, so
// lightness alone orders the colours.
func rampColour(t float64) color.RGBA {
	t = math.Max(0, math.Min(1, t))
	l := rampLightL + (rampDarkL-rampLightL)*t
	h := (rampLightH + (rampDarkH-rampLightH)*t) * math.Pi / 180
	cos, sin := math.Cos(h), math.Sin(h)
	in := func(c float64) bool {
		r, g, b := labToLinear(lab{l, c * cos, c * sin})
		return r >= 0 && r <= 1 && g >= 0 && g <= 1 && b >= 0 && b <= 1
	}
	hi := rampChromaEnds + rampChromaBulge*math.Sin(math.Pi*t)
	if !in(hi) {
		lo := 0.0
		for range 30 {
			mid := (lo + hi) / 2
			if in(mid) {
				lo = mid
			} else {
				hi = mid
			}
		}
		hi = lo
	}
	r, g, b := labToLinear(lab{l, hi * cos, hi * sin})
	enc := func(v float64) uint8 {
		return uint8(math.Round(255 * linearToSRGB(math.Max(0, math.Min(1, v)))))
	}
	return color.RGBA{enc(r), enc(g), enc(b), 0xFF}
}
