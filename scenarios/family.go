package scenarios

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"time"
)

// Family returns the names of the evaluation family: the fleets beyond
// "pumping" and "reefers" that exist to check the analysis on plant it was
// not developed on, sorted.
func Family() []string {
	var names []string
	for _, s := range family() {
		names = append(names, s.name)
	}
	slices.Sort(names)
	return names
}

// SecondSeed is the seed of a family fleet's second draw: the same spec
// with this seed gives other sites, weather, regimes and switches.
const SecondSeed = 2

func family() []*scenario {
	return []*scenario{
		tanksScenario(), substationsScenario(), mastsScenario(), coldroomsScenario(),
		ahusScenario(), boilersScenario(), chargersScenario(), irrigationScenario(),
		datahallsScenario(), heatpumpsScenario(), blowersScenario(), turbinesScenario(),
		compressorsScenario(),
	}
}

// plantModel places and simulates the sites of a family fleet. The
// physics of each fleet is its signal; the model supplies what they share:
// placement, the site's own parameters, the calendar, the weather, the
// onset of each regime (during the day, or as a ramp) and stuck sensors.
type plantModel struct {
	prefix   string        // site ID prefix
	kind     string        // what a site is, for its name
	area     [4]float64    // south, west, north, east bounds of the sites, degrees
	ramp     time.Duration // a switch ramps over this long, centred on its onset; 0: a step
	holidays []int         // local days, counted from the start, on which the whole fleet rests
	frozen   []int         // channel each regime flat-lines, or -1
	channels int
	// signal computes one slot's clean values of every channel for regime r.
	signal func(u *unit, r int, m *moment, out []float64)
}

// unit is one site of a family fleet.
type unit struct {
	model *plantModel
	lon   float64
	p     [6]float64 // the site's own parameters, standard normal draws
	wear  float64    // days a site starting in a drifting regime has already drifted
	state [4]float64 // what a signal carries from slot to slot
}

// moment is what a signal needs to know about a slot.
type moment struct {
	g       grid
	k       int
	hour    float64 // local solar time, hours since midnight
	weekend bool    // local Saturday or Sunday
	holiday bool    // a fleet-wide holiday
	air     float64 // outside air, °C
	weather float64 // the day's weather: daily mean air less the season's, °C
	days    float64 // days since the regime began
	rng     *rand.Rand
}

// n returns a standard normal draw.
func (m *moment) n() float64 { return m.rng.NormFloat64() }

// between reports whether the local time is in [from, to) hours, wrapping
// around midnight when from > to.
func (m *moment) between(from, to float64) bool {
	if from <= to {
		return m.hour >= from && m.hour < to
	}
	return m.hour >= from || m.hour < to
}

// cycle is a cosine of the local time peaking at hour peak.
func (m *moment) cycle(peak float64) float64 {
	return math.Cos(2 * math.Pi * (m.hour - peak) / 24)
}

// duty runs an on/off cycle in state slot i: on for about on minutes, then
// off for about off minutes, each length drawn uniformly within ±60 % of
// its mean, and reports whether the cycle is on.
func (u *unit) duty(i int, m *moment, on, off float64) bool {
	st := &u.state[i]
	minutes := m.g.step.Minutes()
	switch {
	case *st > 0:
		*st = max(*st-minutes, 0)
		if *st == 0 {
			*st = -off * (0.4 + 1.2*m.rng.Float64())
		}
	case *st < 0:
		*st = min(*st+minutes, 0)
		if *st == 0 {
			*st = on * (0.4 + 1.2*m.rng.Float64())
		}
	default:
		*st = on * (0.4 + 1.2*m.rng.Float64())
	}
	return *st > 0
}

// follow moves state slot i towards target with time constant tau and
// returns the new value; the first call starts at target.
func (u *unit) follow(i int, m *moment, target float64, tau time.Duration) float64 {
	st := &u.state[i]
	if m.k == 0 {
		*st = target
	}
	*st += m.g.lag(tau) * (target - *st)
	return *st
}

func (pm *plantModel) place(n int, rng *rand.Rand) ([]Site, []simulator) {
	districts := []string{"North", "East", "South", "West", "Central"}
	width := max(4, len(fmt.Sprint(n)))
	sites := make([]Site, n)
	sims := make([]simulator, n)
	for i := range n {
		lat := pm.area[0] + (pm.area[2]-pm.area[0])*rng.Float64()
		lon := pm.area[1] + (pm.area[3]-pm.area[1])*rng.Float64()
		u := &unit{model: pm, lon: lon, wear: 10 * rng.Float64()}
		for j := range u.p {
			u.p[j] = rng.NormFloat64()
		}
		sims[i] = u
		sites[i] = Site{
			ID:   fmt.Sprintf("%s-%0*d", pm.prefix, width, i+1),
			Name: placeName(rng) + " " + pm.kind,
			Lat:  round(lat, 6),
			Lon:  round(lon, 6),
			Attrs: []Attr{
				{"district", districts[rng.IntN(len(districts))]},
				{"installed", int64(1995 + rng.IntN(30))},
			},
		}
	}
	return sites, sims
}

func (u *unit) simulate(g grid, site *Site, env *climate, rng *rand.Rand, c *clean) {
	pm := u.model
	out, next := make([]float64, pm.channels), make([]float64, pm.channels)
	stuck := math.NaN() // value a stuck channel repeats
	first := time.Unix(0, g.start).UTC().Weekday()
	for k := range g.slots() {
		t := time.Unix(0, g.time(k)).UTC()
		from, to, share, onset := u.regimeAt(t, site)
		local := float64(k)*g.step.Hours() + u.lon/15
		day := int(math.Floor(local / 24))
		weekday := (int(first) + day%7 + 7) % 7
		m := moment{
			g: g, k: k, hour: g.hour(k, u.lon),
			weekend: weekday == int(time.Saturday) || weekday == int(time.Sunday),
			holiday: slices.Contains(pm.holidays, day),
			air:     env.at(k, u.lon),
			weather: env.anomaly(k),
			rng:     rng,
		}
		if onset.IsZero() {
			m.days = u.wear + t.Sub(time.Unix(0, g.start)).Hours()/24
		} else {
			m.days = max(t.Sub(onset).Hours()/24, 0)
		}
		pm.signal(u, from, &m, out)
		if share > 0 {
			pm.signal(u, to, &m, next)
			for ch := range out {
				out[ch] += share * (next[ch] - out[ch])
			}
		}
		r := from
		if share >= 0.5 {
			r = to
		}
		if f := pm.frozen[r]; f >= 0 {
			if math.IsNaN(stuck) {
				stuck = out[f]
			}
			out[f] = stuck
		} else {
			stuck = math.NaN()
		}
		for ch, v := range out {
			c.values[ch][k] = v
		}
	}
}

// regimeAt returns the regime of the plant at t: a ramp from regime from
// to regime to, share of the way (0 outside a ramp, when to is from), and
// the onset of the regime, zero for the regime the site started in.
func (u *unit) regimeAt(t time.Time, s *Site) (from, to int, share float64, onset time.Time) {
	r := s.Regimes[0]
	half := u.model.ramp / 2
	for _, sw := range s.Switches {
		switch {
		case half > 0 && t.After(sw.Onset.Add(-half)) && t.Before(sw.Onset.Add(half)):
			share := float64(t.Sub(sw.Onset.Add(-half))) / float64(u.model.ramp)
			if share < 0.5 {
				return sw.From, sw.To, share, onset
			}
			return sw.From, sw.To, share, sw.Onset
		case !t.Before(sw.Onset):
			r, onset = sw.To, sw.Onset
		}
	}
	return r, r, 0, onset
}

// onOff is 1 when on, 0 when off.
func onOff(on bool) float64 {
	if on {
		return 1
	}
	return 0
}

// withPlant completes a family scenario with its plant model: the quota
// draw of starting regimes and the model's view of the channels and stuck
// sensors.
func withPlant(sc *scenario, pm *plantModel) *scenario {
	sc.quota = true
	pm.frozen = sc.frozen
	pm.channels = len(sc.channels)
	sc.model = pm
	return sc
}

// noneFrozen returns the frozen list of k regimes without a stuck sensor.
func noneFrozen(k int) []int {
	f := make([]int, k)
	for i := range f {
		f[i] = -1
	}
	return f
}
