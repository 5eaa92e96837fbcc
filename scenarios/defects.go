package scenarios

import (
	"math"
	"math/rand/v2"
	"time"
)

// defectRates are the rates the package documentation promises.
type defectRates struct {
	jitter      int     // largest clock offset, seconds
	lostRow     float64 // per row
	gapPerDay   float64 // per site and day
	gapMin      int     // gap length in slots
	gapMax      int
	outageShare float64 // share of sites with one outage
	outageMin   int     // outage length in slots
	outageMax   int
	missing     float64 // per value
	spike       float64 // per value of a channel with spikes
	duplicate   float64 // per row
	noFix       float64 // per row of a mobile site
}

func defaultRates(step time.Duration) defectRates {
	slots := func(d time.Duration) int { return int(d / step) }
	return defectRates{
		jitter:      5,
		lostRow:     0.003,
		gapPerDay:   0.04,
		gapMin:      slots(time.Hour),
		gapMax:      slots(6 * time.Hour),
		outageShare: 0.05,
		outageMin:   slots(6 * time.Hour),
		outageMax:   slots(48 * time.Hour),
		missing:     0.002,
		spike:       0.0005,
		duplicate:   0.0005,
		noFix:       0.003,
	}
}

// Why a slot sent no row.
const (
	sent = iota
	lost
	inGap
	inOutage
)

// applyDefects turns one site's clean readings into the rows it sent.
// A channel the site lacks (absent ≥ 0) is missing from every row.
func applyDefects(g grid, c *clean, site Site, sc *scenario, rates defectRates, outage bool, absent int, seed int64, index int) (Readings, Defects) {
	slots := g.slots()
	d := Defects{Slots: int64(slots)}
	if absent >= 0 {
		d.Absent = 1
	}
	fate := make([]uint8, slots)

	timing := newRand(seed, timingStream, index)
	if outage {
		if a, b, ok := placeOutage(g, site.Switches, rates, timing); ok {
			for k := a; k < b; k++ {
				fate[k] = inOutage
			}
			d.Outages++
		}
	}
	for day := range g.windows {
		if timing.Float64() >= rates.gapPerDay {
			continue
		}
		a := day*g.per + timing.IntN(g.per)
		b := min(a+rates.gapMin+timing.IntN(rates.gapMax-rates.gapMin+1), slots)
		d.Gaps++
		for k := a; k < b; k++ {
			if fate[k] == sent {
				fate[k] = inGap
			}
		}
	}
	for k := range fate {
		if timing.Float64() < rates.lostRow && fate[k] == sent {
			fate[k] = lost
		}
	}

	missing := newRand(seed, missingStream, index)
	spikes := newRand(seed, spikeStream, index)
	dups := newRand(seed, duplicateStream, index)
	fixes := newRand(seed, fixStream, index)
	r := Readings{Values: make([][]float64, len(c.values))}
	rows := slots + slots/100
	r.Times = make([]int64, 0, rows)
	for ch := range r.Values {
		r.Values[ch] = make([]float64, 0, rows)
	}
	if c.lat != nil {
		r.Lat = make([]float64, 0, rows)
		r.Lon = make([]float64, 0, rows)
	}
	for k, f := range fate {
		switch f {
		case lost:
			d.LostRows++
			continue
		case inGap:
			d.GapRows++
			continue
		case inOutage:
			d.OutageRows++
			continue
		}
		off := timing.IntN(2*rates.jitter+1) - rates.jitter
		if k%g.per == 0 && off < 0 {
			off = -off // stay inside the window
		}
		if off != 0 {
			d.Jittered++
		}
		t := g.time(k) + int64(off)*int64(time.Second)
		regime := site.Regimes[k/g.per]
		for ch, cs := range sc.channels {
			v := round(c.values[ch][k], cs.digits)
			spike := spikes.Float64() < rates.spike
			switch {
			case ch == absent:
				v = math.NaN()
			case missing.Float64() < rates.missing:
				v = math.NaN()
				d.Missing++
			case spike && cs.spike > 0 && sc.frozen[regime] != ch:
				v = round(v+cs.spike*(1+spikes.Float64()), cs.digits)
				d.Spikes++
			}
			r.Values[ch] = append(r.Values[ch], v)
		}
		r.Times = append(r.Times, t)
		if c.lat != nil {
			lat, lon := c.lat[k], c.lon[k]
			if fixes.Float64() < rates.noFix {
				lat, lon = math.NaN(), math.NaN()
				d.NoFix++
			}
			r.Lat = append(r.Lat, lat)
			r.Lon = append(r.Lon, lon)
		}
		if dups.Float64() < rates.duplicate {
			r.repeatLast()
			d.Duplicates++
		}
	}
	return r, d
}

// repeatLast appends a copy of the last row.
func (r *Readings) repeatLast() {
	last := len(r.Times) - 1
	r.Times = append(r.Times, r.Times[last])
	for ch := range r.Values {
		r.Values[ch] = append(r.Values[ch], r.Values[ch][last])
	}
	if r.Lat != nil {
		r.Lat = append(r.Lat, r.Lat[last])
		r.Lon = append(r.Lon, r.Lon[last])
	}
}

// placeOutage draws an outage [a, b) of slots that keeps clear of the dwell
// windows around the site's switches. It gives up when none fits.
func placeOutage(g grid, switches []Switch, rates defectRates, rng *rand.Rand) (a, b int, ok bool) {
	slots := g.slots()
	n := rates.outageMin + rng.IntN(rates.outageMax-rates.outageMin+1)
	if n > slots {
		return 0, 0, false
	}
	for range 100 {
		a = rng.IntN(slots - n + 1)
		b = a + n
		clear := true
		for _, s := range switches {
			lo, hi := (s.Window-minDwell)*g.per, (s.Window+minDwell)*g.per
			if a < hi && lo < b {
				clear = false
				break
			}
		}
		if clear {
			return a, b, true
		}
	}
	return 0, 0, false
}

// round rounds v to the given number of decimal digits. Dividing by the
// power of ten gives the double nearest to the decimal, which formats back
// in the fewest digits.
func round(v float64, digits int) float64 {
	p := math.Pow10(digits)
	r := math.Round(v*p) / p
	if r == 0 {
		return 0 // not -0
	}
	return r
}
