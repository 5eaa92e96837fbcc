package scenarios

import (
	"fmt"
	"math"
	"math/rand/v2"
	"time"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/geo"
)

// Regimes of the pumping fleet.
const (
	pumpSteady = iota
	pumpCycling
	pumpStandby
	pumpDegrading
	pumpStuck
	pumpHighLoad
)

// Channels of the pumping fleet.
const (
	pumpFlow = iota
	pumpPressure
	pumpCurrent
	pumpVibration
	pumpBearing
)

func pumpingScenario() *scenario {
	return &scenario{
		name:  "pumping",
		sites: 300,
		weeks: 4,
		step:  10 * time.Minute,
		channels: []channelSpec{
			pumpFlow:      {Channel{"flow", "m³/h"}, 1, 300},
			pumpPressure:  {Channel{"pressure", "bar"}, 2, 3},
			pumpCurrent:   {Channel{"current", "A"}, 1, 80},
			pumpVibration: {Channel{"vibration", "mm/s"}, 2, 8},
			pumpBearing:   {Channel{"bearing_temp", "°C"}, 1, 40},
		},
		regimes: []string{
			pumpSteady:    "steady",
			pumpCycling:   "cycling",
			pumpStandby:   "standby",
			pumpDegrading: "degrading",
			pumpStuck:     "stuck-sensor",
			pumpHighLoad:  "high-load",
		},
		shares: []float64{
			pumpSteady:    0.34,
			pumpCycling:   0.24,
			pumpStandby:   0.12,
			pumpDegrading: 0.08,
			pumpStuck:     0.07,
			pumpHighLoad:  0.15,
		},
		next: [][]int{
			pumpSteady:    {pumpDegrading, pumpStuck, pumpStandby, pumpHighLoad},
			pumpCycling:   {pumpHighLoad, pumpSteady, pumpStandby},
			pumpStandby:   {pumpSteady, pumpCycling},
			pumpDegrading: {pumpStandby, pumpSteady},
			pumpStuck:     {pumpSteady},
			pumpHighLoad:  {pumpSteady, pumpDegrading, pumpCycling},
		},
		frozen:  []int{-1, -1, -1, -1, pumpPressure, -1},
		climate: climateSpec{mean: 16, trend: 0.1, swing: 5, weather: 2},
		model:   pumpModel{},
	}
}

// branch is one river branch of the basin.
type branch struct {
	name string
	line orb.LineString // from the confluence (or the mouth) upstream
	km   float64        // river kilometre of the confluence
}

// basin lays out the invented Ambrel basin: a main stem running west from
// its mouth and four tributaries. The layout is the same for every seed.
func basin() []branch {
	const basinSeed = 0x41_6d_62_72_65_6c
	rng := rand.New(rand.NewPCG(basinSeed, 0))
	walk := func(from orb.Point, heading, km float64) orb.LineString {
		const stepKm = 2.0
		line := orb.LineString{from}
		bearing := heading
		for range int(km / stepKm) {
			// Meanders around the general heading.
			bearing += 12*rng.NormFloat64() + 0.3*(heading-bearing)
			from = geo.PointAtBearingAndDistance(from, bearing, stepKm*1000)
			line = append(line, from)
		}
		return line
	}
	stem := walk(orb.Point{16.05, 47.93}, 272, 170)
	branches := []branch{{name: "Ambrel", line: stem}}
	tributaries := []struct {
		name        string
		at          float64 // share of the main stem's length
		heading, km float64
	}{
		{"Lisk", 0.18, 335, 70},
		{"Corran", 0.38, 205, 85},
		{"Wendle", 0.57, 320, 60},
		{"Oskeby Water", 0.76, 228, 55},
	}
	stemKm := geo.LengthHaversine(stem) / 1000
	for _, t := range tributaries {
		km := t.at * stemKm
		p, _ := geo.PointAtDistanceAlongLine(stem, km*1000)
		branches = append(branches, branch{name: t.name, line: walk(p, t.heading, t.km), km: km})
	}
	return branches
}

type pumpModel struct{}

func (pumpModel) place(n int, rng *rand.Rand) ([]Site, []simulator) {
	branches := basin()
	lengths := make([]float64, len(branches))
	for i, b := range branches {
		lengths[i] = geo.LengthHaversine(b.line)
	}
	kinds := []string{"Lift", "Booster", "Intake", "Transfer", "Relift"}
	// The invented pump types and their rated flows in m³/h.
	pumpModels := []struct {
		name  string
		rated float64
	}{
		{"AM-320", 320},
		{"AM-400", 400},
		{"AM-480", 480},
	}
	width := max(4, len(fmt.Sprint(n)))
	sites := make([]Site, n)
	sims := make([]simulator, n)
	for i := range n {
		bi := pick(lengths, rng)
		b := branches[bi]
		along := rng.Float64() * lengths[bi]
		p, bearing := geo.PointAtDistanceAlongLine(b.line, along)
		p = geo.PointAtBearingAndDistance(p, bearing+90, 500*rng.NormFloat64())
		km := b.km + along/1000
		elevation := 150 + 1.6*km + 15*rng.NormFloat64()
		m := pumpModels[rng.IntN(len(pumpModels))]

		s := &pumpSite{lon: p.Lon()}
		s.flow = m.rated * (1 + 0.04*rng.NormFloat64())
		s.head = 3.6 + 1.8*rng.Float64()
		s.static = s.head * (0.3 + 0.15*rng.Float64())
		s.current = ratedCurrent(s.flow, s.head)
		s.vibration = 1.2 + rng.Float64()
		s.rise = 26 * (1 + 0.06*rng.NormFloat64())
		s.room = 9 + rng.NormFloat64() - 0.0065*(elevation-150) // 6.5 K/km, as in the standard atmosphere
		s.exercise = 9 + 6*rng.Float64()
		s.exerciseLen = (40 + 10*rng.Float64()) / 60
		s.stuck = round(0.3+0.7*rng.Float64(), 2)
		s.wear = 4 * rng.Float64()
		sims[i] = s

		sites[i] = Site{
			ID:   fmt.Sprintf("PS-%0*d", width, i+1),
			Name: placeName(rng) + " " + kinds[rng.IntN(len(kinds))],
			Lat:  round(p.Lat(), 6),
			Lon:  round(p.Lon(), 6),
			Attrs: []Attr{
				{"branch", b.name},
				{"river_km", round(km, 1)},
				{"elevation_m", int64(math.Round(elevation))},
				{"pump_model", m.name},
				{"rated_flow_m3h", int64(m.rated)},
				{"commissioned", int64(1978 + rng.IntN(45))},
			},
		}
	}
	return sites, sims
}

// ratedCurrent is the motor current in A of a pump delivering flow m³/h
// against head bar, for a wire-to-water efficiency of 0.72 and a 400 V
// three-phase motor with a power factor of 0.86.
func ratedCurrent(flow, head float64) float64 {
	hydraulic := flow / 3600 * head * 1e5 // W
	return hydraulic / 0.72 / (math.Sqrt(3) * 400 * 0.86)
}

// pumpSite holds the parameters of one pumping station.
type pumpSite struct {
	lon         float64
	flow        float64 // near-rated flow, m³/h
	head        float64 // discharge pressure at rated flow, bar
	static      float64 // static head held when stopped, bar
	current     float64 // current at rated flow, A
	vibration   float64 // baseline vibration, mm/s
	rise        float64 // bearing temperature rise at rated load, °C
	room        float64 // pump-house temperature offset, °C
	exercise    float64 // local hour of the standby exercise run
	exerciseLen float64 // its length in hours
	stuck       float64 // value a stuck pressure transmitter repeats, bar
	wear        float64 // days of wear of a pump degrading from the start
}

func (p *pumpSite) simulate(g grid, site *Site, env *climate, rng *rand.Rand, c *clean) {
	regimes := site.Regimes
	start, stop := make([]float64, g.windows), make([]float64, g.windows)
	for d := range g.windows {
		start[d] = 5.5 + rng.Float64()
		stop[d] = 21.5 + rng.Float64()
	}
	heatLag := g.lag(100 * time.Minute)
	noise := 0.0
	heat := -1.0
	onset, wear0 := 0, p.wear
	for k := range g.slots() {
		w := k / g.per
		r := regimes[w]
		if k > 0 && r != regimes[(k-1)/g.per] {
			onset, wear0 = k, 0
		}
		h := g.hour(k, p.lon)
		noise = 0.9*noise + 0.01*rng.NormFloat64()
		load, wear := 0.0, 0.0
		switch r {
		case pumpSteady, pumpStuck:
			load = 0.95*(1+0.03*g.cycle(k, p.lon, 14)) + noise
		case pumpCycling:
			if h >= start[w] && h < stop[w] {
				load = 1 + 0.04*g.cycle(k, p.lon, 14) + noise
			}
		case pumpStandby:
			if h >= p.exercise && h < p.exercise+p.exerciseLen {
				load = 0.9 + noise
			}
		case pumpDegrading:
			wear = min(wear0+float64(k-onset)/float64(g.per), 20)
			load = (0.92-0.012*wear)*(1+0.03*g.cycle(k, p.lon, 14)) + noise
		case pumpHighLoad:
			load = 1.2*(1+0.1*g.cycle(k, p.lon, 19)) + noise
		}
		if heat < 0 {
			heat = load * load
		}
		heat += heatLag * (load*load - heat)

		draw, shake, warm := 1.0, 1.0, 1.0
		switch r {
		case pumpDegrading:
			draw, shake, warm = 1.06+0.004*wear, 2.2+0.1*wear, 1.25+0.01*wear
		case pumpHighLoad:
			shake = 1.25
		}
		room := 0.5*env.at(k, p.lon) + p.room
		var flow, pressure, current, vibration float64
		if load > 0 {
			flow = p.flow * load * (1 + 0.012*rng.NormFloat64())
			pressure = p.static + (p.head-p.static)*load*load*(1+0.01*rng.NormFloat64()) + 0.02*rng.NormFloat64()
			current = p.current * (0.25 + 0.75*load*load) * draw * (1 + 0.01*rng.NormFloat64())
			vibration = p.vibration * (0.7 + 0.3*load) * shake * (1 + 0.06*rng.NormFloat64())
		} else {
			pressure = p.static + 0.02*rng.NormFloat64()
			vibration = 0.05 + 0.02*math.Abs(rng.NormFloat64())
		}
		if r == pumpStuck {
			pressure = p.stuck
		}
		bearing := room + p.rise*heat*warm + 0.15*rng.NormFloat64()

		c.values[pumpFlow][k] = flow
		c.values[pumpPressure][k] = pressure
		c.values[pumpCurrent][k] = current
		c.values[pumpVibration][k] = vibration
		c.values[pumpBearing][k] = bearing
	}
}
