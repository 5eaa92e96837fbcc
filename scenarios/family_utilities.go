package scenarios

import (
	"math"
	"time"
)

// tanksScenario: drinking-water storage tanks, one regime (K = 1).
func tanksScenario() *scenario {
	return withPlant(&scenario{
		name: "tanks", sites: 120, weeks: 4, step: 5 * time.Minute,
		channels: []channelSpec{
			{Channel{"level", "m"}, 2, 3},
			{Channel{"inflow", "m³/h"}, 1, 200},
			{Channel{"outflow", "m³/h"}, 1, 200},
			{Channel{"water_temp", "°C"}, 1, 20},
			{Channel{"chlorine", "mg/l"}, 2, 1},
		},
		regimes: []string{"normal"},
		shares:  []float64{1},
		next:    [][]int{{}},
		frozen:  noneFrozen(1),
		climate: climateSpec{mean: 15, trend: 0.1, swing: 5, weather: 2.5},
		absent:  []int{4}, absentShare: 0.03,
	}, &plantModel{
		prefix: "WT", kind: "tank", area: [4]float64{46.6, 13.1, 47.4, 14.6},
		signal: func(u *unit, r int, m *moment, out []float64) {
			size := 80 * math.Exp(0.3*u.p[0])
			peak := 7.5
			if m.weekend {
				peak = 9.5 // people rise later at weekends
			}
			demand := size * (1 + 0.35*m.cycle(peak) + 0.15*m.cycle(19) + 0.03*m.weather) * (1 + 0.05*m.n())
			inflow := 0.0
			if m.between(22, 6) {
				inflow = size * 2.6 * (1 + 0.02*m.n())
			}
			level := 4 + 0.4*u.p[1] + 1.1*math.Cos(2*math.Pi*(m.hour-6)/24) + 0.02*m.n()
			temp := u.follow(0, m, 10+0.3*m.air+0.5*u.p[2], 24*time.Hour) + 0.05*m.n()
			out[0], out[1], out[2], out[3] = level, inflow, max(demand, 0), temp
			out[4] = 0.45 + 0.05*u.p[3] - 0.006*temp + 0.01*m.n()
		},
	})
}

// Regimes of the substation fleet.
const (
	subNormal = iota
	subFanFault
)

// substationsScenario: substation transformers whose load and oil
// temperature follow shared weather and a holiday; a fan fault shows in the
// top oil only.
func substationsScenario() *scenario {
	return withPlant(&scenario{
		name: "substations", sites: 600, weeks: 3, step: 15 * time.Minute,
		channels: []channelSpec{
			{Channel{"load", "MVA"}, 2, 20},
			{Channel{"top_oil", "°C"}, 1, 30},
			{Channel{"ambient", "°C"}, 1, 15},
			{Channel{"tap", "1"}, 0, 0},
		},
		regimes:     []string{subNormal: "normal", subFanFault: "fan-fault"},
		shares:      []float64{subNormal: 0.9, subFanFault: 0.1},
		next:        [][]int{subNormal: {subFanFault}, subFanFault: {subNormal}},
		frozen:      noneFrozen(2),
		climate:     climateSpec{mean: 19, trend: 0, swing: 6, weather: 3},
		switchShare: 0.08,
	}, &plantModel{
		prefix: "TX", kind: "substation", area: [4]float64{50.5, 7.0, 52.0, 9.5},
		holidays: []int{10, 11},
		signal: func(u *unit, r int, m *moment, out []float64) {
			rating := 40 * math.Exp(0.25*u.p[0])
			share := 0.55 + 0.18*m.cycle(18) + 0.012*max(m.air-18, 0) + 0.03*u.p[1]
			if m.weekend || m.holiday {
				share *= 0.75
			}
			share = max(share*(1+0.03*m.n()), 0.05)
			// The oil's rise over the air follows the losses: no-load losses
			// a fifth of the load losses at rating.
			rise := 38 * (1 + 0.05*u.p[2]) * (0.2 + share*share) / 1.2
			if r == subFanFault {
				rise *= 3.5 // the fans and oil pumps have stopped: natural cooling only
			}
			oil := u.follow(0, m, m.air+rise, 3*time.Hour)
			out[0] = rating * share
			out[1] = oil + 0.3*m.n()
			out[2] = m.air + 0.3*m.n()
			out[3] = math.Round(9 + 1.5*u.p[3] + 4*share)
		},
	})
}

// Regimes of the charger fleet.
const (
	evWorkplace = iota
	evOvernight
	evDepot
	evDerated
)

// chargersScenario: EV chargers with calendar-bound use and switches
// during the day.
func chargersScenario() *scenario {
	return withPlant(&scenario{
		name: "chargers", sites: 400, weeks: 4, step: 15 * time.Minute,
		channels: []channelSpec{
			{Channel{"power", "kW"}, 1, 100},
			{Channel{"plugged", "1"}, 0, 0},
			{Channel{"connector_temp", "°C"}, 1, 30},
		},
		regimes: []string{evWorkplace: "workplace", evOvernight: "overnight", evDepot: "depot", evDerated: "derated"},
		shares:  []float64{evWorkplace: 0.35, evOvernight: 0.35, evDepot: 0.2, evDerated: 0.1},
		next: [][]int{
			evWorkplace: {evOvernight},
			evOvernight: {evWorkplace},
			evDepot:     {evDerated},
			evDerated:   {evDepot},
		},
		frozen:  noneFrozen(4),
		climate: climateSpec{mean: 14, trend: 0.05, swing: 5, weather: 2.5},
		midday:  10 * time.Hour, switchShare: 0.15,
	}, &plantModel{
		prefix: "EV", kind: "charger", area: [4]float64{55.4, 9.0, 56.4, 12.4},
		signal: func(u *unit, r int, m *moment, out []float64) {
			var plugged bool
			kw := 0.0
			switch r {
			case evWorkplace:
				plugged = !m.weekend && m.between(8+0.5*u.p[0], 17) && u.duty(0, m, 200, 40)
				kw = 11
			case evOvernight:
				plugged = m.between(19+0.5*u.p[0], 7) && u.duty(0, m, 400, 60)
				kw = 7.4
			case evDepot:
				plugged = m.between(22, 5)
				kw = 50
			case evDerated:
				plugged = m.between(22, 5)
				kw = 18
			}
			power := 0.0
			if plugged {
				power = kw * (0.9 + 0.1*m.rng.Float64())
			}
			out[0] = power
			out[1] = onOff(plugged)
			out[2] = u.follow(0, m, m.air+0.5*power, 30*time.Minute) + 0.3*m.n()
		},
	})
}

// Regimes of the irrigation fleet.
const (
	irrSprinkler = iota
	irrDrip
	irrOff
	irrLeak
)

// irrigationScenario: irrigation pumps whose running time follows shared
// rainy weather; a leaking main shows in the pressure only.
func irrigationScenario() *scenario {
	return withPlant(&scenario{
		name: "irrigation", sites: 120, weeks: 10, step: 10 * time.Minute,
		channels: []channelSpec{
			{Channel{"flow", "m³/h"}, 1, 100},
			{Channel{"pressure", "bar"}, 2, 3},
			{Channel{"current", "A"}, 1, 40},
			{Channel{"soil_moisture", "%"}, 1, 0},
		},
		regimes: []string{irrSprinkler: "sprinkler", irrDrip: "drip", irrOff: "off-season", irrLeak: "leaking-main"},
		shares:  []float64{irrSprinkler: 0.4, irrDrip: 0.3, irrOff: 0.2, irrLeak: 0.1},
		next: [][]int{
			irrSprinkler: {irrLeak, irrOff, irrDrip},
			irrDrip:      {irrSprinkler, irrOff},
			irrOff:       {irrSprinkler, irrDrip},
			irrLeak:      {irrSprinkler},
		},
		frozen:  noneFrozen(4),
		climate: climateSpec{mean: 22, trend: 0.05, swing: 7, weather: 3},
		absent:  []int{3}, absentShare: 0.04,
	}, &plantModel{
		prefix: "IP", kind: "irrigation pump", area: [4]float64{37.2, -6.2, 38.4, -4.4},
		signal: func(u *unit, r int, m *moment, out []float64) {
			// Cool, wet days need less water: every schedule runs shorter.
			hours := 6 * min(max(1+0.12*m.weather, 0.4), 1.4)
			var on bool
			rated := 90 * math.Exp(0.2*u.p[0])
			head := 3.6 * (1 + 0.05*u.p[1])
			switch r {
			case irrSprinkler, irrLeak:
				on = m.between(22, math.Mod(22+hours, 24))
			case irrDrip:
				// Drip lines run twice as long at a third of the flow and
				// under half the pressure.
				on = m.between(5, 5+2*hours)
				rated, head = rated*0.35, head*0.45
			}
			static := 0.6
			if r == irrLeak {
				head *= 0.6
				static = 0.15
			}
			flow, pressure, current := 0.0, static+0.03*m.n(), 0.0
			if on {
				flow = rated * (1 + 0.02*m.n())
				pressure = head * (1 + 0.015*m.n())
				current = 0.1 * rated * head * (1 + 0.02*m.n())
			}
			wet := 0.0
			if r != irrOff {
				wet = 6
			}
			out[0], out[1], out[2] = flow, pressure, current
			out[3] = u.follow(0, m, 24+3*u.p[2]+wet-0.8*m.weather, 36*time.Hour) + 0.2*m.n()
		},
	})
}
