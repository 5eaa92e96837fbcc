package picture

import (
	"bytes"
	"fmt"
	"image"
	"image/color"
	"image/draw"
	"image/png"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/lattice"
	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/model"
	"github.com/kinmap/kinmap/timeline"
)

// writeSamples writes the pictures to $KINMAP_PICTURE_DIR, when set, for a
// person to look at.
func writeSamples(t *testing.T, prefix string, ps []Picture) {
	dir := os.Getenv("KINMAP_PICTURE_DIR")
	if dir == "" {
		return
	}
	for _, p := range ps {
		if err := os.WriteFile(filepath.Join(dir, prefix+p.File), p.PNG, 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

// inked returns the share of pixels that are not white and the number of
// distinct colours.
func inked(img image.Image) (share float64, colours int) {
	b := img.Bounds()
	rgba := image.NewRGBA(b)
	draw.Draw(rgba, b, img, b.Min, draw.Src)
	seen := make(map[color.RGBA]bool)
	n := 0
	for i := 0; i < len(rgba.Pix); i += 4 {
		c := color.RGBA{rgba.Pix[i], rgba.Pix[i+1], rgba.Pix[i+2], rgba.Pix[i+3]}
		seen[c] = true
		if c != white {
			n++
		}
	}
	return float64(n) / float64(b.Dx()*b.Dy()), len(seen)
}

func TestAllPictures(t *testing.T) {
	order := []string{"regimes.png", "sites.png", "timelines.png", "umatrix.png", "hits.png", "components.png", "conditions.png"}
	// Files names every picture All can draw, so that an earlier run's
	// pictures can be cleared away.
	if got := Files(); !slices.Equal(got, order) {
		t.Errorf("Files() = %v, want %v", got, order)
	}
	for _, tc := range []struct {
		name string
		l    lattice.Lattice
		k    int
	}{
		{"hex-torus", lattice.Lattice{Cols: 20, Rows: 16, Hex: true}, 5},
		{"square-plane", lattice.Lattice{Cols: 12, Rows: 9, Flat: true}, 9},
		{"hex-plane", lattice.Lattice{Cols: 30, Rows: 24, Hex: true, Flat: true}, 12},
		{"square-torus", lattice.Lattice{Cols: 8, Rows: 6}, 3},
	} {
		t.Run(tc.name, func(t *testing.T) {
			ps, err := All(demoInput(tc.l, tc.k, 300))
			if err != nil {
				t.Fatal(err)
			}
			writeSamples(t, tc.name+"-", ps)
			var files []string
			for _, p := range ps {
				files = append(files, p.File)
				if p.Title == "" || p.Caption == "" {
					t.Errorf("%s: title %q, caption %q", p.File, p.Title, p.Caption)
				}
				img, err := png.Decode(bytes.NewReader(p.PNG))
				if err != nil {
					t.Fatalf("%s: %v", p.File, err)
				}
				// The size stated is the size drawn, and readable on a
				// screen (common practice, no source).
				if got := img.Bounds().Size(); got != image.Pt(p.Width, p.Height) {
					t.Errorf("%s: %v, stated %dx%d", p.File, got, p.Width, p.Height)
				}
				if p.Width < 900 || p.Width > 1700 || p.Height < 400 || p.Height > 2400 {
					t.Errorf("%s: %dx%d", p.File, p.Width, p.Height)
				}
				if len(p.PNG) > 700<<10 {
					t.Errorf("%s: %d bytes", p.File, len(p.PNG))
				}
				if share, colours := inked(img); share < 0.05 || colours < 50 {
					t.Errorf("%s: %.1f %% inked, %d colours: nearly blank", p.File, 100*share, colours)
				}
			}
			if !slices.Equal(files, order) {
				t.Errorf("pictures %v, want %v", files, order)
			}
		})
	}
}

func TestAllLeavesOutEmptyPictures(t *testing.T) {
	in := demoInput(lattice.Lattice{Cols: 6, Rows: 4, Hex: true}, 2, 10)
	in.Switches = nil
	in.Conditions = nil
	for i := range in.Sites {
		in.Sites[i].Located = false
	}
	ps, err := All(in)
	if err != nil {
		t.Fatal(err)
	}
	var files []string
	for _, p := range ps {
		files = append(files, p.File)
	}
	if want := []string{"regimes.png", "umatrix.png", "hits.png", "components.png"}; !slices.Equal(files, want) {
		t.Errorf("pictures %v, want %v", files, want)
	}
}

func TestAllSmallAndOddInputs(t *testing.T) {
	// Degenerate but valid runs draw without failing.
	for _, l := range []lattice.Lattice{{Cols: 1, Rows: 1, Flat: true}, {Cols: 5, Rows: 1, Hex: true, Flat: true}, {Cols: 3, Rows: 4, Hex: true}} {
		in := demoInput(l, 1, 3)
		in.Windows = nil
		in.Model.Scaler = nil
		in.Sites = append(in.Sites, SitePoint{ID: "pole", Lon: 0, Lat: 90, Located: true, Regime: 0})
		if _, err := All(in); err != nil {
			t.Errorf("%s: %v", shapeName(l), err)
		}
	}
}

func TestAllRejectsBadInput(t *testing.T) {
	good := func() Input { return demoInput(lattice.Lattice{Cols: 4, Rows: 4, Hex: true}, 2, 3) }
	for _, tc := range []struct {
		name  string
		spoil func(*Input)
		want  string
	}{
		{"no model", func(in *Input) { in.Model = nil }, "no model"},
		{"codebook", func(in *Input) { in.Model.Map.Codebook = in.Model.Map.Codebook[1:] }, "codebook"},
		{"unit regimes", func(in *Input) { in.Model.UnitRegime = in.Model.UnitRegime[:3] }, "unit regimes"},
		{"lattice", func(in *Input) { in.Model.Map.Lattice.Rows = 3 }, "even number of rows"},
		{"unit", func(in *Input) { in.Windows[2].Unit = 16 }, "unit 16 outside"},
	} {
		in := good()
		tc.spoil(&in)
		_, err := All(in)
		if err == nil || !strings.HasPrefix(err.Error(), "picture: ") || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want one about %q", tc.name, err, tc.want)
		}
	}
}

func TestSwitchedSitesCap(t *testing.T) {
	start := time.Date(2024, 1, 1, 0, 0, 0, 0, time.UTC)
	var sw []timeline.Switch
	for i := range 55 {
		// Site i's switch comes i days after the start; site 7 switches twice.
		sw = append(sw, timeline.Switch{Site: fmt.Sprintf("S%02d", i), Time: start.AddDate(0, 0, i)})
	}
	sw = append(sw, timeline.Switch{Site: "S07", Time: start.AddDate(0, 0, 100)})
	shown, omitted := switchedSites(sw)
	if len(shown) != maxStrips || omitted != 15 {
		t.Fatalf("%d shown, %d omitted, want %d and 15", len(shown), omitted, maxStrips)
	}
	if shown[0].id != "S07" || len(shown[0].switches) != 2 {
		t.Errorf("first strip %s with %d switches, want S07 with 2", shown[0].id, len(shown[0].switches))
	}
	for i, s := range shown[1:] {
		if want := fmt.Sprintf("S%02d", 16+i); s.id != want {
			t.Errorf("strip %d: %s, want %s (the latest switches, in site order)", i+1, s.id, want)
		}
	}
}

func TestDateTicks(t *testing.T) {
	utc := func(y int, m time.Month, d, h int) time.Time { return time.Date(y, m, d, h, 0, 0, 0, time.UTC) }
	for _, tc := range []struct {
		t0, t1 time.Time
		first  time.Time
		check  func(time.Time) bool
		what   string
	}{
		// 4 March 2024 was a Monday (Go's time package agrees with the
		// Gregorian calendar).
		{utc(2024, 3, 4, 0), utc(2024, 5, 13, 0), utc(2024, 3, 4, 0),
			func(t time.Time) bool { return t.Weekday() == time.Monday && t.Hour() == 0 }, "Monday midnight"},
		{utc(2024, 3, 4, 5), utc(2024, 3, 9, 0), utc(2024, 3, 5, 0),
			func(t time.Time) bool { return t.Hour() == 0 }, "midnight"},
		{utc(2023, 11, 20, 0), utc(2025, 2, 1, 0), utc(2024, 1, 1, 0),
			func(t time.Time) bool { return t.Day() == 1 && t.Month()%2 == 1 }, "first of every second month from January"},
		{utc(2024, 3, 4, 7), utc(2024, 3, 4, 19), utc(2024, 3, 4, 9),
			func(t time.Time) bool { return t.Minute() == 0 && t.Hour()%3 == 0 }, "every third hour"},
	} {
		ts, _ := dateTicks(tc.t0, tc.t1, 9)
		if len(ts) < 3 || len(ts) > 9 {
			t.Errorf("%v–%v: %d ticks", tc.t0, tc.t1, len(ts))
			continue
		}
		if !ts[0].Equal(tc.first) {
			t.Errorf("%v–%v: first tick %v, want %v", tc.t0, tc.t1, ts[0], tc.first)
		}
		for _, x := range ts {
			if x.Before(tc.t0) || x.After(tc.t1) || !tc.check(x) {
				t.Errorf("%v–%v: tick %v, want each a %s inside the span", tc.t0, tc.t1, x, tc.what)
			}
		}
	}
}

// A model of 5,000 features (a wide dump of thousands of channels) once
// asked for a picture of 17 GB. The picture keeps to MaxPlanes planes: those
// of the features made to vary most across the units, and says how many it
// left out.
func TestComponentPlanesLimit(t *testing.T) {
	ft, err := newFonts()
	if err != nil {
		t.Fatal(err)
	}
	l := lattice.Lattice{Cols: 8, Rows: 6, Hex: true}
	const dim = 5000
	rng := rand.New(rand.NewPCG(3, 5))
	names := make([]string, dim)
	m := &model.Model{Map: mapper.Map{Lattice: l, Dim: dim, Codebook: make([]float64, l.Units()*dim)}}
	for k := range names {
		names[k] = fmt.Sprintf("c%04d.mean", k)
	}
	m.FeatureNames, m.Scaler = names, &features.Scaler{Method: "zscore", Names: names}
	// The last MaxPlanes features spread a hundred times wider.
	for u := range l.Units() {
		v := m.Map.Vector(u)
		for k := range v {
			v[k] = rng.NormFloat64()
			if k >= dim-MaxPlanes {
				v[k] *= 100
			}
		}
	}
	c, pic := componentPlanes(ft, Input{Model: m})
	if h := c.img.Bounds().Dy(); h > 4000 {
		t.Errorf("picture %d pixels high for %d planes", h, MaxPlanes)
	}
	if want := fmt.Sprintf("%d others are left out", dim-MaxPlanes); !strings.Contains(pic.Caption, want) {
		t.Errorf("caption does not say %q: %s", want, pic.Caption)
	}
	dims := informativeDims(m, MaxPlanes)
	if len(dims) != MaxPlanes || dims[0] != dim-MaxPlanes || dims[MaxPlanes-1] != dim-1 {
		t.Errorf("planes of dimensions %v, want %d..%d", dims, dim-MaxPlanes, dim-1)
	}
}
