package timeline

import (
	"math"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/lattice"
	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/model"
)

var day0 = time.Date(2025, 3, 1, 0, 0, 0, 0, time.UTC)

// testModel has three regimes at (0, 0), (10, 0) and (0, 10) on a flat
// 3 × 1 map, and training quantization errors spread evenly over [0, 1]:
// the median is 0.5, so the automatic switch cost is 1, and the 99th
// percentile is 0.99.
func testModel() *model.Model {
	q := make([]float64, 1001)
	for i := range q {
		q[i] = float64(i) / 1000
	}
	return &model.Model{
		Map: mapper.Map{Lattice: lattice.Lattice{Cols: 3, Rows: 1, Flat: true}, Dim: 2, Codebook: []float64{0, 0, 10, 0, 0, 10}},
		Regimes: []mapper.Regime{
			{ID: 1, Units: []int{0}, Centroid: []float64{0, 0}},
			{ID: 2, Units: []int{1}, Centroid: []float64{10, 0}},
			{ID: 3, Units: []int{2}, Centroid: []float64{0, 10}},
		},
		UnitRegime:  []int{1, 2, 3},
		QEQuantiles: q,
	}
}

// window is one test window: day offset, scaled vector and QE.
type window struct {
	site string
	day  int
	x, y float64
	qe   float64
}

// centre is the centroid of each regime of testModel, by ID.
var centre = map[int][2]float64{1: {0, 0}, 2: {10, 0}, 3: {0, 10}}

// series makes consecutive daily windows of one site at the centroids of
// the given regimes.
func series(site string, regimes ...int) []window {
	var w []window
	for d, r := range regimes {
		w = append(w, window{site: site, day: d, x: centre[r][0], y: centre[r][1], qe: 0.1})
	}
	return w
}

// inputs makes the windows of ws, each on the unit of the nearest
// centroid.
func inputs(ws []window) []features.Window {
	out := make([]features.Window, len(ws))
	for i, w := range ws {
		start := day0.AddDate(0, 0, w.day)
		unit := 0
		switch {
		case w.x > 5:
			unit = 1
		case w.y > 5:
			unit = 2
		}
		out[i] = features.Window{Site: w.site, Start: start, End: start.AddDate(0, 0, 1), Scaled: []float64{w.x, w.y}, Unit: unit, QE: w.qe}
	}
	return out
}

func regimesOf(ws []features.Window, site string) []int {
	var r []int
	for _, w := range ws {
		if w.Site == site {
			r = append(r, w.Regime)
		}
	}
	return r
}

// The confidence of each switch is worked by hand from its definition in
// Build's doc comment, Δ / (Δ + c): windows sit on the centroids, 10 apart,
// and the automatic switch cost c is twice the median training QE, 2 × 0.5
// = 1. A removed switch can take a second one with it: extending regime 1
// over a one-window excursion into 2 adds that window's 10 and saves both
// switches, Δ = 10 − 2 = 8.
func TestBuildSegments(t *testing.T) {
	tests := []struct {
		name     string
		windows  []window
		cfg      Config
		regimes  []int
		switches []Switch
	}{
		{
			name:    "clean switch",
			windows: series("a", 1, 1, 1, 1, 2, 2, 2, 2),
			regimes: []int{1, 1, 1, 1, 2, 2, 2, 2},
			// Δ = 4·10 − 1 either way.
			switches: []Switch{{Site: "a", Time: day0.AddDate(0, 0, 4), From: 1, To: 2, Before: 4, After: 4, Confidence: 39.0 / 40}},
		},
		{
			name:    "one-window excursion is held by the minimum dwell",
			windows: series("b", 1, 1, 1, 2, 1, 1),
			regimes: []int{1, 1, 1, 1, 1, 1},
		},
		{
			name:    "one-window excursion without a dwell rule",
			windows: series("b", 1, 1, 1, 2, 1, 1),
			cfg:     Config{MinDwell: 1},
			regimes: []int{1, 1, 1, 2, 1, 1},
			// Both: Δ = 8, the excursion taken back (the other ways cost
			// 3·10 − 1 and 2·10 − 1).
			switches: []Switch{
				{Site: "b", Time: day0.AddDate(0, 0, 3), From: 1, To: 2, Before: 3, After: 1, Confidence: 8.0 / 9},
				{Site: "b", Time: day0.AddDate(0, 0, 4), From: 2, To: 1, Before: 1, After: 2, Confidence: 8.0 / 9},
			},
		},
		{
			name: "weak flicker is held by the switch cost",
			// Window 3 is closer to regime 2 by 1.2, less than two switches (2).
			windows: []window{{"c", 0, 0, 0, 0.1}, {"c", 1, 0, 0, 0.1}, {"c", 2, 5.6, 0, 0.1}, {"c", 3, 0, 0, 0.1}},
			cfg:     Config{MinDwell: 1},
			regimes: []int{1, 1, 1, 1},
		},
		{
			name: "a flicker worth more than two switches shows without a dwell rule",
			// Window 3 is closer to regime 2 by 3 (distances 6.5 and 3.5),
			// more than two automatic switch costs (2).
			windows: []window{{"c", 0, 0, 0, 0.1}, {"c", 1, 0, 0, 0.1}, {"c", 2, 6.5, 0, 0.1}, {"c", 3, 0, 0, 0.1}},
			cfg:     Config{MinDwell: 1},
			regimes: []int{1, 1, 2, 1},
			// Both: Δ = 6.5 − 3.5 − 2 = 1, the flicker taken back.
			switches: []Switch{
				{Site: "c", Time: day0.AddDate(0, 0, 2), From: 1, To: 2, Before: 2, After: 1, Confidence: 1.0 / 2},
				{Site: "c", Time: day0.AddDate(0, 0, 3), From: 2, To: 1, Before: 1, After: 1, Confidence: 1.0 / 2},
			},
		},
		{
			name:    "a change in the last window waits for confirmation",
			windows: series("d", 1, 1, 1, 1, 3),
			regimes: []int{1, 1, 1, 1, 1},
		},
		{
			name:    "two windows are enough",
			windows: series("d", 1, 1, 1, 3, 3),
			regimes: []int{1, 1, 1, 3, 3},
			switches: []Switch{
				// Δ = 2·10 − 1, regime 1 kept over the new windows.
				{Site: "d", Time: day0.AddDate(0, 0, 3), From: 1, To: 3, Before: 3, After: 2, Confidence: 19.0 / 20},
			},
		},
		{
			name: "switch across a gap is at the first window after it",
			windows: []window{
				{"e", 0, 0, 0, 0.1}, {"e", 1, 0, 0, 0.1}, {"e", 2, 0, 0, 0.1},
				{"e", 10, 10, 0, 0.1}, {"e", 11, 10, 0, 0.1},
			},
			regimes: []int{1, 1, 1, 2, 2},
			// Δ = 2·10 − 1: the gap changes nothing.
			switches: []Switch{{Site: "e", Time: day0.AddDate(0, 0, 10), From: 1, To: 2, Before: 3, After: 2, Confidence: 19.0 / 20}},
		},
		{
			name:    "a site shorter than the dwell keeps one regime",
			windows: series("f", 2),
			regimes: []int{2},
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			ws := inputs(tc.windows)
			switches, err := switchesOf(Build(testModel(), ws, tc.cfg))
			if err != nil {
				t.Fatal(err)
			}
			if got := regimesOf(ws, tc.windows[0].site); !slices.Equal(got, tc.regimes) {
				t.Errorf("regimes %v, want %v", got, tc.regimes)
			}
			if len(switches) != len(tc.switches) {
				t.Fatalf("switches %+v, want %+v", switches, tc.switches)
			}
			for i, s := range switches {
				w := tc.switches[i]
				if math.Abs(s.Confidence-w.Confidence) > 1e-12 {
					t.Errorf("switch %d: confidence %g, want %g", i, s.Confidence, w.Confidence)
				}
				s.Confidence, w.Confidence = 0, 0 // compared above, to a tolerance
				w.Onset = w.Time                  // windows on the centroids do not drift
				if !s.Time.Equal(w.Time) || s != w {
					t.Errorf("switch %d: %+v, want %+v", i, s, w)
				}
			}
		})
	}
}

// The confidence follows its definition, worked by hand: in the clean
// switch, windows sit on the centroids 10 apart. Removing the switch
// relabels 4 windows (+40) and saves one switch (−1): Δ = 39, so the
// confidence is 39 / (39 + 1).
func TestBuildConfidence(t *testing.T) {
	sw, err := switchesOf(Build(testModel(), inputs(series("a", 1, 1, 1, 1, 2, 2, 2, 2)), Config{}))
	if err != nil {
		t.Fatal(err)
	}
	if len(sw) != 1 || math.Abs(sw[0].Confidence-39.0/40) > 1e-12 {
		t.Fatalf("switches %+v, want one with confidence %g", sw, 39.0/40)
	}
	// A doubtful switch: the new segment is only 0.8 per window closer to
	// regime 2 (distances 4.6 and 5.4), over 2 windows: Δ = 1.6 − 1 = 0.6.
	sw, err = switchesOf(Build(testModel(), inputs([]window{{"g", 0, 0, 0, 0.1}, {"g", 1, 0, 0, 0.1}, {"g", 2, 5.4, 0, 0.1}, {"g", 3, 5.4, 0, 0.1}}), Config{}))
	if err != nil {
		t.Fatal(err)
	}
	if len(sw) != 1 || math.Abs(sw[0].Confidence-0.6/1.6) > 1e-12 {
		t.Fatalf("switches %+v, want one with confidence %g", sw, 0.6/1.6)
	}
}

func TestBuildEntries(t *testing.T) {
	ws := append(series("b", 1, 1, 2, 2), series("a", 3, 3, 3)...)
	ws[1].qe = 0.995 // above the 99th percentile (0.99)
	ws[2].qe = 0.985
	ws[5].x = math.NaN() // left out of the distances: (NaN, 10) is still at regime 3
	// Out of time order within a site: Build must sort, yet set each
	// window's own fields.
	ws[0], ws[3] = ws[3], ws[0]
	in := inputs(ws)
	switches, err := switchesOf(Build(testModel(), in, Config{}))
	if err != nil {
		t.Fatal(err)
	}
	for i, w := range in {
		if want := i == 1; w.Unfamiliar != want {
			t.Errorf("window %d (QE %g): unfamiliar %v, want %v", i, w.QE, w.Unfamiliar, want)
		}
	}
	wantRegime := []int{2, 1, 2, 1, 3, 3, 3}
	for i, w := range in {
		if w.Regime != wantRegime[i] {
			t.Errorf("window %d (%s day %d): regime %d, want %d", i, w.Site, ws[i].day, w.Regime, wantRegime[i])
		}
	}
	if len(switches) != 1 || switches[0].Site != "b" || !switches[0].Time.Equal(day0.AddDate(0, 0, 2)) {
		t.Errorf("switches %+v, want one of site b on day 2", switches)
	}
	// Sorted by site, then time.
	many := append(series("z", 1, 1, 2, 2, 1, 1), series("y", 2, 2, 3, 3)...)
	switches, err = switchesOf(Build(testModel(), inputs(many), Config{}))
	if err != nil {
		t.Fatal(err)
	}
	var keys []string
	for _, s := range switches {
		keys = append(keys, s.Site+s.Time.Format(time.DateOnly))
	}
	if want := []string{"y2025-03-03", "z2025-03-03", "z2025-03-05"}; !slices.Equal(keys, want) {
		t.Errorf("switch order %v, want %v", keys, want)
	}
}

func TestBuildErrors(t *testing.T) {
	ws := inputs(series("a", 1, 1, 2))
	noQuantiles := testModel()
	noQuantiles.QEQuantiles = nil
	noRegimes := testModel()
	noRegimes.Regimes = nil
	badCentroid := testModel()
	badCentroid.Regimes[1].Centroid = []float64{1}
	badUnit := slices.Clone(ws)
	badUnit[2].Unit = 3
	unscaled := slices.Clone(ws)
	unscaled[1].Scaled = nil
	infinite := slices.Clone(ws)
	infinite[1].Scaled = []float64{math.Inf(1), 0}
	tests := []struct {
		name string
		m    *model.Model
		ws   []features.Window
		cfg  Config
		want string
	}{
		{"no model", nil, ws, Config{}, "needs a model"},
		{"unscaled", testModel(), unscaled, Config{}, "0 scaled features for a map of dimension 2"},
		{"no quantiles", noQuantiles, ws, Config{SwitchCost: 1}, "quantiles"},
		{"no regimes", noRegimes, ws, Config{}, "no regimes"},
		{"centroid", badCentroid, ws, Config{}, "regime 2: centroid has 1 components"},
		{"unit", testModel(), badUnit, Config{}, "unit 3 outside"},
		{"dwell", testModel(), ws, Config{MinDwell: -1}, "MinDwell -1"},
		{"quantile", testModel(), ws, Config{UnfamiliarQ: 1.5}, "UnfamiliarQ 1.5"},
		{"switch cost", testModel(), ws, Config{SwitchCost: math.NaN()}, "SwitchCost NaN"},
		{"infinite", testModel(), infinite, Config{}, "not finite"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Build(tc.m, tc.ws, tc.cfg)
			if err == nil || !strings.Contains(err.Error(), tc.want) || !strings.HasPrefix(err.Error(), "timeline: ") {
				t.Errorf("error %v, want one mentioning %q", err, tc.want)
			}
		})
	}
}

// A site whose history ended in regime 1 and whose new dump starts in
// regime 2 switched at the first window of the dump; one that continues is
// not a switch; without the history neither is seen.
func TestBuildFromPrior(t *testing.T) {
	ws := append(series("a", 2, 2, 2, 2), series("b", 1, 1, 1, 1)...)
	in := inputs(ws)
	priors := map[string]Prior{"a": {Regime: 1, Windows: 5}, "b": {Regime: 1, Windows: 5}}
	sws, err := switchesOf(BuildFrom(testModel(), in, Config{}, priors))
	if err != nil {
		t.Fatal(err)
	}
	if len(sws) != 1 {
		t.Fatalf("switches %+v, want one, of site a", sws)
	}
	got := sws[0]
	if got.Site != "a" || !got.Time.Equal(day0) || got.From != 1 || got.To != 2 || got.Before != 5 || got.After != 4 {
		t.Errorf("switch %+v, want site a at %s from 1 to 2 with 5 windows before and 4 after", got, day0)
	}
	if !(got.Confidence > 0.5 && got.Confidence < 1) {
		t.Errorf("confidence %g of a clear switch, want in (0.5, 1)", got.Confidence)
	}
	if sws, _ := switchesOf(Build(testModel(), in, Config{})); len(sws) != 0 {
		t.Errorf("without history: switches %+v, want none", sws)
	}
	// A prior in a regime the model lacks is ignored.
	if sws, _ := switchesOf(BuildFrom(testModel(), in, Config{}, map[string]Prior{"a": {Regime: 9, Windows: 3}})); len(sws) != 0 {
		t.Errorf("unknown prior regime: switches %+v, want none", sws)
	}
}

// switchesOf is the switches of a decoding's result.
func switchesOf(r Result, err error) ([]Switch, error) { return r.Switches, err }
