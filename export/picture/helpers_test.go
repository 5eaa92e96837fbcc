package picture

import (
	"fmt"
	"math"
	"math/rand/v2"
	"time"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/lattice"
	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/model"
	"github.com/kinmap/kinmap/timeline"
)

// demoFeatures are the feature names of the demonstration fleet.
var demoFeatures = []string{"flow.mean", "flow.p95", "pressure.mean", "pressure.std",
	"vibration.rms", "vibration.p95", "temp.mean", "power.mean", "duty.cycle"}

// demoInput builds a demonstration run by hand: a map whose codebook is a
// smooth field over the lattice, regimes grown around k seed units, windows
// landing unevenly on the units, and a fleet of sites spread along a river
// basin around latitude 48°N, a few of which switch regime.
func demoInput(l lattice.Lattice, k, sites int) Input {
	rng := rand.New(rand.NewPCG(7, 11))
	n, dim := l.Units(), len(demoFeatures)
	seeds := make([]int, k)
	centre := make([][]float64, k)
	for i := range seeds {
		seeds[i] = (i*n)/k + rng.IntN(max(1, n/k))
		centre[i] = make([]float64, dim)
		for j := range centre[i] {
			centre[i][j] = 2.5 * rng.NormFloat64()
		}
	}
	m := &model.Model{
		FeatureNames: demoFeatures,
		Scaler:       &features.Scaler{Method: "zscore", Names: demoFeatures},
		Map:          mapper.Map{Lattice: l, Dim: dim, Codebook: make([]float64, n*dim)},
		UnitRegime:   make([]int, n),
	}
	for u := range n {
		best, bestD := 0, math.Inf(1)
		var wsum float64
		v := m.Map.Vector(u)
		for i, s := range seeds {
			d := l.Dist(u, s)
			if d < bestD {
				best, bestD = i, d
			}
			w := math.Exp(-d * d / 18)
			wsum += w
			for j := range v {
				v[j] += w * centre[i][j]
			}
		}
		for j := range v {
			v[j] = v[j]/wsum + 0.15*rng.NormFloat64()
		}
		m.UnitRegime[u] = best + 1
	}
	for i := range k {
		r := mapper.Regime{ID: i + 1}
		for u, id := range m.UnitRegime {
			if id == i+1 {
				r.Units = append(r.Units, u)
			}
		}
		a, b := (i*2)%dim, (i*2+3)%dim
		r.Description = fmt.Sprintf("%s %+.1fσ, %s %+.1fσ", demoFeatures[a], centre[i][a], demoFeatures[b], centre[i][b])
		m.Regimes = append(m.Regimes, r)
	}
	m.Regimes[0].Description += ", temp.mean −0.4σ, power.mean +0.3σ"

	in := Input{Model: m}
	var units []int // where the windows land, in turn
	var near []int  // the regime seed each of units crowds near
	for range 12 * n {
		// Windows crowd near the regime seeds, leaving some units unused.
		s := seeds[rng.IntN(k)]
		u := s
		for range rng.IntN(9) {
			if nb := l.Neighbours(u); len(nb) > 0 {
				u = nb[rng.IntN(len(nb))]
			}
		}
		units = append(units, u)
		near = append(near, s)
	}
	// Two labels of events, each marking the windows of the units near
	// one regime seed.
	in.Conditions = &model.Conditions{Labels: []string{"bearing failure", "overhaul"}, Counts: make([][]int, l.Units())}
	for u := range in.Conditions.Counts {
		in.Conditions.Counts[u] = []int{0, 0, 1}
	}
	for j, u := range units {
		switch {
		case near[j] == seeds[0]:
			in.Conditions.Counts[u][0]++
		case k > 1 && near[j] == seeds[1] && rng.IntN(2) == 0:
			in.Conditions.Counts[u][1]++
		}
	}

	start := time.Date(2024, 3, 4, 0, 0, 0, 0, time.UTC)
	const days = 70
	for i := range sites {
		lon, lat := riverSite(rng)
		id := fmt.Sprintf("PS-%03d", i+1)
		regime := 1 + rng.IntN(k)
		sp := SitePoint{ID: id, Lon: lon, Lat: lat, Located: i%50 != 49}
		switchAt := -1
		to := regime
		if i%23 == 5 && k > 1 {
			switchAt = 10 + rng.IntN(days-20)
			to = 1 + (regime+rng.IntN(k-1))%k
		}
		for d := range days {
			if d%17 == 16 && i%4 == 0 {
				continue // a gap in the data
			}
			r := regime
			if switchAt >= 0 && d >= switchAt {
				r = to
			}
			in.Windows = append(in.Windows, features.Window{Site: id, Start: start.AddDate(0, 0, d), End: start.AddDate(0, 0, d+1),
				Unit: units[len(in.Windows)%len(units)], Regime: r})
		}
		sp.Regime = to
		if switchAt >= 0 {
			in.Switches = append(in.Switches, timeline.Switch{Site: id, Time: start.AddDate(0, 0, switchAt),
				From: regime, To: to, Before: switchAt, After: days - switchAt, Confidence: 0.9})
		}
		in.Sites = append(in.Sites, sp)
	}
	return in
}

// riverSite places a site along a river basin: a main stem meandering
// east-north-east from 8.6°E 47.7°N, or one of six tributaries that join it
// from the north and the south.
func riverSite(rng *rand.Rand) (lon, lat float64) {
	stem := func(t float64) (float64, float64) {
		return 8.6 + 4.8*t, 47.7 + 0.8*t + 0.12*math.Sin(9*t)
	}
	t := rng.Float64()
	if k := rng.IntN(10); k < 6 {
		// Tributary k joins at a fixed point of the stem and rises away from it.
		at := (float64(k) + 0.6) / 6.3
		lon, lat = stem(at)
		side := float64(k%2*2 - 1)
		reach := 0.35 + 0.1*float64(k%3)
		lon -= 0.35 * reach * t
		lat += side * reach * t
	} else {
		lon, lat = stem(t)
	}
	return lon + 0.025*rng.NormFloat64(), lat + 0.02*rng.NormFloat64()
}
