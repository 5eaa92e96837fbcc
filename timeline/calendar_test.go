package timeline

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
	"time"

	"github.com/kinmap/kinmap/features"
)

// The local weekday and wall-clock time of each instant were read with GNU
// date (TZ=Europe/Vienna date -d @SECONDS); Europe/Vienna changed to
// summer time on Sunday 29 March 2026 at 02:00.
func TestWeekPhase(t *testing.T) {
	vienna, err := time.LoadLocation("Europe/Vienna")
	if err != nil {
		t.Skipf("no time zone database: %v", err)
	}
	const day = 86400
	tests := []struct {
		at    time.Time
		loc   *time.Location
		phase int64
	}{
		{time.Date(2025, 3, 1, 0, 0, 0, 0, time.UTC), time.UTC, 5 * day},                              // a Saturday
		{time.Date(2026, 12, 5, 13, 30, 0, 0, time.UTC), time.UTC, 5*day + 13*3600 + 30*60},           // a Saturday
		{time.Date(2026, 3, 28, 23, 0, 0, 0, time.UTC), vienna, 6 * day},                              // Sunday 00:00 +0100
		{time.Date(2026, 3, 29, 22, 0, 0, 0, time.UTC), vienna, 0},                                    // Monday 00:00 +0200
		{time.Date(2026, 3, 29, 22, 0, 0, 0, time.UTC), time.UTC, 6*day + 22*3600},                    // Sunday 22:00 UTC
		{time.Date(2026, 3, 29, 22, 0, 0, 0, time.UTC).Add(-24 * time.Hour), vienna, 5*day + 23*3600}, // Saturday 23:00 +0100
	}
	for _, tc := range tests {
		if _, got := weekPhase(tc.at, tc.loc); got != tc.phase {
			t.Errorf("weekPhase(%s in %s) = %d s, want %d s", tc.at.Format(time.RFC3339), tc.loc, got, tc.phase)
		}
	}
	// The two local midnights either side of the change are one week
	// apart in the week numbering, though only 167 hours apart.
	w1, _ := weekPhase(time.Date(2026, 3, 22, 23, 0, 0, 0, time.UTC), vienna) // Monday 23 March 00:00 +0100
	w2, _ := weekPhase(time.Date(2026, 3, 29, 22, 0, 0, 0, time.UTC), vienna) // Monday 30 March 00:00 +0200
	if w2-w1 != 7 {
		t.Errorf("weeks of two consecutive local Mondays differ by %d days, want 7", w2-w1)
	}
}

// officeWeek is one site-week of an office-like site starting on a Monday:
// five days at regime a, the weekend at regime b (regimes of testModel).
func officeWeek(a, b int) []int { return []int{a, a, a, a, a, b, b} }

// sitesOf lays out the regime sequences of sites as daily windows from
// Monday 3 March 2025 on.
func sitesOf(seqs map[string][]int) []window {
	var ws []window
	names := make([]string, 0, len(seqs))
	for s := range seqs {
		names = append(names, s)
	}
	slices.Sort(names)
	for _, s := range names {
		for d, r := range seqs[s] {
			ws = append(ws, window{site: s, day: 2 + d, x: centre[r][0], y: centre[r][1], qe: 0.1})
		}
	}
	return ws
}

func TestBuildWeeklyCalendar(t *testing.T) {
	office := slices.Concat(officeWeek(1, 2), officeWeek(1, 2), officeWeek(1, 2), officeWeek(1, 2))
	home := slices.Repeat([]int{2}, 28)
	t.Run("a weekly cycle is part of the regime", func(t *testing.T) {
		seqs := map[string][]int{"o1": office, "o2": office, "o3": office, "h1": home, "h2": home}
		decoded := inputs(sitesOf(seqs))
		switches, err := switchesOf(Build(testModel(), decoded, Config{}))
		if err != nil {
			t.Fatal(err)
		}
		if len(switches) != 0 {
			t.Errorf("%d switches, want none: %v", len(switches), switches)
		}
		for s, want := range map[string]int{"o1": 1, "o2": 1, "o3": 1, "h1": 2, "h2": 2} {
			if got := regimesOf(decoded, s); slices.ContainsFunc(got, func(r int) bool { return r != want }) {
				t.Errorf("site %s: regimes %v, want %d throughout", s, got, want)
			}
		}
	})
	t.Run("one week is no cycle", func(t *testing.T) {
		seqs := map[string][]int{"o1": officeWeek(1, 2), "o2": officeWeek(1, 2), "h1": home[:7]}
		decoded := inputs(sitesOf(seqs))
		switches, err := switchesOf(Build(testModel(), decoded, Config{}))
		if err != nil {
			t.Fatal(err)
		}
		if got, want := regimesOf(decoded, "o1"), officeWeek(1, 2); !slices.Equal(got, want) {
			t.Errorf("site o1: regimes %v, want %v", got, want)
		}
		if len(switches) != 2 {
			t.Errorf("%d switches, want one at each office's weekend", len(switches))
		}
	})
	t.Run("switches on Saturdays are no cycle", func(t *testing.T) {
		// Each site changes once, on the Saturday of another week; most
		// of regime 1's weeks keep it on Saturdays.
		seqs := map[string][]int{}
		for i, name := range []string{"s0", "s1", "s2", "s3"} {
			seqs[name] = slices.Concat(slices.Repeat([]int{1}, 7*i+5), slices.Repeat([]int{3}, 28-7*i-5))
		}
		for _, name := range []string{"k0", "k1", "k2", "k3"} {
			seqs[name] = slices.Repeat([]int{1}, 28)
		}
		decoded := inputs(sitesOf(seqs))
		switches, err := switchesOf(Build(testModel(), decoded, Config{}))
		if err != nil {
			t.Fatal(err)
		}
		var got []time.Time
		for _, sw := range switches {
			got = append(got, sw.Time)
		}
		var want []time.Time
		for i := range 4 {
			want = append(want, day0.AddDate(0, 0, 2+7*i+5))
		}
		if !slices.Equal(got, want) {
			t.Errorf("switches at %v, want %v", got, want)
		}
	})
}

// A time zone the database lacks is an error naming it.
func TestBuildUnknownZone(t *testing.T) {
	m := testModel()
	m.FeatureConfig = features.Config{TZ: "Nowhere/Atlantis"}
	if _, err := Build(m, inputs(series("a", 1, 1, 2, 2)), Config{}); err == nil {
		t.Error("Build accepted an unknown time zone")
	}
}

// Build with a calendar minimises the objective of its documentation, with
// the cost of regime a at a time of the week taken from a's partner there:
// checked against an exhaustive search over every regime sequence of a
// probe site that obeys the minimum dwell. The offices make regime 1's
// partner at the weekend regime 2.
func TestBuildCalendarBruteForce(t *testing.T) {
	for seed := range uint64(5) {
		office := slices.Concat(officeWeek(1, 2), officeWeek(1, 2), officeWeek(1, 2), officeWeek(1, 2))
		ws := sitesOf(map[string][]int{"o1": office, "o2": office, "o3": office, "o4": office})
		rng := rand.New(rand.NewPCG(seed, 2))
		// An office-like probe from Monday, one weekend (days 5 and 6), that
		// may move to regime 3 at the end; the noise leaves every choice open.
		const T = 10
		probe := make([][2]float64, T)
		for d, r := range []int{1, 1, 1, 1, 1, 2, 2, 1, 3, 3} {
			probe[d] = [2]float64{centre[r][0] + 3*rng.NormFloat64(), centre[r][1] + 3*rng.NormFloat64()}
			ws = append(ws, window{site: "p", day: 2 + d, x: probe[d][0], y: probe[d][1], qe: 0.1})
		}
		decoded := inputs(ws)
		_, err := Build(testModel(), decoded, Config{})
		if err != nil {
			t.Fatal(err)
		}
		got := regimesOf(decoded, "p")

		const switchCost, dwell = 1, 2 // testModel's automatic cost; the default dwell
		objective := func(path []int) float64 {
			var c float64
			for d, r := range path {
				weekend := d%7 == 5 || d%7 == 6
				if r == 1 && weekend {
					r = 2
				}
				c += math.Hypot(probe[d][0]-centre[r][0], probe[d][1]-centre[r][1])
				if d > 0 && path[d] != path[d-1] {
					c += switchCost
				}
			}
			return c
		}
		obeys := func(path []int) bool {
			run := 1
			for d := 1; d <= len(path); d++ {
				if d < len(path) && path[d] == path[d-1] {
					run++
					continue
				}
				if run < dwell && run < len(path) {
					return false
				}
				run = 1
			}
			return true
		}
		var best []int
		bestCost := math.Inf(1)
		path := make([]int, T)
		for code := range int(math.Pow(3, T)) {
			for d, c := 0, code; d < T; d, c = d+1, c/3 {
				path[d] = 1 + c%3
			}
			if c := objective(path); obeys(path) && c < bestCost {
				best, bestCost = slices.Clone(path), c
			}
		}
		if !slices.Equal(got, best) {
			t.Errorf("seed %d: probe decoded to %v (objective %.4f), exhaustive search finds %v (%.4f)", seed, got, objective(got), best, bestCost)
		}
	}
}

// TestChanceTail checks the binomial tail of the test of partners against
// scipy's binomial survival function, binom.sf(k−1, n, p), computed once
// with Debian's scipy 1.10.1 (/usr/bin/python3 -c "from scipy.stats import
// binom; print(repr(binom.sf(k-1, n, p)))"), down to values far below the
// 10⁻¹⁶ at which 1 − CDF stops.
func TestChanceTail(t *testing.T) {
	tests := []struct {
		row, total []int // counts of regimes 0 and 1 at one time, and over all times
		want       float64
	}{
		// n = 98 windows at the time, k of them in regime 1; elsewhere 2
		// of 148 windows in regime 1, a rate of (2+1)/(148+2) = 0.02.
		{[]int{88, 10}, []int{234, 12}, 2.8870824969360623e-05},
		{[]int{68, 30}, []int{214, 32}, 4.077282214901112e-27},
		{[]int{38, 60}, []int{184, 62}, 1.1738630734058997e-75},
		{[]int{1, 97}, []int{147, 99}, 1.5221314582240493e-163},
		{[]int{98, 0}, []int{244, 2}, 1}, // k = 0: certain
	}
	for _, tc := range tests {
		got := chance(tc.row, tc.total, 1)
		if math.Abs(got-tc.want) > 1e-9*tc.want {
			t.Errorf("chance(%v, %v) = %g, want %g (scipy)", tc.row, tc.total, got, tc.want)
		}
	}
}
