package picture

import (
	"fmt"
	"image/color"
	"math"
	"testing"
)

// deltaE00 is the CIEDE2000 colour difference, as written out step by step
// in Sharma, Wu & Dalal, "The CIEDE2000 color-difference formula:
// implementation notes, supplementary test data, and mathematical
// observations", Color Research & Application 30(1), 2005, equations 1–22.
func deltaE00(x, y lab) float64 {
	const deg = math.Pi / 180
	c1, c2 := math.Hypot(x.A, x.B), math.Hypot(y.A, y.B)
	cb7 := math.Pow((c1+c2)/2, 7)
	g := 0.5 * (1 - math.Sqrt(cb7/(cb7+math.Pow(25, 7))))
	a1, a2 := (1+g)*x.A, (1+g)*y.A
	c1p, c2p := math.Hypot(a1, x.B), math.Hypot(a2, y.B)
	hue := func(b, a float64) float64 {
		if a == 0 && b == 0 {
			return 0
		}
		h := math.Atan2(b, a) / deg
		if h < 0 {
			h += 360
		}
		return h
	}
	h1, h2 := hue(x.B, a1), hue(y.B, a2)
	dL, dC := y.L-x.L, c2p-c1p
	var dh float64
	if c1p*c2p != 0 {
		dh = h2 - h1
		switch {
		case dh > 180:
			dh -= 360
		case dh < -180:
			dh += 360
		}
	}
	dH := 2 * math.Sqrt(c1p*c2p) * math.Sin(dh/2*deg)
	lb, cbp := (x.L+y.L)/2, (c1p+c2p)/2
	hb := h1 + h2
	if c1p*c2p != 0 {
		// Hues exactly opposite (pairs 10 and 14) must take the first
		// branch; rounding in atan2 can put them a hair beyond 180°.
		switch {
		case math.Abs(h1-h2) <= 180+1e-9:
			hb = (h1 + h2) / 2
		case h1+h2 < 360:
			hb = (h1 + h2 + 360) / 2
		default:
			hb = (h1 + h2 - 360) / 2
		}
	}
	t := 1 - 0.17*math.Cos((hb-30)*deg) + 0.24*math.Cos(2*hb*deg) + 0.32*math.Cos((3*hb+6)*deg) - 0.20*math.Cos((4*hb-63)*deg)
	dTheta := 30 * math.Exp(-math.Pow((hb-275)/25, 2))
	cbp7 := math.Pow(cbp, 7)
	rc := 2 * math.Sqrt(cbp7/(cbp7+math.Pow(25, 7)))
	sl := 1 + 0.015*(lb-50)*(lb-50)/math.Sqrt(20+(lb-50)*(lb-50))
	sc := 1 + 0.045*cbp
	sh := 1 + 0.015*cbp*t
	rt := -math.Sin(2*dTheta*deg) * rc
	return math.Sqrt(math.Pow(dL/sl, 2) + math.Pow(dC/sc, 2) + math.Pow(dH/sh, 2) + rt*(dC/sc)*(dH/sh))
}

// The 34 test pairs of Sharma, Wu & Dalal (2005), table 1: L*a*b* of both
// samples and ΔE00 to four decimals (from memory).
var sharmaPairs = [][7]float64{
	{50.0000, 2.6772, -79.7751, 50.0000, 0.0000, -82.7485, 2.0425},
	{50.0000, 3.1571, -77.2803, 50.0000, 0.0000, -82.7485, 2.8615},
	{50.0000, 2.8361, -74.0200, 50.0000, 0.0000, -82.7485, 3.4412},
	{50.0000, -1.3802, -84.2814, 50.0000, 0.0000, -82.7485, 1.0000},
	{50.0000, -1.1848, -84.8006, 50.0000, 0.0000, -82.7485, 1.0000},
	{50.0000, -0.9009, -85.5211, 50.0000, 0.0000, -82.7485, 1.0000},
	{50.0000, 0.0000, 0.0000, 50.0000, -1.0000, 2.0000, 2.3669},
	{50.0000, -1.0000, 2.0000, 50.0000, 0.0000, 0.0000, 2.3669},
	{50.0000, 2.4900, -0.0010, 50.0000, -2.4900, 0.0009, 7.1792},
	{50.0000, 2.4900, -0.0010, 50.0000, -2.4900, 0.0010, 7.1792},
	{50.0000, 2.4900, -0.0010, 50.0000, -2.4900, 0.0011, 7.2195},
	{50.0000, 2.4900, -0.0010, 50.0000, -2.4900, 0.0012, 7.2195},
	{50.0000, -0.0010, 2.4900, 50.0000, 0.0009, -2.4900, 4.8045},
	{50.0000, -0.0010, 2.4900, 50.0000, 0.0010, -2.4900, 4.8045},
	{50.0000, -0.0010, 2.4900, 50.0000, 0.0011, -2.4900, 4.7461},
	{50.0000, 2.5000, 0.0000, 50.0000, 0.0000, -2.5000, 4.3065},
	{50.0000, 2.5000, 0.0000, 73.0000, 25.0000, -18.0000, 27.1492},
	{50.0000, 2.5000, 0.0000, 61.0000, -5.0000, 29.0000, 22.8977},
	{50.0000, 2.5000, 0.0000, 56.0000, -27.0000, -3.0000, 31.9030},
	{50.0000, 2.5000, 0.0000, 58.0000, 24.0000, 15.0000, 19.4535},
	{50.0000, 2.5000, 0.0000, 50.0000, 3.1736, 0.5854, 1.0000},
	{50.0000, 2.5000, 0.0000, 50.0000, 3.2972, 0.0000, 1.0000},
	{50.0000, 2.5000, 0.0000, 50.0000, 1.8634, 0.5757, 1.0000},
	{50.0000, 2.5000, 0.0000, 50.0000, 3.2592, 0.3350, 1.0000},
	{60.2574, -34.0099, 36.2677, 60.4626, -34.1751, 39.4387, 1.2644},
	{63.0109, -31.0961, -5.8663, 62.8187, -29.7946, -4.0864, 1.2630},
	{61.2901, 3.7196, -5.3901, 61.4292, 2.2480, -4.9620, 1.8731},
	{35.0831, -44.1164, 3.7933, 35.0232, -40.0716, 1.5901, 1.8645},
	{22.7233, 20.0904, -46.6940, 23.0331, 14.9730, -42.5619, 2.0373},
	{36.4612, 47.8580, 18.3852, 36.2715, 50.5065, 21.2231, 1.4146},
	{90.8027, -2.0831, 1.4410, 91.1528, -1.6435, 0.0447, 1.4441},
	{90.9257, -0.5406, -0.9208, 88.6381, -0.8985, -0.7239, 1.5381},
	{6.7747, -0.2908, -2.4247, 5.8714, -0.0985, -2.2286, 0.6377},
	{2.0776, 0.0795, -1.1350, 0.9033, -0.0636, -0.5514, 0.9082},
}

func TestDeltaE00SharmaPairs(t *testing.T) {
	for i, p := range sharmaPairs {
		x, y := lab{p[0], p[1], p[2]}, lab{p[3], p[4], p[5]}
		// The table rounds to four decimals.
		if got := deltaE00(x, y); math.Abs(got-p[6]) > 5e-5 {
			t.Errorf("pair %d: ΔE00 = %.4f, want %.4f", i+1, got, p[6])
		}
		if got := deltaE00(y, x); math.Abs(got-p[6]) > 5e-5 {
			t.Errorf("pair %d reversed: ΔE00 = %.4f, want %.4f", i+1, got, p[6])
		}
	}
}

func TestLabKnownColours(t *testing.T) {
	for _, tc := range []struct {
		name string
		c    color.RGBA
		want lab
	}{
		// sRGB white is the D65 reference white: L* 100, a* = b* = 0
		// (IEC 61966-2-1 with CIE 15).
		{"white", color.RGBA{255, 255, 255, 255}, lab{100, 0, 0}},
		{"black", color.RGBA{0, 0, 0, 255}, lab{0, 0, 0}},
		// sRGB primaries and a mid grey in CIELAB D65, from memory of the
		// widely tabulated values.
		{"red", color.RGBA{255, 0, 0, 255}, lab{53.24, 80.09, 67.20}},
		{"green", color.RGBA{0, 255, 0, 255}, lab{87.73, -86.18, 83.18}},
		{"blue", color.RGBA{0, 0, 255, 255}, lab{32.30, 79.19, -107.86}},
		{"grey 119", color.RGBA{119, 119, 119, 255}, lab{50.03, 0, 0}},
	} {
		got := rgbaToLab(tc.c)
		if math.Abs(got.L-tc.want.L) > 0.06 || math.Abs(got.A-tc.want.A) > 0.06 || math.Abs(got.B-tc.want.B) > 0.06 {
			t.Errorf("%s: L*a*b* = %.2f %.2f %.2f, want %.2f %.2f %.2f", tc.name, got.L, got.A, got.B, tc.want.L, tc.want.A, tc.want.B)
		}
		r, g, b := labToLinear(got)
		back := color.RGBA{uint8(math.Round(255 * linearToSRGB(r))), uint8(math.Round(255 * linearToSRGB(g))), uint8(math.Round(255 * linearToSRGB(b))), 255}
		if back != tc.c {
			t.Errorf("%s: back to sRGB %v", tc.name, back)
		}
	}
}

// Colour-vision deficiency simulation matrices of Machado, Oliveira &
// Fernandes, "A physiologically-based model for simulation of color vision
// deficiency", IEEE TVCG 15(6), 2009, table for severity 1.0, applied to
// linear RGB (from memory; each row sums to 1, so white stays white).
var machado = map[string][3][3]float64{
	"protanopia":   {{0.152286, 1.052583, -0.204868}, {0.114503, 0.786281, 0.099216}, {-0.003882, -0.048116, 1.051998}},
	"deuteranopia": {{0.367322, 0.860646, -0.227968}, {0.280085, 0.672501, 0.047413}, {-0.011820, 0.042940, 0.968881}},
	"tritanopia":   {{1.255528, -0.076749, -0.178779}, {-0.078411, 0.930809, 0.147602}, {0.004733, 0.691367, 0.303900}},
	"normal":       {{1, 0, 0}, {0, 1, 0}, {0, 0, 1}},
}

// seen returns the CIELAB colour of c as seen with the deficiency m.
func seen(c color.RGBA, m [3][3]float64) lab {
	v := [3]float64{srgbToLinear(float64(c.R) / 255), srgbToLinear(float64(c.G) / 255), srgbToLinear(float64(c.B) / 255)}
	var o [3]float64
	for i := range o {
		o[i] = math.Max(0, math.Min(1, m[i][0]*v[0]+m[i][1]*v[1]+m[i][2]*v[2]))
	}
	return linearToLab(o[0], o[1], o[2])
}

func TestMachadoRowsKeepWhite(t *testing.T) {
	for name, m := range machado {
		for i, row := range m {
			if s := row[0] + row[1] + row[2]; math.Abs(s-1) > 2e-6 {
				t.Errorf("%s row %d sums to %v", name, i, s)
			}
		}
	}
}

// distinct is the smallest CIEDE2000 difference at which two regime
// colours count as clearly told apart; ΔE00 ≈ 1 is a just-noticeable
// difference and categorical palettes are commonly held to about ten times
// that (common practice, no source).
const distinct = 10

func TestRegimeColoursDistinctUnderCVD(t *testing.T) {
	// The seven colours of Okabe & Ito's palette, pairwise.
	for name, m := range machado {
		for i := 1; i <= 7; i++ {
			for j := i + 1; j <= 7; j++ {
				if d := deltaE00(seen(RegimeColour(i), m), seen(RegimeColour(j), m)); d < distinct {
					t.Errorf("%s: regimes %d and %d differ by ΔE00 %.1f < %d", name, i, j, d, distinct)
				}
			}
		}
	}
	// Each shade of the extension against its base colour; tints are told
	// apart from their base by their hatch pattern and marker shape.
	for name, m := range machado {
		for i := 1; i <= 7; i++ {
			if d := deltaE00(seen(RegimeColour(i), m), seen(RegimeColour(i+7), m)); d < distinct {
				t.Errorf("%s: regime %d and its shade %d differ by ΔE00 %.1f", name, i, i+7, d)
			}
		}
	}
}

func TestRegimeColourPalette(t *testing.T) {
	// Okabe & Ito (2008): orange, sky blue, bluish green, yellow, blue,
	// vermillion, reddish purple, as 8-bit sRGB.
	want := []string{"#E69F00", "#56B4E9", "#009E73", "#F0E442", "#0072B2", "#D55E00", "#CC79A7"}
	for i, w := range want {
		if got := hexOf(RegimeColour(i + 1)); got != w {
			t.Errorf("regime %d: %s, want %s", i+1, got, w)
		}
		if RegimeColour(i+22) != RegimeColour(i+1) {
			t.Errorf("regime %d does not repeat regime %d", i+22, i+1)
		}
	}
	for id := 8; id <= 21; id++ {
		if _, ok := regimeHatch(id); !ok {
			t.Errorf("regime %d beyond the palette has no hatch", id)
		}
	}
	for id := 1; id <= 7; id++ {
		if _, ok := regimeHatch(id); ok {
			t.Errorf("regime %d of the palette has a hatch", id)
		}
	}
}

func hexOf(c color.RGBA) string { return fmt.Sprintf("#%02X%02X%02X", c.R, c.G, c.B) }

func TestRampLightnessMonotone(t *testing.T) {
	// L* (CIE 15, sRGB per IEC 61966-2-1) of the 8-bit ramp colours must
	// fall strictly from low to high values, over most of the range.
	const steps = 64
	prev := math.Inf(1)
	var first, last float64
	for i := range steps + 1 {
		l := rgbaToLab(rampColour(float64(i) / steps)).L
		if l >= prev {
			t.Errorf("step %d: L* %.2f not below %.2f", i, l, prev)
		}
		if i == 0 {
			first = l
		}
		prev, last = l, l
	}
	if first-last < 70 {
		t.Errorf("ramp spans L* %.1f to %.1f, under 70", first, last)
	}
	// Equal steps of value give nearly equal steps of lightness: the ramp
	// is linear in L* by construction, up to 8-bit rounding.
	for i := range 10 {
		a, b := rgbaToLab(rampColour(float64(i)/10)).L, rgbaToLab(rampColour(float64(i+1)/10)).L
		if d := a - b; math.Abs(d-(rampLightL-rampDarkL)/10) > 0.5 {
			t.Errorf("tenth %d: L* step %.2f", i, d)
		}
	}
}

func TestRampDistinctUnderCVD(t *testing.T) {
	// Ten equal steps of the ramp stay apart under every deficiency, since
	// lightness carries the order.
	for name, m := range machado {
		for i := range 10 {
			a, b := seen(rampColour(float64(i)/10), m), seen(rampColour(float64(i+1)/10), m)
			if d := deltaE00(a, b); d < 3 {
				t.Errorf("%s: tenth %d: ΔE00 %.1f", name, i, d)
			}
		}
	}
}
