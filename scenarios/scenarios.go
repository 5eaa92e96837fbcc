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
// # The evaluation family
//
// Family lists thirteen more fleets, invented to check the analysis on
// plant it was not developed on. Each tests one or more ways in which
// grouping windows into regimes fails: (1) shared, fleet-wide variation
// (weather, a holiday) that moves every site together while a fault shows
// in one channel of a few sites; (2) calendar cycles; (3) rare regimes (3 to
// 5 % of the windows) beside a diffuse on/off duty-cycling one; (4)
// transition days (a switch during the day, a set-point ramp); (5) slow
// drift with a dated onset. Their starting regimes are dealt in exact
// proportions; sites, weather and switches differ from seed to seed, and
// SecondSeed gives each fleet its second draw. Every site has a district
// and an installation year in the register. The weekdays are those of the
// local solar time; the default start, 1 June 2026, is a Monday.
//   - "tanks" (120 sites, 4 weeks, every 5 minutes): drinking-water tanks
//     with level (m), inflow and outflow (m³/h), water_temp (°C) and
//     chlorine (mg/l); one regime, "normal", no switch (K = 1): demand
//     follows the weather and rises later at weekends, and 3 % of the sites
//     have no chlorine analyser.
//   - "substations" (600, 3 weeks, 15 minutes): transformers with load
//     (MVA), top_oil (°C), ambient (°C) and tap (position); "normal" and
//     "fan-fault" (natural cooling only: 3.5 times the oil temperature
//     rise). Load follows the weather and drops at weekends and on a
//     fleet-wide holiday (local days 10 and 11 of the record: 11 and 12
//     June from the default start); the fault shows in top_oil only.
//     Class 1.
//   - "masts" (80, 3 weeks, every minute): weather masts with wind (m/s),
//     air_temp (°C), humidity (%) and pressure (hPa); "exposed",
//     "sheltered" and a rare "iced-anemometer" whose frozen cups read a
//     wind of 0. Class 3.
//   - "coldrooms" (200, 4 weeks, 5 minutes): cold rooms with room_temp,
//     evap_temp (°C), current (A) and door_open (share); "modulating",
//     "cycling" (the compressor on for 10 to 40 minutes and off for 14 to
//     56, drawn afresh each time), the rare "stuck-probe" (a cycling room
//     whose room_temp repeats one value) and "iced-evaporator". Class 3.
//   - "ahus" (300, 5 weeks, 15 minutes): air-handling units with
//     supply_temp, return_temp (°C), fan_speed, valve (%) and co2 (ppm);
//     "office" (weekdays 07:00–19:00, a short flush run in weekend
//     mornings, more like a residential weekday than an office one),
//     "residential" (mornings and evenings, weekend days too) and
//     "continuous". Class 2.
//   - "boilers" (180, 5 weeks, 5 minutes): boiler houses with flow_temp,
//     return_temp (°C), burner (share firing), gas_flow (m³/h) and pressure
//     (bar); "hot-water-only", "space-heating" (weather-compensated) and
//     "frost-protection". A switch ramps the set point over 12 hours
//     centred on its onset, which lies up to 10 hours from midnight.
//     Class 4.
//   - "chargers" (400, 4 weeks, 15 minutes): EV chargers with power (kW),
//     plugged (0 or 1) and connector_temp (°C); "workplace" (weekdays),
//     "overnight", "depot" and "derated" (a depot charger capped at 18 kW).
//     Switches happen up to 10 hours from midnight. Classes 2 and 4.
//   - "irrigation" (120, 10 weeks, 10 minutes): irrigation pumps with flow
//     (m³/h), pressure (bar), current (A) and soil_moisture (%);
//     "sprinkler" (at night), "drip" (by day, twice as long at a third of
//     the flow and under half the pressure), "off-season" and
//     "leaking-main" (sprinklers at 60 % of the pressure). Every schedule
//     runs shorter on cool, wet days, fleet-wide; 4 % of the sites have no
//     soil probe. Class 1.
//   - "datahalls" (50, 3 weeks, every minute): data-hall cooling units with
//     supply_air, return_air (°C), fan_power (kW), chw_valve and humidity
//     (%); "normal", "high-load", "economiser", "filter-clogging" (fan
//     power 60 % up from the onset, then 2 % a day for 20 days, and the
//     return air warmer) and the rare "stuck-humidity". Classes 3 and 5.
//   - "heatpumps" (300, 5 weeks, 10 minutes): air-source heat pumps with
//     flow_temp, outdoor_temp (°C), power (kW), compressor_hz (Hz) and
//     defrost (0 or 1); "heating", "cooling", "standby", "short-cycling"
//     (on 5 to 19 minutes, off 7 to 29), "iced-coil" (a defrost every hour)
//     and "backup-heater" (the compressor off, the resistive heater on);
//     3 % of the sites report no defrost. Class 3.
//   - "blowers" (150, 6 weeks, 5 minutes): aeration blowers with airflow
//     (Nm³/h), pressure (mbar), power (kW), oxygen (mg/l), speed (%) and
//     inlet_temp (°C); "diurnal", "storm-flow", "intermittent" (on 16 to 64
//     minutes, off 20 to 80), "standby", "surge-limited",
//     "filter-clogging" (from the onset the blower runs flat out, draws
//     60 % more power, 2 % more a day for 20 days, and delivers 10 % less
//     air) and the rare "fouled-oxygen-probe" (oxygen repeats one value).
//     Classes 3 and 5.
//   - "turbines" (150, 8 weeks, 10 minutes): wind turbines with wind (m/s),
//     power (kW), rotor_rpm, gearbox_temp, nacelle_temp (°C) and pitch (°)
//     under a wind shared by the fleet; "normal", "curtailed" (a
//     noise-reduced mode: pitched out by 6°, 20 % slower, 60 % of the
//     power and at most half the rating) and "gearbox-wear" (14 °C hotter
//     from the onset, then 0.15 °C a day for 25 days). Classes 1 and 5.
//   - "compressors" (240, 6 weeks, 10 minutes): gas compressor stations
//     with suction_p, discharge_p (bar), speed (rpm), power (MW), gas_temp
//     (°C), vibration (mm/s), lube_temp (°C) and flow (kNm³/h); "base-load",
//     "peak-load", "recycle", "standby-pressurised", "shutdown",
//     "start-stop" (runs of 1 to 4 hours), "fouled-cooler" (gas 18 °C
//     hotter) and "bearing-wear" (vibration doubled from the onset, then
//     up by 8 % of the healthy level a day for 20 days); 3 % of the sites
//     have no lube_temp (K = 8).
//
// The rare regimes hold 3 to 5 % of the windows of both draws; about 5 to
// 20 % of the sites switch, as each fleet needs.
//
// # Ground truth
//
// Truth is kept per site and per daily window [midnight UTC, next midnight
// UTC), the default window of the analysis. Spec.Start must be a midnight UTC.
// A switch during the day (Switch.Onset off the window boundary by less
// than 12 hours) labels each window with the regime that held for most of
// it, a ramp counting as the old regime up to its midpoint, the onset; the
// true switch time (Switch.Time, the time in truth-switches.csv) is the
// start of the first window labelled with the new regime. So a change at
// 08:00 is true at the midnight before it, one at 16:00 at the midnight
// after it.
// In "pumping" and "reefers" about 13 % of the sites switch regime, in the
// family as each fleet says; a third of those switch twice, when the record
// has at least 9 windows. Every switch has at least 3 windows of the old
// regime before it and 3 of the new one after it, and goes only to a
// plausible next regime (a stuck sensor is replaced, a degrading pump is
// repaired or stopped, a parked trailer goes back on the road).
//
// # Defects
//
// The readings carry telemetry defects at these rates:
//   - clock jitter: every time stamp is off its sampling slot by a whole
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
// The family's fleets carry the same defects at the same rates, in their
// own sampling steps and with spike sizes of their own, and some lack a
// sensor altogether (Defects.Absent), as listed above.
//
// Fleet.Defects counts what was planted in one fleet.
package scenarios

import (
	"encoding/binary"
	"fmt"
	"math/rand/v2"
	"runtime"
	"slices"
	"strings"
	"sync"
	"time"
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

// DefaultSpec returns the default size of a scenario: its own number of
// sites and weeks (4 weeks of 300 sites for "pumping" and of 60 units for
// "reefers"; the family's in the package documentation) from Monday 1 June
// 2026 00:00 UTC with seed 1.
func DefaultSpec(name string) (Spec, error) {
	sc, err := lookup(name)
	if err != nil {
		return Spec{}, err
	}
	return Spec{
		Name:  sc.name,
		Sites: sc.sites,
		Weeks: sc.weeks,
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

// Switch is a planted change of a site's regime, with at least 3 windows of
// the old regime before it and 3 of the new one after it. Time is the
// midnight UTC window boundary the truth places it at; the plant itself
// changes at Onset, which is Time except in fleets whose switches happen
// during the day (see the package documentation).
type Switch struct {
	Site     string
	Time     time.Time // start of the first window in the new regime (a midnight UTC)
	Onset    time.Time // instant the plant changed: less than 12 hours from Time
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
	Jittered   int64 // rows stamped off their sampling slot
	Missing    int64 // single values missing from rows that were sent
	Spikes     int64 // values with a spike
	Duplicates int64 // rows sent twice
	NoFix      int64 // rows without a position (mobile fleets)
	Absent     int   // sites that never send one of their channels
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
	d.Absent += o.Absent
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
	window = 24 * time.Hour

	maxSites    = 5000
	maxWeeks    = 104
	maxReadings = 100_000_000
)

// Generate builds the fleet a spec describes. The result depends only on the
// spec (its random streams are math/rand/v2 ChaCha8 generators keyed by
// Spec.Seed, one per site and purpose): the same spec gives the same fleet
// and the same files.
func Generate(spec Spec) (*Fleet, error) {
	sc, err := spec.scenario()
	if err != nil {
		return nil, err
	}
	return generate(spec, defaultRates(sc.step))
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
	g := newGrid(spec.Start, spec.Weeks*7, sc.step)
	fleetRng := newRand(spec.Seed, fleetStream, 0)
	sites, sims := sc.model.place(spec.Sites, fleetRng)
	env := newClimate(g, sc.climate, fleetRng)
	plan := planRegimes(spec.Sites, g, sc, rates, fleetRng)

	f := &Fleet{
		Name:     sc.name,
		Spec:     spec,
		Mobile:   sc.mobile,
		Step:     sc.step,
		Window:   window,
		Regimes:  slices.Clone(sc.regimes),
		Sites:    make([]*Site, len(sites)),
		Channels: make([]Channel, len(sc.channels)),
	}
	for i, c := range sc.channels {
		f.Channels[i] = c.Channel
	}
	defects := make([]Defects, len(sites))
	jobs := make(chan int)
	var wg sync.WaitGroup
	for range runtime.GOMAXPROCS(0) {
		wg.Go(func() {
			var c clean
			for i := range jobs {
				site := sites[i]
				site.Regimes = plan.regimes[i]
				for j := range plan.switches[i] {
					sw := &plan.switches[i][j]
					sw.Site = site.ID
					sw.Time = f.WindowStart(sw.Window)
					sw.Onset = sw.Time.Add(plan.shifts[i][j])
				}
				site.Switches = plan.switches[i]
				c.reset(g.slots(), len(sc.channels), sc.mobile)
				sims[i].simulate(g, &site, env, newRand(spec.Seed, physicsStream, i), &c)
				site.Readings, defects[i] = applyDefects(g, &c, site, sc, rates, plan.outage[i], plan.absent[i], spec.Seed, i)
				f.Sites[i] = &site
			}
		})
	}
	for i := range sites {
		jobs <- i
	}
	close(jobs)
	wg.Wait()
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
	case int64(spec.Sites)*int64(spec.Weeks)*7*int64(window/sc.step)*int64(len(sc.channels)) > maxReadings:
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
	sites    int           // default number of sites
	weeks    int           // default number of weeks
	step     time.Duration // sampling step; divides a day
	mobile   bool
	channels []channelSpec
	regimes  []string
	shares   []float64 // share of sites starting in each regime
	next     [][]int   // plausible regimes to switch to, by regime
	frozen   []int     // channel a regime flat-lines, or -1
	climate  climateSpec
	model    model

	switchShare float64       // share of sites that switch; 0 means switchShare
	quota       bool          // starting regimes in exact proportions rather than drawn
	midday      time.Duration // a switch's onset lies less than this off the window boundary
	absent      []int         // channels a site may lack altogether
	absentShare float64       // share of sites that lack one of them
}

// switching returns the share of sites that switch regime.
func (sc *scenario) switching() float64 {
	if sc.switchShare > 0 {
		return sc.switchShare
	}
	return switchShare
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
	simulate(g grid, s *Site, env *climate, rng *rand.Rand, c *clean)
}

func catalogue() []*scenario {
	return append([]*scenario{pumpingScenario(), reeferScenario()}, family()...)
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
	step    time.Duration
	per     int // slots in a window: window / step
}

func newGrid(start time.Time, windows int, step time.Duration) grid {
	return grid{start: start.UnixNano(), windows: windows, step: step, per: int(window / step)}
}

func (g grid) slots() int { return g.windows * g.per }

// time returns the nominal time of slot k in Unix nanoseconds.
func (g grid) time(k int) int64 { return g.start + int64(k)*int64(g.step) }

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
