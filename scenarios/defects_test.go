package scenarios

import (
	"math"
	"slices"
	"testing"
	"time"
)

// checkRate fails when count is not a plausible outcome of n independent
// trials with probability p: more than 4.5 standard deviations of the
// binomial distribution away from n·p (common practice, no source).
func checkRate(t *testing.T, what string, count, n int64, p float64) {
	t.Helper()
	mean := float64(n) * p
	sd := math.Sqrt(float64(n) * p * (1 - p))
	if math.Abs(float64(count)-mean) > 4.5*sd+1 {
		t.Errorf("%s: %d in %d, want about %.0f (rate %g)", what, count, n, mean, p)
	} else {
		t.Logf("%s: %d in %d, expected %.0f", what, count, n, mean)
	}
}

// TestDefectRates measures the defects in the readings themselves and
// checks them against the documented rates and against Fleet.Defects.
// Channels a site lacks altogether (missing sensors) are counted apart.
func TestDefectRates(t *testing.T) {
	for _, tt := range []struct {
		name         string
		sites, weeks int
		absent       float64 // share of sites lacking a sensor
	}{
		{"pumping", 100, 2, 0},
		{"reefers", 60, 2, 0},
		{"masts", 60, 1, 0},        // every minute
		{"tanks", 100, 2, 0.03},    // every 5 minutes
		{"substations", 150, 2, 0}, // every 15 minutes
		{"compressors", 100, 2, 0.03},
	} {
		t.Run(tt.name, func(t *testing.T) {
			spec := small(t, tt.name, tt.sites, tt.weeks)
			f := generateT(t, spec)
			rates := defaultRates(f.Step)
			d := f.Defects
			start := spec.Start.UnixNano()
			stepNs, jitter := int64(f.Step), int64(rates.jitter)*int64(time.Second)

			var rows, sent, dups, offGrid, values, missing, noFix int64
			absent := 0
			for _, s := range f.Sites {
				r := s.Readings
				lacks := -1
				for ch, v := range r.Values {
					if !slices.ContainsFunc(v, func(x float64) bool { return !math.IsNaN(x) }) {
						lacks = ch
						absent++
					}
				}
				for i, tm := range r.Times {
					rows++
					if i > 0 && tm == r.Times[i-1] {
						dups++
						for ch := range r.Values {
							a, b := r.Values[ch][i], r.Values[ch][i-1]
							if a != b && !(math.IsNaN(a) && math.IsNaN(b)) {
								t.Fatalf("%s: duplicate row %d differs", s.ID, i)
							}
						}
						continue
					}
					sent++
					slot := (tm - start + stepNs/2) / stepNs
					off := tm - start - slot*stepNs
					if off < -jitter || off > jitter {
						t.Fatalf("%s: row %d is %v off its slot", s.ID, i, time.Duration(off))
					}
					if (tm-start)/int64(window) != slot/int64(f.Window/f.Step) {
						t.Fatalf("%s: row %d jittered out of its window", s.ID, i)
					}
					if off != 0 {
						offGrid++
					}
					for ch := range r.Values {
						if ch == lacks {
							continue
						}
						values++
						if math.IsNaN(r.Values[ch][i]) {
							missing++
						}
					}
					if f.Mobile && math.IsNaN(r.Lat[i]) {
						noFix++
					}
				}
			}
			if dups != d.Duplicates || offGrid != d.Jittered || missing != d.Missing || noFix != d.NoFix {
				t.Errorf("counted %d duplicates, %d off the grid, %d missing, %d without fix; Defects says %+v",
					dups, offGrid, missing, noFix, d)
			}
			if want := int(math.Round(tt.absent * float64(spec.Sites))); absent != want || d.Absent != want {
				t.Errorf("%d sites lack a sensor, Defects says %d, want %d", absent, d.Absent, want)
			}
			if lost := d.Slots - sent; lost != d.LostRows+d.GapRows+d.OutageRows {
				t.Errorf("%d slots without a row; Defects says %d lost, %d in gaps, %d in outages",
					lost, d.LostRows, d.GapRows, d.OutageRows)
			}
			// Jitter is uniform over 2·jitter+1 whole seconds; folding the
			// negative ones at a midnight keeps the share off the grid.
			checkRate(t, "off the grid", offGrid, sent, float64(2*rates.jitter)/float64(2*rates.jitter+1))
			checkRate(t, "duplicates", dups, sent, rates.duplicate)
			checkRate(t, "missing values", missing, values, rates.missing)
			checkRate(t, "lost rows", d.LostRows, d.Slots-d.GapRows-d.OutageRows, rates.lostRow)
			checkRate(t, "gaps", int64(d.Gaps), int64(spec.Sites*f.Windows()), rates.gapPerDay)
			if f.Mobile {
				checkRate(t, "rows without fix", noFix, sent, rates.noFix)
			}
			if want := int(math.Round(rates.outageShare * float64(spec.Sites))); d.Outages != want {
				t.Errorf("%d outages, want %d", d.Outages, want)
			}
			perGap := float64(d.GapRows) / float64(d.Gaps)
			perOutage := float64(d.OutageRows) / float64(d.Outages)
			if perGap < float64(rates.gapMin)/2 || perGap > float64(rates.gapMax) ||
				perOutage < float64(rates.outageMin) || perOutage > float64(rates.outageMax) {
				t.Errorf("%.1f slots per gap, %.1f per outage", perGap, perOutage)
			}
			checkCoverage(t, f)
		})
	}
}

// checkCoverage checks that defects leave few windows below 60 % coverage,
// the analysis' default minimum, and none next to a switch.
func checkCoverage(t *testing.T, f *Fleet) {
	t.Helper()
	poor, all := 0, 0
	for _, s := range f.Sites {
		cov := f.coverage(s)
		for _, c := range cov {
			all++
			if c < 0.6 {
				poor++
			}
		}
		for _, sw := range s.Switches {
			for w := sw.Window - minDwell; w < sw.Window+minDwell; w++ {
				if cov[w] < 0.6 {
					t.Errorf("%s: window %d next to a switch has coverage %.2f", s.ID, w, cov[w])
				}
			}
		}
	}
	if share := float64(poor) / float64(all); share > 0.02 {
		t.Errorf("%d of %d windows below 60 %% coverage", poor, all)
	}
}

// TestSpikes compares a fleet with the same fleet generated without spikes:
// the values that differ are the spikes.
func TestSpikes(t *testing.T) {
	for _, name := range Names() {
		spec := small(t, name, 60, 2)
		rates := defaultRates(10 * time.Minute)
		with, err := generate(spec, rates)
		if err != nil {
			t.Fatal(err)
		}
		rates.spike = 0
		without, err := generate(spec, rates)
		if err != nil {
			t.Fatal(err)
		}
		sc, _ := lookup(name)
		var spikes, eligible int64
		for i, s := range with.Sites {
			a, b := s.Readings, without.Sites[i].Readings
			if a.Len() != b.Len() {
				t.Fatalf("%s: %s: spikes changed the rows", name, s.ID)
			}
			for ch, cs := range sc.channels {
				for k := range a.Times {
					x, y := a.Values[ch][k], b.Values[ch][k]
					frozen := sc.frozen[s.Regimes[(a.Times[k]-spec.Start.UnixNano())/int64(window)]] == ch
					if cs.spike > 0 && !frozen && !math.IsNaN(y) && (k == 0 || a.Times[k] != a.Times[k-1]) {
						eligible++
					}
					if x == y || (math.IsNaN(x) && math.IsNaN(y)) {
						continue
					}
					if k > 0 && a.Times[k] == a.Times[k-1] {
						continue // the copy of a spiked row
					}
					spikes++
					// A spike adds one to two spike sizes, rounded to the
					// channel's digits.
					if jump := x - y; cs.spike == 0 || frozen || jump < cs.spike-1e-6 || jump > 2*cs.spike+1e-6 {
						t.Errorf("%s: %s: %s jumps by %v", name, s.ID, cs.Name, jump)
					}
				}
			}
		}
		if spikes != with.Defects.Spikes {
			t.Errorf("%s: %d spikes found, Defects says %d", name, spikes, with.Defects.Spikes)
		}
		checkRate(t, name+": spikes", spikes, eligible, defaultRates(10*time.Minute).spike)
	}
}

// TestStuckSensorIsFlat checks that a stuck transmitter repeats one value.
func TestStuckSensorIsFlat(t *testing.T) {
	f := generateT(t, small(t, "pumping", 80, 1))
	start := f.Spec.Start.UnixNano()
	stuck := 0
	for _, s := range f.Sites {
		first := make(map[int]float64)
		for k, tm := range s.Readings.Times {
			w := int((tm - start) / int64(window))
			v := s.Readings.Values[pumpPressure][k]
			if s.Regimes[w] != pumpStuck || math.IsNaN(v) {
				continue
			}
			stuck++
			if v0, ok := first[w]; !ok {
				first[w] = v
			} else if v != v0 {
				t.Fatalf("%s: stuck pressure reads %v and %v in window %d", s.ID, v0, v, w)
			}
		}
	}
	if stuck == 0 {
		t.Error("no stuck-sensor readings")
	}
}
