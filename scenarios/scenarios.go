// Package scenarios generates synthetic sensor fleets whose true operating
// regimes and regime switches are known, for the demo and for tests that
// check whether the analysis recovers them. The places, sites, models and
// readings are invented.
//
// # Fleets
//
// "pumping" (default 300 sites): fixed pumping stations along the branches of
// the invented Ambrel river basin, sampled every 10 minutes on five channels:
// flow (m³/h), pressure (discharge pressure, bar), current (motor current,
// A), vibration (RMS velocity, mm/s) and bearing_temp (°C). Pump sizes, system
// heads and baseline vibration differ from site to site; current follows
// flow, bearing temperature follows load with a lag of about 100 minutes and
// the pump-house air, which follows the weather. Regimes:
//   - steady: runs around the clock near 95 % of rated flow, small daily swing;
//   - cycling: runs from about 06:00 to 22:00 local solar time, stopped at
//     night, so every channel has a large daily cycle;
//   - standby: stopped except for a 40 to 50 minute exercise run a day; flow
//     and current near zero, bearing temperature near the room's;
//   - degrading: a worn pump whose vibration starts at about twice the site's
//     baseline and rises by about 0.1 baseline a day, while flow falls by
//     1.2 % of rated flow a day and current and bearing temperature run high
//     (both changes level off after 20 days);
//   - stuck-sensor: duty like steady, but the pressure transmitter repeats one
//     value between 0.3 and 1.0 bar (a flat line, no noise, no spikes);
//   - high-load: peak-season duty near 120 % of rated flow with an evening
//     peak, higher pressure, current and bearing temperature.
//
// "reefers" (default 60 units): refrigerated trailers on invented routes
// between six invented depots, with a lat and lon per reading, sampled every
// 10 minutes on box_temp (box air, °C), return_temp (return air at the
// evaporator, °C), compressor_current (A) and door_open (share of the 10
// minutes the door was open). A thermostat cycles the compressor around each
// unit's frozen-goods setpoint (−21 to −17 °C). Regimes:
//   - haul: long-distance runs to and fro along the route, driving 06:00 to
//     20:00 local solar time, the door open only for 20 minutes at either
//     end, a 20 minute defrost every 8 hours;
//   - deliveries: daytime rounds from the home depot with a stop every 20 to
//     40 minutes of driving and the door open for 8 to 20 minutes, so box
//     temperature and door share swing during the day;
//   - defrost: an iced evaporator that defrosts for 30 minutes every 2 hours;
//     return air climbs far above the box air at each defrost;
//   - failing-compressor: the compressor draws a high and unsteady current
//     and cannot hold the setpoint, so it runs without pause; its capacity
//     falls for 10 days and the box air warms to daily means of mostly −15
//     to −5 °C;
//   - parked: standing with the unit off; the box follows the outside air.
//
// # Ground truth
//
// Truth is kept per site and per daily window [midnight UTC, next midnight
// UTC), the default window of the analysis. Spec.Start must be a midnight UTC.
// About 13 % of the sites switch regime once or twice (a third of those
// twice, when the record has at least 9 windows); every switch happens at a
// window boundary, with at least 3 windows of the old regime before it and 3
// of the new one after it, and only to a plausible next regime (a stuck
// sensor is replaced, a degrading pump is repaired or stopped, a parked
// trailer goes back on the road).
//
// # Defects
//
// The readings carry telemetry defects at these rates:
//   - clock jitter: every time stamp is off its 10 minute slot by a whole
//     number of seconds drawn uniformly from −5 to +5 (so about 10 in 11 are
//     off the grid); jitter never moves a reading into another window;
//   - lost rows: 0.3 % of the rows, independently;
//   - gaps: on 4 % of the site-days a gap of 1 to 6 hours;
//   - outages: 5 % of the sites are silent once for 6 to 48 hours; outages
//     keep clear of the 3 windows either side of a switch, so that every
//     planted switch stays observable;
//   - missing values: 0.2 % of the remaining values (nulls in wide files,
//     absent rows in long files);
//   - spikes: 0.05 % of the values jump upwards by one to two times a
//     channel's spike size: 300 m³/h, 3 bar, 80 A, 8 mm/s and 40 °C for the
//     pumps, 30 °C for box and return air and 15 A for the compressors
//     (door_open and a stuck transmitter have none);
//   - duplicated rows: 0.05 % of the rows are sent twice, identically;
//   - lost position fixes (reefers): 0.3 % of the rows have no lat and lon.
//
// Fleet.Defects counts what was planted in one fleet.
package scenarios

import (
	"encoding/binary"
	"fmt"
	"math/rand/v2"
	"slices"
	"strings"
	"time"

	"github.com/kinmap/kinmap/internal/parallel"
)

// Spec says which fleet to generate and how large.
type Spec struct {
	Name  string    // scenario name, one of Names()
	Sites int       // number of sites (mobile units)
	Weeks int       // length of the record in weeks
	Seed  int64     // seed of the random source: equal specs give equal fleets
	Start time.Time // first instant of the record; must be a midnight UTC
}

// Names returns the known scenario names, sorted.
func Names() []string {
	var names []string
	for _, s := range catalogue() {
		names = append(names, s.name)
	}
	slices.Sort(names)
	return names
}

// DefaultSpec returns the default size of a scenario: 4 weeks from Monday
// 1 June 2026 00:00 UTC with seed 1, 300 sites for "pumping" and 60 units for
// "reefers".
func DefaultSpec(name string) (Spec, error) {
	sc, err := lookup(name)
	if err != nil {
		return Spec{}, err
	}
	return Spec{
		Name:  sc.name,
		Sites: sc.sites,
		Weeks: 4,
		Seed:  1,
		Start: time.Date(2026, time.June, 1, 0, 0, 0, 0, time.UTC),
	}, nil
}

// Channel is one measured quantity of a fleet.
type Channel struct {
	Name string // column or channel name in the dumps
	Unit string // unit of the values ("1" for a dimensionless share)
}

// Attr is one attribute of a site in the site register. Value is a string,
// an int64 or a float64.
type Attr struct {
	Name  string
	Value any
}

// Readings are the rows one site sent, sorted by time. A duplicated row is
// repeated right after the original, with the same time and values.
type Readings struct {
	Times  []int64     // Unix nanoseconds, UTC, non-decreasing
	Values [][]float64 // by channel (Fleet.Channels order), then row; NaN where a value is missing
	Lat    []float64   // position per row for mobile fleets, NaN without a fix; nil for fixed sites
	Lon    []float64
}

// Len reports the number of rows, duplicates included.
func (r Readings) Len() int { return len(r.Times) }

// Site is one site of a fleet with its readings and its true regimes.
type Site struct {
	ID       string
	Name     string
	Lat, Lon float64 // register position: the station, or a mobile unit's home depot
	Attrs    []Attr  // register attributes, in register order
	Readings Readings
	Regimes  []int    // true regime of each window, indices into Fleet.Regimes
	Switches []Switch // true switches, in time order
}

// Switch is a planted change of a site's regime. It happens at a midnight
// UTC window boundary, with at least 3 windows of the old regime before it
// and 3 of the new one after it.
type Switch struct {
	Site     string
	Time     time.Time // start of the first window in the new regime (a midnight UTC)
	Window   int       // index of that window
	From, To int       // indices into Fleet.Regimes
}

// Defects counts the telemetry defects planted in a fleet.
type Defects struct {
	Slots      int64 // rows the sites would have sent without defects
	LostRows   int64 // single rows lost
	Gaps       int   // gaps of 1 to 6 hours
	GapRows    int64 // rows lost to gaps
	Outages    int   // outages of 6 to 48 hours
	OutageRows int64 // rows lost to outages
	Jittered   int64 // rows stamped off their 10 minute slot
	Missing    int64 // single values missing from rows that were sent
	Spikes     int64 // values with a spike
	Duplicates int64 // rows sent twice
	NoFix      int64 // rows without a position (mobile fleets)
}

func (d *Defects) add(o Defects) {
	d.Slots += o.Slots
	d.LostRows += o.LostRows
	d.Gaps += o.Gaps
	d.GapRows += o.GapRows
	d.Outages += o.Outages
	d.OutageRows += o.OutageRows
	d.Jittered += o.Jittered
	d.Missing += o.Missing
	d.Spikes += o.Spikes
	d.Duplicates += o.Duplicates
	d.NoFix += o.NoFix
}

// Fleet is a generated scenario: sites, readings and ground truth.
type Fleet struct {
	Name     string
	Spec     Spec
	Mobile   bool          // sites move; readings carry positions
	Step     time.Duration // sampling step
	Window   time.Duration // length of a truth window (24 h, aligned to midnight UTC)
	Channels []Channel
	Regimes  []string // regime names; Site.Regimes and Switch index them
	Sites    []*Site  // sorted by ID
	Defects  Defects
}

// Windows reports the number of truth windows of each site.
func (f *Fleet) Windows() int { return f.Spec.Weeks * 7 }

// WindowStart returns the start of truth window i.
func (f *Fleet) WindowStart(i int) time.Time {
	return f.Spec.Start.Add(time.Duration(i) * f.Window)
}

// Switches returns every planted switch, sorted by site and time.
func (f *Fleet) Switches() []Switch {
	var all []Switch
	for _, s := range f.Sites {
		all = append(all, s.Switches...)
	}
	return all
}

const (
	window    = 24 * time.Hour
	perWindow = 144                // slots in a window, of 10 minutes
	step      = window / perWindow // so that the slots fill the window

	maxSites    = 5000
	maxWeeks    = 104
	maxReadings = 100_000_000
)

// Generate builds the fleet a spec describes. The result depends only on the
// spec (its random streams are math/rand/v2 ChaCha8 generators keyed by
// Spec.Seed, one per site and purpose): the same spec gives the same fleet
// and the same files.
func Generate(spec Spec) (*Fleet, error) {
	return generate(spec, defaultRates())
}

// Validate reports whether Generate can build the fleet of the spec: a
// known scenario, 1 to 5000 sites, 1 to 104 weeks, at most 100 million
// readings in all and a start at a midnight UTC.
func (spec Spec) Validate() error {
	_, err := spec.scenario()
	return err
}

// scenario returns the scenario of a valid spec.
func (spec Spec) scenario() (*scenario, error) {
	sc, err := lookup(spec.Name)
	if err != nil {
		return nil, err
	}
	if err := sc.validate(spec); err != nil {
		return nil, err
	}
	return sc, nil
}

func generate(spec Spec, rates defectRates) (*Fleet, error) {
	sc, err := spec.scenario()
	if err != nil {
		return nil, err
	}
	spec.Start = spec.Start.UTC()
	g := grid{start: spec.Start.UnixNano(), windows: spec.Weeks * 7}
	fleetRng := newRand(spec.Seed, fleetStream, 0)
	sites, sims := sc.model.place(spec.Sites, fleetRng)
	env := newClimate(g.windows+1, sc.climate, fleetRng)
	plan := planRegimes(spec.Sites, g.windows, sc, rates, fleetRng)

	f := &Fleet{
		Name:     sc.name,
		Spec:     spec,
		Mobile:   sc.mobile,
		Step:     step,
		Window:   window,
		Regimes:  slices.Clone(sc.regimes),
		Sites:    make([]*Site, len(sites)),
		Channels: make([]Channel, len(sc.channels)),
	}
	for i, c := range sc.channels {
		f.Channels[i] = c.Channel
	}
	defects := make([]Defects, len(sites))
	parallel.For(len(sites), 0, func() *clean { return new(clean) }, func(c *clean, i int) {
		site := sites[i]
		site.Regimes = plan.regimes[i]
		for j := range plan.switches[i] {
			plan.switches[i][j].Site = site.ID
			plan.switches[i][j].Time = f.WindowStart(plan.switches[i][j].Window)
		}
		site.Switches = plan.switches[i]
		c.reset(g.slots(), len(sc.channels), sc.mobile)
		sims[i].simulate(g, site.Regimes, env, newRand(spec.Seed, physicsStream, i), c)
		site.Readings, defects[i] = applyDefects(g, c, site, sc, rates, plan.outage[i], spec.Seed, i)
		f.Sites[i] = &site
	})
	for _, d := range defects {
		f.Defects.add(d)
	}
	return f, nil
}

// validate checks a spec against the scenario's limits.
func (sc *scenario) validate(spec Spec) error {
	switch {
	case spec.Sites < 1 || spec.Sites > maxSites:
		return fmt.Errorf("scenarios: %s: %d sites: want 1 to %d", sc.name, spec.Sites, maxSites)
	case spec.Weeks < 1 || spec.Weeks > maxWeeks:
		return fmt.Errorf("scenarios: %s: %d weeks: want 1 to %d", sc.name, spec.Weeks, maxWeeks)
	case int64(spec.Sites)*int64(spec.Weeks)*7*int64(perWindow)*int64(len(sc.channels)) > maxReadings:
		return fmt.Errorf("scenarios: %s: %d sites over %d weeks: more than %d readings", sc.name, spec.Sites, spec.Weeks, maxReadings)
	case spec.Start.IsZero():
		return fmt.Errorf("scenarios: %s: no start time", sc.name)
	}
	if t := spec.Start.UTC(); !t.Equal(t.Truncate(window)) {
		return fmt.Errorf("scenarios: %s: start %s is not a midnight UTC", sc.name, spec.Start.Format(time.RFC3339))
	}
	return nil
}

// scenario is one fleet of the catalogue: what it measures, its regimes and
// the model that places and simulates its sites.
type scenario struct {
	name     string
	sites    int // default number of sites
	mobile   bool
	channels []channelSpec
	regimes  []string
	shares   []float64 // share of sites starting in each regime
	next     [][]int   // plausible regimes to switch to, by regime
	frozen   []int     // channel a regime flat-lines, or -1
	climate  climateSpec
	model    model
}

// channelSpec is a channel with the number of decimal digits its values are
// rounded to and the size of its spikes (0: no spikes).
type channelSpec struct {
	Channel
	digits int
	spike  float64
}

// model places the sites of a scenario and simulates their clean readings.
type model interface {
	// place draws n sites (register entries) and a simulator for each.
	place(n int, rng *rand.Rand) ([]Site, []simulator)
}

// simulator produces one site's clean readings at every slot of the grid,
// given the site's true regime per window.
type simulator interface {
	simulate(g grid, regimes []int, env *climate, rng *rand.Rand, c *clean)
}

func catalogue() []*scenario {
	return []*scenario{pumpingScenario(), reeferScenario()}
}

func lookup(name string) (*scenario, error) {
	for _, s := range catalogue() {
		if s.name == name {
			return s, nil
		}
	}
	return nil, fmt.Errorf("scenarios: unknown scenario %q: known are %s", name, strings.Join(Names(), ", "))
}

// grid is the regular time grid of a record: slot k is at start + k·step.
type grid struct {
	start   int64 // Unix nanoseconds
	windows int
}

func (g grid) slots() int { return g.windows * perWindow }

// time returns the nominal time of slot k in Unix nanoseconds.
func (g grid) time(k int) int64 { return g.start + int64(k)*int64(step) }

// clean holds one site's readings before defects: one row per slot.
type clean struct {
	values   [][]float64 // by channel, then slot
	lat, lon []float64   // mobile only
}

func (c *clean) reset(slots, channels int, mobile bool) {
	c.values = resize(c.values, channels)
	for i := range c.values {
		c.values[i] = resizeFloats(c.values[i], slots)
	}
	if mobile {
		c.lat = resizeFloats(c.lat, slots)
		c.lon = resizeFloats(c.lon, slots)
	}
}

func resize(v [][]float64, n int) [][]float64 {
	if cap(v) < n {
		return make([][]float64, n)
	}
	return v[:n]
}

func resizeFloats(v []float64, n int) []float64 {
	if cap(v) < n {
		return make([]float64, n)
	}
	return v[:n]
}

// Random streams. Each site draws its physics and each kind of defect from a
// stream of its own, so that switching one kind of defect off leaves the rest
// of the fleet unchanged.
const (
	fleetStream = iota
	physicsStream
	timingStream
	missingStream
	spikeStream
	duplicateStream
	fixStream
)

// newRand returns the random stream of a site (or of the fleet). ChaCha8
// keys that differ in a few bits still give independent streams, which
// nearby PCG seeds do not.
func newRand(seed int64, stream, site int) *rand.Rand {
	var key [32]byte
	binary.LittleEndian.PutUint64(key[0:], uint64(seed))
	binary.LittleEndian.PutUint64(key[8:], uint64(stream))
	binary.LittleEndian.PutUint64(key[16:], uint64(site))
	return rand.New(rand.NewChaCha8(key))
}
