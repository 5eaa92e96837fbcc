package scenarios

import (
	"math"
	"time"
)

// Regimes of the air-handling unit fleet.
const (
	ahuOffice = iota
	ahuResidential
	ahuContinuous
)

// ahusScenario: air-handling units on office, residential and
// round-the-clock schedules; an office's weekend resembles a residential
// weekday.
func ahusScenario() *scenario {
	return withPlant(&scenario{
		name: "ahus", sites: 300, weeks: 5, step: 15 * time.Minute,
		channels: []channelSpec{
			{Channel{"supply_temp", "°C"}, 1, 15},
			{Channel{"return_temp", "°C"}, 1, 15},
			{Channel{"fan_speed", "%"}, 0, 0},
			{Channel{"valve", "%"}, 0, 0},
			{Channel{"co2", "ppm"}, 0, 800},
		},
		regimes: []string{ahuOffice: "office", ahuResidential: "residential", ahuContinuous: "continuous"},
		shares:  []float64{ahuOffice: 0.45, ahuResidential: 0.35, ahuContinuous: 0.2},
		next: [][]int{
			ahuOffice:      {ahuContinuous, ahuResidential},
			ahuResidential: {ahuOffice},
			ahuContinuous:  {ahuOffice},
		},
		frozen:  noneFrozen(3),
		climate: climateSpec{mean: 11, trend: -0.1, swing: 5, weather: 3},
	}, &plantModel{
		prefix: "AH", kind: "air handler", area: [4]float64{51.9, 4.1, 52.5, 5.2},
		signal: func(u *unit, r int, m *moment, out []float64) {
			fan, people := 0.0, 0.0
			switch r {
			case ahuOffice:
				switch {
				case !m.weekend && m.between(7, 19):
					fan, people = 80, 1
				case m.weekend && m.between(6, 8):
					fan = 30 // a flush run at the weekend
				}
			case ahuResidential:
				if m.between(6, 9) || m.between(17, 23) || (m.weekend && m.between(9, 17)) {
					fan, people = 45, 0.6
				}
			case ahuContinuous:
				fan, people = 70, 0.5+0.3*m.cycle(13)
			}
			fan += 3 * u.p[0] * onOff(fan > 0)
			valve := 0.0
			if fan > 0 {
				valve = min(max(50-4*(m.air-12)+5*u.p[1], 0), 100)
			}
			room := u.follow(0, m, 20+2*people+0.1*(m.air-12), 2*time.Hour)
			co2 := u.follow(1, m, 420+450*people*(1+0.1*u.p[2]), time.Hour)
			supply := m.air + 0.2*valve
			if fan == 0 {
				supply = room - 2
			}
			out[0] = supply + 0.3*m.n()
			out[1] = room + 0.2*m.n()
			out[2] = max(fan+m.n(), 0)
			out[3] = valve
			out[4] = co2 + 10*m.n()
		},
	})
}

// Regimes of the cold-room fleet.
const (
	coldModulating = iota
	coldCycling
	coldStuck
	coldIced
)

// coldroomsScenario: cold rooms whose compressors modulate or cycle on and
// off, with rare stuck probes and iced evaporators.
func coldroomsScenario() *scenario {
	return withPlant(&scenario{
		name: "coldrooms", sites: 200, weeks: 4, step: 5 * time.Minute,
		channels: []channelSpec{
			{Channel{"room_temp", "°C"}, 1, 15},
			{Channel{"evap_temp", "°C"}, 1, 15},
			{Channel{"current", "A"}, 1, 20},
			{Channel{"door_open", "1"}, 2, 0},
		},
		regimes: []string{coldModulating: "modulating", coldCycling: "cycling", coldStuck: "stuck-probe", coldIced: "iced-evaporator"},
		shares:  []float64{coldModulating: 0.5, coldCycling: 0.44, coldStuck: 0.03, coldIced: 0.03},
		next: [][]int{
			coldModulating: {coldIced, coldCycling},
			coldCycling:    {coldStuck, coldModulating},
			coldStuck:      {coldCycling},
			coldIced:       {coldModulating},
		},
		frozen:      []int{-1, -1, 0, -1},
		climate:     climateSpec{mean: 20, trend: 0.05, swing: 5, weather: 2},
		switchShare: 0.06,
	}, &plantModel{
		prefix: "CR", kind: "cold room", area: [4]float64{45.3, 8.6, 45.9, 9.8},
		signal: func(u *unit, r int, m *moment, out []float64) {
			set := 2 + 0.5*u.p[0]
			door := 0.0
			if m.between(6, 18) && !m.weekend && m.rng.Float64() < 0.3 {
				door = 0.1 + 0.2*m.rng.Float64()
			}
			amps := 9 * math.Exp(0.15*u.p[1])
			var room, evap, current float64
			switch r {
			case coldModulating:
				room = set + 0.2*m.n() + 3*door
				evap = set - 8 + 0.3*m.n()
				current = amps * (0.55 + 0.01*(m.air-20) + 0.4*door) * (1 + 0.03*m.n())
			case coldCycling, coldStuck:
				on := u.duty(0, m, 25, 35)
				room = u.follow(1, m, set+1.5-3*onOff(on)+4*door, 40*time.Minute) + 0.1*m.n()
				evap = set - 1 - 10*onOff(on) + 0.3*m.n()
				current = (amps*onOff(on) + 0.3) * (1 + 0.03*m.n())
			case coldIced:
				room = set + 2 + 0.3*m.n() + 3*door
				evap = set - 17 + 0.5*m.n()
				current = amps * 0.95 * (1 + 0.03*m.n())
			}
			out[0], out[1], out[2], out[3] = room, evap, current, door
		},
	})
}

// Regimes of the boiler fleet.
const (
	boilSummer = iota
	boilHeating
	boilFrost
)

// boilersScenario: heating boilers whose set point ramps over half a day
// when the season's mode changes.
func boilersScenario() *scenario {
	return withPlant(&scenario{
		name: "boilers", sites: 180, weeks: 5, step: 5 * time.Minute,
		channels: []channelSpec{
			{Channel{"flow_temp", "°C"}, 1, 30},
			{Channel{"return_temp", "°C"}, 1, 30},
			{Channel{"burner", "1"}, 2, 0},
			{Channel{"gas_flow", "m³/h"}, 2, 10},
			{Channel{"pressure", "bar"}, 2, 1},
		},
		regimes: []string{boilSummer: "hot-water-only", boilHeating: "space-heating", boilFrost: "frost-protection"},
		shares:  []float64{boilSummer: 0.4, boilHeating: 0.4, boilFrost: 0.2},
		next: [][]int{
			boilSummer:  {boilHeating},
			boilHeating: {boilSummer, boilFrost},
			boilFrost:   {boilHeating},
		},
		frozen:      noneFrozen(3),
		climate:     climateSpec{mean: 10, trend: -0.15, swing: 4, weather: 3},
		midday:      10 * time.Hour,
		switchShare: 0.2,
	}, &plantModel{
		prefix: "BL", kind: "boiler house", area: [4]float64{48.0, 15.5, 48.6, 16.8},
		ramp: 12 * time.Hour,
		signal: func(u *unit, r int, m *moment, out []float64) {
			size := 12 * math.Exp(0.2*u.p[0])
			var set, fire float64
			switch r {
			case boilSummer:
				set, fire = 60, 0.12+0.1*onOff(m.between(6, 8) || m.between(18, 21))
			case boilHeating:
				set = 72 + 1.0*(10-m.air)
				fire = min(max(0.55+0.03*(10-m.air)+0.1*m.cycle(6), 0.1), 1)
			case boilFrost:
				set, fire = 30, 0.05
			}
			flow := set + 2*u.p[1] + 0.5*m.n()
			drop := 8 + 12*fire
			out[0] = flow
			out[1] = flow - drop + 0.4*m.n()
			out[2] = min(max(fire+0.03*m.n(), 0), 1)
			out[3] = max(size*fire*(1+0.03*m.n()), 0)
			out[4] = 1.6 + 0.1*u.p[2] + 0.004*flow + 0.01*m.n()
		},
	})
}

// Regimes of the data-hall cooling fleet.
const (
	dhNormal = iota
	dhHighLoad
	dhEconomiser
	dhFilter
	dhStuckHumidity
)

// datahallsScenario: data-hall cooling units sampled every minute, with a
// clogging filter that drifts from a dated onset and a rare stuck humidity
// sensor.
func datahallsScenario() *scenario {
	return withPlant(&scenario{
		name: "datahalls", sites: 50, weeks: 3, step: time.Minute,
		channels: []channelSpec{
			{Channel{"supply_air", "°C"}, 1, 10},
			{Channel{"return_air", "°C"}, 1, 10},
			{Channel{"fan_power", "kW"}, 2, 5},
			{Channel{"chw_valve", "%"}, 0, 0},
			{Channel{"humidity", "%"}, 1, 0},
		},
		regimes: []string{dhNormal: "normal", dhHighLoad: "high-load", dhEconomiser: "economiser", dhFilter: "filter-clogging", dhStuckHumidity: "stuck-humidity"},
		shares:  []float64{dhNormal: 0.38, dhHighLoad: 0.22, dhEconomiser: 0.2, dhFilter: 0.16, dhStuckHumidity: 0.04},
		next: [][]int{
			dhNormal:        {dhFilter, dhHighLoad},
			dhHighLoad:      {dhNormal},
			dhEconomiser:    {dhNormal},
			dhFilter:        {dhNormal},
			dhStuckHumidity: {dhNormal},
		},
		frozen:      []int{-1, -1, -1, -1, 4},
		climate:     climateSpec{mean: 12, trend: 0, swing: 5, weather: 2.5},
		switchShare: 0.16,
	}, &plantModel{
		prefix: "DH", kind: "data hall", area: [4]float64{53.2, -6.6, 53.5, -6.0},
		signal: func(u *unit, r int, m *moment, out []float64) {
			it := 1 + 0.08*m.cycle(15) + 0.05*u.p[0]
			fan, valve, supply, warm := 7.5*(1+0.05*u.p[1]), 45.0, 18.0, 0.0
			switch r {
			case dhHighLoad:
				it *= 1.4
				valve = 75
			case dhEconomiser:
				valve, supply = 5, 16+0.3*(m.air-12)
			case dhFilter:
				// A filter that clogs from its onset: a step, then a slow
				// rise; less air crosses the coil, so the return air warms.
				clog := 0.6 + 0.02*min(m.days, 20)
				fan *= 1 + clog
				warm = 5 * clog
			}
			fan *= it
			out[0] = supply + 0.2*m.n()
			out[1] = supply + 9*it + warm + 0.3*m.n()
			out[2] = fan * (1 + 0.02*m.n())
			out[3] = min(max(valve+5*u.p[2]+20*(it-1)+2*m.n(), 0), 100)
			out[4] = 45 + 3*u.p[3] - 0.5*(out[1]-27) + 0.5*m.n()
		},
	})
}

// Regimes of the heat-pump fleet.
const (
	hpHeating = iota
	hpCooling
	hpStandby
	hpShortCycling
	hpDefrost
	hpBackup
)

// heatpumpsScenario: air-source heat pumps with six regimes, among them a
// diffuse short-cycling one.
func heatpumpsScenario() *scenario {
	return withPlant(&scenario{
		name: "heatpumps", sites: 300, weeks: 5, step: 10 * time.Minute,
		channels: []channelSpec{
			{Channel{"flow_temp", "°C"}, 1, 20},
			{Channel{"outdoor_temp", "°C"}, 1, 15},
			{Channel{"power", "kW"}, 2, 5},
			{Channel{"compressor_hz", "Hz"}, 0, 0},
			{Channel{"defrost", "1"}, 2, 0},
		},
		regimes: []string{hpHeating: "heating", hpCooling: "cooling", hpStandby: "standby", hpShortCycling: "short-cycling", hpDefrost: "iced-coil", hpBackup: "backup-heater"},
		shares:  []float64{hpHeating: 0.3, hpCooling: 0.18, hpStandby: 0.15, hpShortCycling: 0.15, hpDefrost: 0.1, hpBackup: 0.12},
		next: [][]int{
			hpHeating:      {hpShortCycling, hpDefrost, hpBackup, hpStandby},
			hpCooling:      {hpStandby},
			hpStandby:      {hpHeating, hpCooling},
			hpShortCycling: {hpHeating},
			hpDefrost:      {hpHeating},
			hpBackup:       {hpHeating},
		},
		frozen:  noneFrozen(6),
		climate: climateSpec{mean: 6, trend: 0.1, swing: 4, weather: 3},
		absent:  []int{4}, absentShare: 0.03,
	}, &plantModel{
		prefix: "HP", kind: "heat pump", area: [4]float64{59.0, 10.0, 60.2, 11.5},
		signal: func(u *unit, r int, m *moment, out []float64) {
			size := 1 + 0.15*u.p[0]
			flow, power, hz, defrost := 22.0, 0.05, 0.0, 0.0
			demand := min(max(0.4+0.04*(6-m.air), 0.1), 1)
			switch r {
			case hpHeating:
				flow, hz, power = 38+0.5*(6-m.air), 30+40*demand, size*(1+3*demand)
			case hpCooling:
				flow, hz, power = 9, 45, size*2.2
			case hpShortCycling:
				if u.duty(0, m, 12, 18) {
					flow, hz, power = 40, 70, size*4
				} else {
					flow = u.follow(1, m, 28, 20*time.Minute)
				}
			case hpDefrost:
				flow, hz, power = 33, 60, size*3.5
				if math.Mod(m.hour, 1) < 0.3 {
					defrost, flow, hz = 1, 25, 30
				}
			case hpBackup:
				flow, power = 40+0.5*(6-m.air), size*7
			}
			out[0] = flow + 0.5*m.n()
			out[1] = m.air + 0.5*u.p[1] + 0.2*m.n()
			out[2] = max(power*(1+0.03*m.n()), 0)
			out[3] = math.Round(max(hz+m.n(), 0))
			out[4] = defrost
		},
	})
}
