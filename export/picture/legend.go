package picture

import (
	"image/color"
	"math"
	"strconv"
	"strings"

	"golang.org/x/image/font"
)

// niceStep returns a round step (1, 2 or 5 times a power of ten) that cuts
// span into about n parts.
func niceStep(span float64, n int) float64 {
	if span <= 0 || n < 1 {
		return 1
	}
	raw := span / float64(n)
	p := math.Pow(10, math.Floor(math.Log10(raw)))
	for _, k := range []float64{1, 2, 5} {
		if k*p >= raw*0.999 {
			return k * p
		}
	}
	return 10 * p
}

// ticks returns the multiples of a nice step inside [lo, hi].
func ticks(lo, hi float64, n int) (vals []float64, step float64) {
	step = niceStep(hi-lo, n)
	for v := math.Ceil(lo/step-1e-9) * step; v <= hi+step*1e-9; v += step {
		vals = append(vals, v)
	}
	return vals, step
}

// decimals returns the decimals needed to print multiples of step.
func decimals(step float64) int {
	if step <= 0 || step >= 1 {
		return 0
	}
	return int(math.Ceil(-math.Log10(step) - 1e-9))
}

// number formats v with d decimals and a true minus sign.
func number(v float64, d int) string {
	s := strconv.FormatFloat(v, 'f', d, 64)
	if strings.Trim(s, "-0.") == "" {
		s = strings.TrimPrefix(s, "-")
	}
	return strings.Replace(s, "-", "−", 1)
}

// wrap breaks s into lines at most w pixels wide, at spaces, and shortens
// the last of at most n lines with an ellipsis.
func wrap(face font.Face, s string, w float64, n int) []string {
	var lines []string
	line := ""
	words := strings.Fields(s)
	for i, word := range words {
		try := strings.TrimSpace(line + " " + word)
		if line == "" || width(face, try) <= w {
			line = try
			continue
		}
		if len(lines) == n-1 {
			lines = append(lines, fit(face, line+" "+strings.Join(words[i:], " "), w))
			return lines
		}
		lines = append(lines, fit(face, line, w))
		line = word
	}
	if line != "" {
		lines = append(lines, fit(face, line, w))
	}
	return lines
}

// colourBar draws the sequential ramp upright at x, y, with w × h pixels,
// from lo at the bottom to hi at the top, with ticks and numbers on its
// right.
func colourBar(c *canvas, x, y, w, h, lo, hi float64) {
	for i := 0; i < int(h); i++ {
		t := 1 - (float64(i)+0.5)/h
		c.rect(x, y+float64(i), x+w, y+float64(i+1), rampColour(t))
	}
	c.frame(x, y, x+w, y+h, 1, softInk)
	if hi <= lo {
		c.text(x+w+10, y+h/2+ascent(c.ft.small)/2, number(lo, 2), c.ft.small, ink, alignLeft)
		return
	}
	vals, step := ticks(lo, hi, 5)
	for _, v := range vals {
		ty := y + h*(1-(v-lo)/(hi-lo))
		c.rect(x+w, ty-0.5, x+w+6, ty+0.5, ink)
		c.text(x+w+10, ty+ascent(c.ft.small)/2, number(v, decimals(step)), c.ft.small, ink, alignLeft)
	}
}

// textLines draws lines of text downwards from baseline y and returns the
// baseline after the last.
func textLines(c *canvas, x, y float64, face font.Face, col color.Color, lines ...string) float64 {
	for _, l := range lines {
		c.text(x, y, l, face, col, alignLeft)
		y += lineGap
	}
	return y
}
