package scenarios

import (
	"fmt"
	"math"
	"math/rand/v2"
	"time"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/geo"
)

// Regimes of the reefer fleet.
const (
	reeferHaul = iota
	reeferDeliveries
	reeferDefrost
	reeferFailing
	reeferParked
)

// Channels of the reefer fleet.
const (
	reeferBox = iota
	reeferReturn
	reeferCurrent
	reeferDoor
)

func reeferScenario() *scenario {
	return &scenario{
		name:   "reefers",
		sites:  60,
		weeks:  4,
		step:   10 * time.Minute,
		mobile: true,
		channels: []channelSpec{
			reeferBox:     {Channel{"box_temp", "°C"}, 1, 30},
			reeferReturn:  {Channel{"return_temp", "°C"}, 1, 30},
			reeferCurrent: {Channel{"compressor_current", "A"}, 1, 15},
			reeferDoor:    {Channel{"door_open", "1"}, 2, 0},
		},
		regimes: []string{
			reeferHaul:       "haul",
			reeferDeliveries: "deliveries",
			reeferDefrost:    "defrost",
			reeferFailing:    "failing-compressor",
			reeferParked:     "parked",
		},
		shares: []float64{
			reeferHaul:       0.40,
			reeferDeliveries: 0.24,
			reeferDefrost:    0.12,
			reeferFailing:    0.10,
			reeferParked:     0.14,
		},
		next: [][]int{
			reeferHaul:       {reeferDefrost, reeferFailing, reeferDeliveries, reeferParked},
			reeferDeliveries: {reeferHaul, reeferDefrost, reeferParked},
			reeferDefrost:    {reeferHaul},
			reeferFailing:    {reeferParked, reeferHaul},
			reeferParked:     {reeferHaul, reeferDeliveries},
		},
		frozen:  []int{-1, -1, -1, -1, -1},
		climate: climateSpec{mean: 17, trend: 0.08, swing: 5.5, weather: 2.2},
		model:   reeferModel{},
	}
}

// depot is an invented depot town.
type depot struct {
	name string
	at   orb.Point
	loop orb.LineString // closed delivery round starting and ending at the depot
}

// network lays out the depots, their delivery rounds and a route between
// every pair of depots. The layout is the same for every seed.
func network() ([]depot, map[[2]int]orb.LineString) {
	const networkSeed = 0x72_65_65_66
	rng := rand.New(rand.NewPCG(networkSeed, 0))
	depots := []depot{
		{name: "Carrowby", at: orb.Point{5.92, 50.21}},
		{name: "Tessingholm", at: orb.Point{9.18, 52.63}},
		{name: "Orlmark", at: orb.Point{10.07, 49.32}},
		{name: "Wendisfeld", at: orb.Point{12.61, 53.28}},
		{name: "Brackenau", at: orb.Point{13.38, 50.64}},
		{name: "Sallowmere", at: orb.Point{5.13, 51.84}},
	}
	for i := range depots {
		const corners = 9
		loop := orb.LineString{depots[i].at}
		for c := 1; c < corners; c++ {
			bearing := 360 * float64(c) / corners
			loop = append(loop, geo.PointAtBearingAndDistance(depots[i].at, bearing, 18e3+14e3*rng.Float64()))
		}
		depots[i].loop = append(loop, depots[i].at)
	}
	routes := make(map[[2]int]orb.LineString)
	for i := range depots {
		for j := i + 1; j < len(depots); j++ {
			a, b := depots[i].at, depots[j].at
			length := geo.DistanceHaversine(a, b)
			bearing := geo.Bearing(a, b)
			line := orb.LineString{a}
			const legs = 6
			for l := 1; l < legs; l++ {
				p := geo.PointAtBearingAndDistance(a, bearing, length*float64(l)/legs)
				line = append(line, geo.PointAtBearingAndDistance(p, bearing+90, 0.05*length*rng.NormFloat64()))
			}
			line = append(line, b)
			routes[[2]int{i, j}] = line
			back := line.Clone()
			back.Reverse()
			routes[[2]int{j, i}] = back
		}
	}
	return depots, routes
}

type reeferModel struct{}

func (reeferModel) place(n int, rng *rand.Rand) ([]Site, []simulator) {
	depots, routes := network()
	width := max(3, len(fmt.Sprint(n)))
	perDepot := make([]int, len(depots))
	sites := make([]Site, n)
	sims := make([]simulator, n)
	for i := range n {
		home := rng.IntN(len(depots))
		dest := (home + 1 + rng.IntN(len(depots)-1)) % len(depots)
		perDepot[home]++
		route := routes[[2]int{home, dest}]
		u := &reeferUnit{
			home:     depots[home].at,
			route:    route,
			routeLen: geo.LengthHaversine(route) / 1000,
			loop:     depots[home].loop,
			loopLen:  geo.LengthHaversine(depots[home].loop) / 1000,
			speed:    65 + 15*rng.Float64(),
			setpoint: -21 + 0.5*float64(rng.IntN(9)),
			tau:      540 + 180*rng.Float64(),
			cooling:  0.15 + 0.04*rng.Float64(),
			amps:     11 + 4*rng.Float64(),
			phase:    rng.IntN(480),
			wear:     3 * rng.Float64(),
		}
		sims[i] = u
		model := "FT-13"
		if rng.IntN(3) == 0 {
			model = "FT-15"
		}
		sites[i] = Site{
			ID:   fmt.Sprintf("RT-%0*d", width, i+1),
			Name: fmt.Sprintf("%s reefer %02d", depots[home].name, perDepot[home]),
			Lat:  u.home.Lat(),
			Lon:  u.home.Lon(),
			Attrs: []Attr{
				{"home_depot", depots[home].name},
				{"destination", depots[dest].name},
				{"route_km", round(u.routeLen, 1)},
				{"trailer_model", model},
				{"setpoint_c", u.setpoint},
				{"built", int64(2012 + rng.IntN(14))},
			},
		}
	}
	return sites, sims
}

// reeferUnit holds the parameters of one refrigerated trailer.
type reeferUnit struct {
	home              orb.Point
	route, loop       orb.LineString
	routeLen, loopLen float64 // km
	speed             float64 // km/h on the route
	setpoint          float64 // °C
	tau               float64 // time constant of the box against the outside air, minutes
	cooling           float64 // cooling rate of a healthy compressor, °C per minute
	amps              float64 // compressor current, A
	phase             int     // defrost schedule offset, minutes
	wear              float64 // days of wear of a compressor failing from the start
}

// reeferState is the state of a trailer carried from minute to minute.
type reeferState struct {
	load       float64 // air and goods of the box, °C
	gust       float64 // excursion of the box air after the door opened, °C
	excess     float64 // heat excess at the evaporator after a defrost, °C
	compressor bool
	doorUntil  int     // minute the door closes
	stopUntil  int     // minute the trailer moves on
	nextStop   int     // minute of the next delivery stop
	driven     float64 // km driven on the route
	round      float64 // km driven on today's delivery round
	pos        orb.Point
}

func (u *reeferUnit) simulate(g grid, site *Site, env *climate, rng *rand.Rand, c *clean) {
	regimes := site.Regimes
	minutes := int(g.step / time.Minute) // per slot
	const (
		gustTau  = 5.0    // minutes for the box air to follow an open door
		settle   = 8.0    // minutes for the box air to settle after the door closed
		doorTau  = 1000.0 // minutes for the load to reach the outside air with the door open
		gpsNoise = 8.0    // m
	)
	s := reeferState{load: u.setpoint, pos: u.home}
	if regimes[0] == reeferParked {
		s.load = env.at(0, u.home.Lon())
	}
	onset, wear0 := 0, u.wear
	for k := range g.slots() {
		r := regimes[k/g.per]
		if k > 0 && r != regimes[(k-1)/g.per] {
			onset, wear0 = k, 0
		}
		if k%g.per == 0 {
			s.round = 0
		}
		air := env.at(k, s.pos.Lon())
		h := g.hour(k, s.pos.Lon())
		wear := min(wear0+float64(k-onset)/float64(g.per), 10)
		open := 0
		for m := range minutes {
			now := k*minutes + m
			u.move(&s, r, now, h+float64(m)/60, rng)
			door := now < s.doorUntil
			defrost := false
			switch r {
			case reeferDefrost:
				defrost = (now+u.phase)%120 < 30
			case reeferHaul, reeferDeliveries, reeferFailing:
				defrost = (now+u.phase)%480 < 20
			}
			box := s.load + s.gust
			switch {
			case r == reeferParked, defrost, door:
				s.compressor = false
			case box > u.setpoint+1:
				s.compressor = true
			case box < u.setpoint-1:
				s.compressor = false
			}
			d := (air - s.load) / u.tau
			if door {
				open++
				d += (air - s.load) / doorTau
				s.gust += (0.6*(air-s.load) - s.gust) / gustTau
			} else {
				s.gust -= s.gust / settle
			}
			if defrost {
				d += 0.04
				s.excess = min(s.excess+1.6, 28)
			} else {
				s.excess *= 0.85
			}
			if s.compressor {
				cooling := u.cooling
				if r == reeferFailing {
					// With the outside air at failRef the box settles at
					// failFrom, warming by failRate a day of wear.
					const failRef, failFrom, failRate = 18.0, -19.0, 0.5
					cooling = (failRef - failFrom - failRate*wear) / u.tau
				}
				d -= cooling
			}
			s.load += d
		}
		u.place(&s, r)

		current := 0.0
		switch {
		case s.compressor && r == reeferFailing:
			current = u.amps * (1.2 + 0.015*wear) * (1 + 0.08*rng.NormFloat64())
		case s.compressor:
			current = u.amps * (1 + 0.03*rng.NormFloat64())
		case r != reeferParked:
			current = 0.2 + 0.05*math.Abs(rng.NormFloat64()) // fans and controller
		}
		box := s.load + s.gust
		ret := box + 0.6 + s.excess + 0.2*rng.NormFloat64()
		if s.compressor {
			ret += 0.9
		}
		c.values[reeferBox][k] = box + 0.15*rng.NormFloat64()
		c.values[reeferReturn][k] = ret
		c.values[reeferCurrent][k] = current
		c.values[reeferDoor][k] = float64(open) / float64(minutes)
		lat := gpsNoise * rng.NormFloat64() / 111_320
		lon := gpsNoise * rng.NormFloat64() / (111_320 * math.Cos(s.pos.Lat()*math.Pi/180))
		c.lat[k] = round(s.pos.Lat()+lat, 6)
		c.lon[k] = round(s.pos.Lon()+lon, 6)
	}
}

// place puts the trailer where its distances say: on the route, shuttling
// between its ends, or on the delivery round; parked trailers stay put.
func (u *reeferUnit) place(s *reeferState, r int) {
	switch r {
	case reeferParked:
	case reeferDeliveries:
		s.pos, _ = geo.PointAtDistanceAlongLine(u.loop, s.round*1000)
	default:
		along := math.Mod(s.driven, 2*u.routeLen)
		if along > u.routeLen {
			along = 2*u.routeLen - along
		}
		s.pos, _ = geo.PointAtDistanceAlongLine(u.route, along*1000)
	}
}

// move advances the trailer by one minute at local solar hour hour: along
// its route during the driving hours, stopping at either end, or round the
// home depot's delivery round with stops for deliveries.
func (u *reeferUnit) move(s *reeferState, r, now int, hour float64, rng *rand.Rand) {
	if now < s.stopUntil {
		return
	}
	switch r {
	case reeferParked:
	case reeferDeliveries:
		if hour < 7 || hour >= 17 || s.round >= u.loopLen {
			return
		}
		if now >= s.nextStop {
			dwell := 8 + rng.IntN(13)
			s.doorUntil = now + dwell
			s.stopUntil = now + dwell + 2
			s.nextStop = s.stopUntil + 20 + rng.IntN(21)
			return
		}
		const roundSpeed = 28.0 // km/h
		s.round = min(s.round+roundSpeed/60, u.loopLen)
	default:
		if hour < 6 || hour >= 20 {
			return
		}
		before := int(s.driven / u.routeLen)
		s.driven += u.speed / 60
		if int(s.driven/u.routeLen) > before {
			// Arrived at one end: unload, load and rest.
			s.doorUntil = now + 20
			s.stopUntil = now + 120
		}
	}
}
