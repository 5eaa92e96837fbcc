package timeline

import (
	"fmt"
	"math"
	"reflect"
	"slices"
	"testing"
	"time"

	"gonum.org/v1/gonum/floats"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/model"
)

func TestBuildSharedConditions(t *testing.T) {
	// Eight sites in regime 1 for 21 days; on days 9 to 11 a storm carries
	// six of them to regime 2's centroid. Site s7 changes to regime 3 on
	// day 15, alone.
	seqs := map[string][]int{}
	for i := range 8 {
		r := slices.Repeat([]int{1}, 21)
		if i < 6 {
			copy(r[9:12], []int{2, 2, 2})
		}
		if i == 7 {
			copy(r[15:], slices.Repeat([]int{3}, 6))
		}
		seqs[string(rune('0'+i))] = r
	}
	decoded := inputs(sitesOf(seqs))
	switches, err := switchesOf(Build(testModel(), decoded, Config{}))
	if err != nil {
		t.Fatal(err)
	}
	want := Switch{Site: "7", Time: day0.AddDate(0, 0, 2+15), Onset: day0.AddDate(0, 0, 2+15), From: 1, To: 3, Before: 15, After: 6}
	if len(switches) != 1 {
		t.Fatalf("switches %v, want only %v", switches, want)
	}
	if got := switches[0]; got.Confidence <= 0 {
		t.Errorf("switch confidence %g, want above 0", got.Confidence)
	} else if got.Confidence = 0; got != want {
		t.Errorf("switch %+v, want %+v", got, want)
	}
	for _, s := range []string{"0", "5", "6"} {
		if got := regimesOf(decoded, s); slices.ContainsFunc(got, func(r int) bool { return r != 1 }) {
			t.Errorf("site %s: regimes %v, want 1 throughout", s, got)
		}
	}

	// A storm that reaches only a minority of the regime's sites leaves
	// them switching there and back.
	for i := range 8 {
		r := slices.Repeat([]int{1}, 21)
		if i < 3 {
			copy(r[9:12], []int{2, 2, 2})
		}
		seqs[string(rune('0'+i))] = r
	}
	decoded = inputs(sitesOf(seqs))
	switches, err = switchesOf(Build(testModel(), decoded, Config{}))
	if err != nil {
		t.Fatal(err)
	}
	var at []time.Time
	for _, sw := range switches {
		at = append(at, sw.Time)
	}
	if len(switches) != 6 {
		t.Errorf("switches at %v, want 6: three sites to regime 2 and back", at)
	}
}

func TestBuildSharedPartial(t *testing.T) {
	// Nine sites in regime 1 for 21 days; on days 9 and 10 a storm carries
	// six of them (not all) to regime 2's centroid. Site "s" changes to
	// regime 2 for good on day 9. The storm days are evidence, weakened but
	// not void, that "s" is in regime 2 there: its switch is dated day 9,
	// not after the storm, and the storm makes no switch.
	seqs := map[string][]int{}
	for i := range 9 {
		r := slices.Repeat([]int{1}, 21)
		if i < 6 {
			copy(r[9:11], []int{2, 2})
		}
		seqs[string(rune('0'+i))] = r
	}
	seqs["s"] = slices.Concat(slices.Repeat([]int{1}, 9), slices.Repeat([]int{2}, 12))
	decoded := inputs(sitesOf(seqs))
	res, err := Build(testModel(), decoded, Config{})
	if err != nil {
		t.Fatal(err)
	}
	onlySwitch(t, res.Switches, Switch{Site: "s", Time: day0.AddDate(0, 0, 2+9), Onset: day0.AddDate(0, 0, 2+9), From: 1, To: 2, Before: 9, After: 12})
	// The storm is reported: six of the nine sites of regime 1 looked
	// like regime 2 on days 9 and 10.
	wantShared := Shared{Start: day0.AddDate(0, 0, 2+9), End: day0.AddDate(0, 0, 2+11), Regime: 1, Like: 2,
		Sites: []string{"0", "1", "2", "3", "4", "5"}, Of: 9}
	if len(res.Shared) != 1 {
		t.Fatalf("shared %+v, want %+v", res.Shared, wantShared)
	}
	sh := res.Shared[0]
	if !(sh.P > 0 && sh.P < calendarLevel) {
		t.Errorf("shared condition at chance level %g, want in (0, %g)", sh.P, calendarLevel)
	}
	sh.P = 0
	if !reflect.DeepEqual(sh, wantShared) {
		t.Errorf("shared %+v, want %+v", sh, wantShared)
	}
}

func TestBuildSharedChange(t *testing.T) {
	// Sites of regime 1 for 21 days, and four of regime 2. On day 14,
	// sixteen sites of regime 1 change to regime 3 together and keep it
	// (a firmware update). The change is reported on its day with its
	// sites, lasting to the last window. When every site of the regime
	// made it, the regime itself changed: no site switches. When four of
	// the regime's sites did not, the sixteen that did look unlike their
	// peers in part; their switches, if the evidence of the week after
	// the change carries them, are their own, on that day.
	for _, stayed := range []int{0, 4} {
		seqs := map[string][]int{}
		var pushed []string
		for i := range 16 + stayed {
			name := fmt.Sprintf("s%02d", i)
			r := slices.Repeat([]int{1}, 21)
			if i < 16 {
				copy(r[14:], slices.Repeat([]int{3}, 7))
				pushed = append(pushed, name)
			}
			seqs[name] = r
		}
		for i := range 4 {
			seqs[fmt.Sprintf("x%d", i)] = slices.Repeat([]int{2}, 21)
		}
		decoded := inputs(sitesOf(seqs))
		res, err := Build(testModel(), decoded, Config{})
		if err != nil {
			t.Fatal(err)
		}
		for _, sw := range res.Switches {
			if stayed == 0 || !slices.Contains(pushed, sw.Site) || sw.From != 1 || sw.To != 3 || !sw.Time.Equal(day0.AddDate(0, 0, 2+14)) {
				t.Errorf("%d sites stayed: switch %+v, want none but those of the change", stayed, sw)
			}
		}
		want := Shared{Start: day0.AddDate(0, 0, 2+14), Regime: 1, Like: 3, Sites: pushed, Of: 16 + stayed}
		if len(res.Shared) != 1 {
			t.Fatalf("%d sites stayed: shared %+v, want %+v", stayed, res.Shared, want)
		}
		got := res.Shared[0]
		got.P = 0
		if !reflect.DeepEqual(got, want) {
			t.Errorf("%d sites stayed: shared %+v, want %+v", stayed, got, want)
		}
	}
}

// The same change as TestBuildSharedChange into an area that is a phase
// (model.Phase) of a regime: into a phase of regime 1 itself it is no
// change of regime, and nothing is reported; into a phase of regime 2 it
// is reported as looking like regime 2, never by the phase's number.
func TestBuildSharedChangeIntoPhase(t *testing.T) {
	seqs := map[string][]int{}
	for i := range 16 {
		r := slices.Repeat([]int{1}, 21)
		copy(r[14:], slices.Repeat([]int{3}, 7))
		seqs[fmt.Sprintf("s%02d", i)] = r
	}
	for i := range 4 {
		seqs[fmt.Sprintf("x%d", i)] = slices.Repeat([]int{2}, 21)
	}
	for _, host := range []int{1, 2} {
		m := testModel()
		m.Phases = []model.Phase{{Of: host, Before: 3, Regime: m.Regimes[2]}}
		m.Regimes = m.Regimes[:2]
		m.Regimes[host-1].Units = []int{host - 1, 2}
		m.UnitRegime[2] = host
		res, err := Build(m, inputs(sitesOf(seqs)), Config{})
		if err != nil {
			t.Fatal(err)
		}
		for _, sh := range res.Shared {
			if sh.Like == 3 || sh.Like == sh.Regime {
				t.Errorf("phase of %d: shared %+v names the phase or its own regime", host, sh)
			}
		}
		if host == 1 && len(res.Shared) != 0 {
			t.Errorf("phase of 1: shared %+v, want none", res.Shared)
		}
		if host == 2 && (len(res.Shared) != 1 || res.Shared[0].Regime != 1 || res.Shared[0].Like != 2) {
			t.Errorf("phase of 2: shared %+v, want one change from regime 1 looking like 2", res.Shared)
		}
	}
}

// The mixture against the formula written out, for weights and costs
// where the sum can be taken directly.
func TestMixture(t *testing.T) {
	tests := []struct {
		costs, w []float64
		tau      float64
	}{
		{[]float64{1, 3}, []float64{0.5, 0.5}, 1},
		{[]float64{2, 2.5, 9}, []float64{0.25, 0.75, 0}, 2},
		{[]float64{4, 0.5}, []float64{0, 1}, 0.7},
	}
	for _, tc := range tests {
		var z float64
		for r, v := range tc.w {
			z += v * math.Exp(-tc.costs[r]/tc.tau)
		}
		want := -tc.tau * math.Log(z)
		if got := mixture(tc.costs, tc.w, tc.tau); math.Abs(got-want) > 1e-12 {
			t.Errorf("mixture(%v, %v, %g) = %g, want %g", tc.costs, tc.w, tc.tau, got, want)
		}
	}
	// Far costs: the direct sum underflows to 0, the mixture stays finite
	// (−τ·ln(½·e^(−1000) + ½·e^(−1001)) = 1000 − ln(½ + ½e^(−1))).
	got := mixture([]float64{1000, 1001}, []float64{0.5, 0.5}, 1)
	if want := 1000 - math.Log(0.5+0.5*math.Exp(-1)); math.Abs(got-want) > 1e-9 {
		t.Errorf("far costs: mixture %g, want %g", got, want)
	}
}

// A condition holds the switches of its sites from its regime into the one
// they looked like, from its start up to (not including) its end, or to
// the last window when it has none.
func TestSharedHolds(t *testing.T) {
	day := func(d int) time.Time { return day0.AddDate(0, 0, d) }
	ended := Shared{Start: day(2), End: day(5), Regime: 1, Like: 3, Sites: []string{"a", "c"}}
	open := ended
	open.End = time.Time{}
	tests := []struct {
		sh   Shared
		s    Switch
		want bool
	}{
		{ended, Switch{Site: "a", Time: day(2), From: 1, To: 3}, true},
		{ended, Switch{Site: "c", Time: day(4), From: 1, To: 3}, true},
		{ended, Switch{Site: "a", Time: day(5), From: 1, To: 3}, false}, // at its end
		{ended, Switch{Site: "a", Time: day(1), From: 1, To: 3}, false}, // before it
		{ended, Switch{Site: "b", Time: day(3), From: 1, To: 3}, false}, // not one of its sites
		{ended, Switch{Site: "a", Time: day(3), From: 3, To: 1}, false}, // the way back
		{ended, Switch{Site: "a", Time: day(3), From: 1, To: 2}, false}, // into another regime
		{open, Switch{Site: "a", Time: day(40), From: 1, To: 3}, true},
	}
	for _, tt := range tests {
		if got := tt.sh.Holds(tt.s); got != tt.want {
			t.Errorf("%+v holds %+v: %t, want %t", tt.sh, tt.s, got, tt.want)
		}
	}
}

func TestBuildSharedStormSwitch(t *testing.T) {
	// Ten sites of regime 1 and four of regime 3 for 20 days, in three
	// dimensions: regime 1 at the origin, 2 at (10, 0, 0), 3 at (0, 10, 0).
	// On days 10 and 11 a storm moves every window by (6, 0, 20), far off
	// every centroid: regime 1's windows are then nearest 2, a shared
	// condition, and regime 3's stay nearest 3. Site "s" changes from
	// regime 1 to 3 on day 10, the first storm day, and keeps it; its storm
	// windows, at (9, 7, 20), are nearer 2's centroid than 3's, but nearer
	// where regime 3's sites are that day than where regime 1's are. Read
	// against the fleet of its day (peer group analysis, Bolton and Hand
	// 2001) the switch is on day 10; read against the centroids alone,
	// where the storm is equally far from all, it was dated after the
	// storm, on day 12, out of the tolerance of a day.
	m := solidModel()
	storm := []float64{6, 0, 20}
	var ws []features.Window
	add := func(site string, d int, x []float64) { ws = append(ws, dayWindow(site, d, x)) }
	for d := range 20 {
		for i := range 14 {
			x := slices.Clone(m.Regimes[0].Centroid)
			if i >= 10 {
				x = slices.Clone(m.Regimes[2].Centroid)
			}
			// A small spread, so that the regimes' sites are not all
			// alike: ±0.5 in the first component.
			x[0] += float64(i%3-1) * 0.5
			if d == 10 || d == 11 {
				floats.Add(x, storm)
			}
			add(fmt.Sprintf("r%02d", i), d, x)
		}
		var x []float64
		switch {
		case d < 10:
			x = []float64{0, 0, 0}
		case d < 12:
			x = []float64{9, 7, 20}
		default:
			x = []float64{0, 10, 0}
		}
		add("s", d, x)
	}
	res, err := Build(m, ws, Config{})
	if err != nil {
		t.Fatal(err)
	}
	onlySwitch(t, res.Switches, Switch{Site: "s", Time: day0.AddDate(0, 0, 10), Onset: day0.AddDate(0, 0, 10), From: 1, To: 3, Before: 10, After: 10})
	if len(res.Shared) != 1 || res.Shared[0].Regime != 1 || res.Shared[0].Like != 2 {
		t.Errorf("shared %+v, want one condition of regime 1 like 2", res.Shared)
	}
}

// onlySwitch checks that switches is want alone, whatever its confidence.
func onlySwitch(t *testing.T, switches []Switch, want Switch) {
	t.Helper()
	if len(switches) != 1 {
		t.Fatalf("switches %+v, want only %+v", switches, want)
	}
	got := switches[0]
	got.Confidence = 0
	if got != want {
		t.Errorf("switch %+v, want %+v", got, want)
	}
}

// solidModel is testModel in three dimensions: regime 1 at the origin, 2
// at (10, 0, 0) and 3 at (0, 10, 0), with a switch cost of 1.
func solidModel() *model.Model {
	m := testModel()
	m.Map.Dim, m.Map.Codebook = 3, []float64{0, 0, 0, 10, 0, 0, 0, 10, 0}
	for i, c := range [][]float64{{0, 0, 0}, {10, 0, 0}, {0, 10, 0}} {
		m.Regimes[i].Centroid = c
	}
	return m
}

// dayWindow is site's familiar window on day d from day0, at x.
func dayWindow(site string, d int, x []float64) features.Window {
	start := day0.AddDate(0, 0, d)
	return features.Window{Site: site, Start: start, End: start.AddDate(0, 0, 1), Scaled: x, QE: 0.1}
}

func TestBuildPeersOfTheDay(t *testing.T) {
	// Six sites of regime 1 and four of regime 2 for 20 days. Over the
	// last three days a change of season moves every window by
	// (0, 0, 300), far along a direction in which no regime differs: every
	// window stays nearest its own regime, so no regime has a partner,
	// but a window at (10, 0, 300) is only 0.17 nearer regime 2's centroid
	// than regime 1's. Site "s" changes from regime 1 to 2 on day 17 and
	// keeps it. Against the centroids its last three windows favour
	// regime 2 by 0.5 in all, less than the switch cost of 1, and the
	// switch was lost; against where each regime's sites lie that day
	// (peer group analysis, Bolton and Hand 2001), they favour it by 10
	// each.
	m := solidModel()
	var ws []features.Window
	for d := range 20 {
		shift := 0.0
		if d >= 17 {
			shift = 300
		}
		for i := range 10 {
			x := slices.Clone(m.Regimes[min(i/6, 1)].Centroid)
			x[0] += float64(i%3-1) * 0.5
			x[2] += shift
			ws = append(ws, dayWindow(fmt.Sprintf("r%02d", i), d, x))
		}
		x := slices.Clone(m.Regimes[0].Centroid)
		if d >= 17 {
			x = slices.Clone(m.Regimes[1].Centroid)
		}
		x[2] += shift
		ws = append(ws, dayWindow("s", d, x))
	}
	res, err := Build(m, ws, Config{})
	if err != nil {
		t.Fatal(err)
	}
	onlySwitch(t, res.Switches, Switch{Site: "s", Time: day0.AddDate(0, 0, 17), Onset: day0.AddDate(0, 0, 17), From: 1, To: 2, Before: 17, After: 3})
	if len(res.Shared) != 0 {
		t.Errorf("shared %+v, want none: the season moved every regime alike", res.Shared)
	}
}
