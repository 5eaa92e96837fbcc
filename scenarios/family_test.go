package scenarios

import (
	"math"
	"slices"
	"testing"
	"time"
)

// The family's fleets as the package documentation describes them: default
// size, sampling step, channels and regimes.
var familyTable = []struct {
	name         string
	sites, weeks int
	step         time.Duration
	channels, k  int
}{
	{"ahus", 300, 5, 15 * time.Minute, 5, 3},
	{"blowers", 150, 6, 5 * time.Minute, 6, 7},
	{"boilers", 180, 5, 5 * time.Minute, 5, 3},
	{"chargers", 400, 4, 15 * time.Minute, 3, 4},
	{"coldrooms", 200, 4, 5 * time.Minute, 4, 4},
	{"compressors", 240, 6, 10 * time.Minute, 8, 8},
	{"datahalls", 50, 3, time.Minute, 5, 5},
	{"heatpumps", 300, 5, 10 * time.Minute, 5, 6},
	{"irrigation", 120, 10, 10 * time.Minute, 4, 4},
	{"masts", 80, 3, time.Minute, 4, 3},
	{"substations", 600, 3, 15 * time.Minute, 4, 2},
	{"tanks", 120, 4, 5 * time.Minute, 5, 1},
	{"turbines", 150, 8, 10 * time.Minute, 6, 3},
}

func TestFamilySpecs(t *testing.T) {
	var names []string
	for _, tt := range familyTable {
		names = append(names, tt.name)
		spec, err := DefaultSpec(tt.name)
		if err != nil {
			t.Fatal(err)
		}
		if spec.Sites != tt.sites || spec.Weeks != tt.weeks || spec.Seed != 1 {
			t.Errorf("%s: DefaultSpec %+v, want %d sites, %d weeks, seed 1", tt.name, spec, tt.sites, tt.weeks)
		}
		f := generateT(t, small(t, tt.name, 4, 1))
		if f.Step != tt.step || len(f.Channels) != tt.channels || len(f.Regimes) != tt.k {
			t.Errorf("%s: step %v, %d channels, %d regimes; want %v, %d, %d", tt.name, f.Step, len(f.Channels), len(f.Regimes), tt.step, tt.channels, tt.k)
		}
		// Rows follow each other at the step (a whole number of steps
		// across a gap), give or take the clock jitter of both.
		jitter := 2 * time.Duration(defaultRates(f.Step).jitter) * time.Second
		for _, s := range f.Sites {
			ts := s.Readings.Times
			for i := 1; i < len(ts); i++ {
				d := time.Duration(ts[i] - ts[i-1])
				if d == 0 {
					continue // a duplicate
				}
				steps := (d + f.Step/2) / f.Step
				if steps < 1 || (d-steps*f.Step).Abs() > jitter {
					t.Fatalf("%s: %s: rows %d and %d are %v apart, step %v", tt.name, s.ID, i-1, i, d, f.Step)
				}
			}
		}
	}
	if got := Family(); !slices.Equal(got, names) {
		t.Errorf("Family() = %v, want %v", got, names)
	}
}

// TestFamilyRareRegimes checks that the rare regimes hold 3 to 5 % of the
// windows in both draws of their fleets, and that the homogeneous fleet has
// one regime and no switch.
func TestFamilyRareRegimes(t *testing.T) {
	rare := []struct{ fleet, regime string }{
		{"coldrooms", "stuck-probe"},
		{"coldrooms", "iced-evaporator"},
		{"masts", "iced-anemometer"},
		{"datahalls", "stuck-humidity"},
		{"blowers", "fouled-oxygen-probe"},
	}
	for _, seed := range []int64{1, SecondSeed} {
		for _, rr := range rare {
			spec, _ := DefaultSpec(rr.fleet)
			spec.Seed = seed
			f := generateT(t, spec)
			r := slices.Index(f.Regimes, rr.regime)
			if r < 0 {
				t.Fatalf("%s: no regime %s", rr.fleet, rr.regime)
			}
			n, all := 0, 0
			for _, s := range f.Sites {
				for _, g := range s.Regimes {
					all++
					if g == r {
						n++
					}
				}
			}
			if share := float64(n) / float64(all); share < 0.03 || share > 0.05 {
				t.Errorf("%s seed %d: %s holds %.4f of the windows, want 0.03 to 0.05", rr.fleet, seed, rr.regime, share)
			}
		}
		spec, _ := DefaultSpec("tanks")
		spec.Seed = seed
		if f := generateT(t, spec); len(f.Regimes) != 1 || len(f.Switches()) != 0 {
			t.Errorf("tanks seed %d: %d regimes, %d switches; want 1 and none", seed, len(f.Regimes), len(f.Switches()))
		}
	}
}

// TestFamilyOnsets checks the onsets of switches: at the window boundary
// in fleets that switch at midnight, less than 12 hours off it (and not
// always on it) in those that switch during the day, so that each window
// is labelled with the regime that held for most of it.
func TestFamilyOnsets(t *testing.T) {
	for _, name := range Family() {
		sc, _ := lookup(name)
		sites := 40
		if sc.midday > 0 {
			sites = 150
		}
		f := generateT(t, small(t, name, sites, 2))
		off := 0
		for _, sw := range f.Switches() {
			d := sw.Onset.Sub(sw.Time)
			if d != 0 {
				off++
			}
			if d.Abs() >= 12*time.Hour || (sc.midday == 0 && d != 0) || d%f.Step != 0 {
				t.Errorf("%s: %s: onset %v off the window boundary", name, sw.Site, d)
			}
		}
		if sc.midday > 0 && off == 0 {
			t.Errorf("%s: no switch during the day", name)
		}
	}
}

// TestFamilyStuckSensors checks that a stuck sensor repeats one value
// through every whole window of its regime, and only there.
func TestFamilyStuckSensors(t *testing.T) {
	for _, name := range Family() {
		sc, _ := lookup(name)
		f := generateT(t, small(t, name, 60, 2))
		start := f.Spec.Start.UnixNano()
		for _, s := range f.Sites {
			values := make(map[int][]float64) // by window, the stuck channel's values
			for i, tm := range s.Readings.Times {
				w := int((tm - start) / int64(f.Window))
				if ch := sc.frozen[s.Regimes[w]]; ch >= 0 {
					if v := s.Readings.Values[ch][i]; !math.IsNaN(v) {
						values[w] = append(values[w], v)
					}
				}
			}
			for w, vs := range values {
				if len(vs) > 1 && slices.Min(vs) != slices.Max(vs) {
					near := slices.ContainsFunc(s.Switches, func(sw Switch) bool { return sw.Window == w })
					if !near || sc.midday == 0 {
						t.Errorf("%s: %s: stuck channel varies in window %d: %v to %v", name, s.ID, w, slices.Min(vs), slices.Max(vs))
					}
				}
			}
		}
	}
}

// TestRegimeAt checks when the plant changes at a switch during the day:
// at its onset for a step, and over a ramp centred on the onset, which is
// halfway.
func TestRegimeAt(t *testing.T) {
	day := time.Date(2026, 6, 6, 0, 0, 0, 0, time.UTC)
	onset := day.Add(8 * time.Hour)
	site := &Site{
		Regimes:  []int{0, 0, 0, 0, 0, 1, 1, 1},
		Switches: []Switch{{Time: day, Onset: onset, Window: 5, From: 0, To: 1}},
	}
	tests := []struct {
		ramp      time.Duration
		at        time.Time
		from, to  int
		share     float64
		fromOnset bool // the regime's onset is the switch's
	}{
		{0, onset.Add(-time.Minute), 0, 0, 0, false},
		{0, onset, 1, 1, 0, true},
		{12 * time.Hour, onset.Add(-6 * time.Hour), 0, 0, 0, false},
		{12 * time.Hour, onset.Add(-3 * time.Hour), 0, 1, 0.25, false},
		{12 * time.Hour, onset, 0, 1, 0.5, true},
		{12 * time.Hour, onset.Add(3 * time.Hour), 0, 1, 0.75, true},
		{12 * time.Hour, onset.Add(6 * time.Hour), 1, 1, 0, true},
	}
	for _, tt := range tests {
		u := &unit{model: &plantModel{ramp: tt.ramp}}
		from, to, share, got := u.regimeAt(tt.at, site)
		if from != tt.from || to != tt.to || math.Abs(share-tt.share) > 1e-12 || got.Equal(onset) != tt.fromOnset {
			t.Errorf("ramp %v, at %v: regimeAt = %d, %d, %g, %v; want %d, %d, %g (onset %v)",
				tt.ramp, tt.at.Sub(onset), from, to, share, got, tt.from, tt.to, tt.share, tt.fromOnset)
		}
	}
}
