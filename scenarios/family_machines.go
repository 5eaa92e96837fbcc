package scenarios

import (
	"math"
	"time"
)

// Regimes of the weather-mast fleet.
const (
	mastExposed = iota
	mastSheltered
	mastIced
)

// mastsScenario: weather masts sampled every minute, with a rare iced
// anemometer.
func mastsScenario() *scenario {
	return withPlant(&scenario{
		name: "masts", sites: 80, weeks: 3, step: time.Minute,
		channels: []channelSpec{
			{Channel{"wind", "m/s"}, 1, 15},
			{Channel{"air_temp", "°C"}, 1, 15},
			{Channel{"humidity", "%"}, 0, 0},
			{Channel{"pressure", "hPa"}, 1, 20},
		},
		regimes: []string{mastExposed: "exposed", mastSheltered: "sheltered", mastIced: "iced-anemometer"},
		shares:  []float64{mastExposed: 0.6, mastSheltered: 0.37, mastIced: 0.025},
		next: [][]int{
			mastExposed:   {mastIced},
			mastSheltered: {},
			mastIced:      {mastExposed},
		},
		frozen:      []int{-1, -1, 0},
		climate:     climateSpec{mean: 4, trend: -0.05, swing: 4, weather: 3},
		switchShare: 0.05,
	}, &plantModel{
		prefix: "WM", kind: "mast", area: [4]float64{61.5, 8.0, 62.5, 10.0},
		signal: func(u *unit, r int, m *moment, out []float64) {
			mean, temp := 9+0.8*u.p[0], m.air-3+0.5*u.p[1]
			if r == mastSheltered {
				mean, temp = 3.5+0.4*u.p[0], m.air+2+0.5*u.p[1]
			}
			gust := u.follow(0, m, m.n(), 10*time.Minute)
			out[0] = max(mean*(1+0.08*m.weather)*(1+0.25*gust), 0)
			if r == mastIced {
				out[0] = 0 // the cups are frozen still
			}
			out[1] = temp + 0.1*m.n()
			out[2] = min(max(80-2*(temp-m.air)-3*m.weather+3*u.p[2]+m.n(), 5), 100)
			out[3] = 1010 - 0.12*(600+200*u.p[3]) + 2*m.weather + 0.1*m.n()
		},
	})
}

// Regimes of the wind-turbine fleet.
const (
	wtNormal = iota
	wtCurtailed
	wtGearboxWear
)

// turbinesScenario: wind turbines driven by a shared wind, with a gearbox
// that wears from a dated onset.
func turbinesScenario() *scenario {
	return withPlant(&scenario{
		name: "turbines", sites: 150, weeks: 8, step: 10 * time.Minute,
		channels: []channelSpec{
			{Channel{"wind", "m/s"}, 1, 15},
			{Channel{"power", "kW"}, 0, 0},
			{Channel{"rotor_rpm", "rpm"}, 1, 0},
			{Channel{"gearbox_temp", "°C"}, 1, 30},
			{Channel{"nacelle_temp", "°C"}, 1, 20},
			{Channel{"pitch", "°"}, 1, 0},
		},
		regimes: []string{wtNormal: "normal", wtCurtailed: "curtailed", wtGearboxWear: "gearbox-wear"},
		shares:  []float64{wtNormal: 0.7, wtCurtailed: 0.15, wtGearboxWear: 0.15},
		next: [][]int{
			wtNormal:      {wtGearboxWear, wtCurtailed},
			wtCurtailed:   {wtNormal},
			wtGearboxWear: {wtNormal},
		},
		frozen:      noneFrozen(3),
		climate:     climateSpec{mean: 12, trend: 0.05, swing: 3, weather: 3},
		switchShare: 0.2,
	}, &plantModel{
		prefix: "WTG", kind: "turbine", area: [4]float64{54.5, 8.2, 55.3, 9.2},
		signal: func(u *unit, r int, m *moment, out []float64) {
			gust := u.follow(0, m, m.n(), 30*time.Minute)
			wind := max((8+0.6*u.p[0]+0.9*m.weather)*(1+0.2*gust+0.1*m.cycle(15)), 0)
			const rated = 3000.0
			frac := min(max((wind-3)/(12-3), 0), 1)
			power := rated * frac * frac * frac
			pitch, rpm := 0.0, 0.0
			if wind > 12 {
				pitch = 2.2 * (wind - 12)
			}
			if wind > 3 {
				rpm = min(6+8*frac, 14.5)
			}
			if r == wtCurtailed {
				// A noise-reduced mode: pitched out by 6° and slower at
				// every wind speed, capped at half the rating.
				power, pitch, rpm = min(0.6*power, 0.5*rated), pitch+6, 0.8*rpm
			}
			gear := 50 + 8*power/rated + 0.3*(m.air-12) + u.p[1]
			if r == wtGearboxWear {
				// A damaged bearing heats the gearbox from its onset: a step,
				// then a slow rise that levels off after 25 days.
				gear += 14 + 0.15*min(m.days, 25)
			}
			out[0] = wind
			out[1] = max(power*(1+0.01*m.n()), 0)
			out[2] = rpm + 0.05*m.n()
			out[3] = u.follow(1, m, gear, time.Hour) + 0.2*m.n()
			out[4] = m.air + 8 + 4*power/rated + 0.3*m.n()
			out[5] = pitch + 0.1*m.n()
		},
	})
}

// Regimes of the aeration-blower fleet.
const (
	blDiurnal = iota
	blStorm
	blIntermittent
	blStandby
	blSurgeLimited
	blFilter
	blStuckDO
)

// blowersScenario: aeration blowers of wastewater works, seven regimes, a
// diffuse intermittent one, a clogging inlet filter and a rare fouled
// oxygen probe.
func blowersScenario() *scenario {
	return withPlant(&scenario{
		name: "blowers", sites: 150, weeks: 6, step: 5 * time.Minute,
		channels: []channelSpec{
			{Channel{"airflow", "Nm³/h"}, 0, 3000},
			{Channel{"pressure", "mbar"}, 0, 200},
			{Channel{"power", "kW"}, 1, 60},
			{Channel{"oxygen", "mg/l"}, 2, 0},
			{Channel{"speed", "%"}, 0, 0},
			{Channel{"inlet_temp", "°C"}, 1, 15},
		},
		regimes: []string{blDiurnal: "diurnal", blStorm: "storm-flow", blIntermittent: "intermittent", blStandby: "standby", blSurgeLimited: "surge-limited", blFilter: "filter-clogging", blStuckDO: "fouled-oxygen-probe"},
		shares:  []float64{blDiurnal: 0.28, blStorm: 0.13, blIntermittent: 0.18, blStandby: 0.14, blSurgeLimited: 0.11, blFilter: 0.12, blStuckDO: 0.04},
		next: [][]int{
			blDiurnal:      {blStorm, blFilter, blStandby},
			blStorm:        {blDiurnal},
			blIntermittent: {blDiurnal},
			blStandby:      {blDiurnal},
			blSurgeLimited: {blDiurnal},
			blFilter:       {blDiurnal},
			blStuckDO:      {blDiurnal},
		},
		frozen:      []int{-1, -1, -1, -1, -1, -1, 3},
		climate:     climateSpec{mean: 16, trend: 0.05, swing: 5, weather: 2.5},
		switchShare: 0.15,
	}, &plantModel{
		prefix: "AB", kind: "aeration blower", area: [4]float64{50.7, 3.2, 51.3, 4.8},
		signal: func(u *unit, r int, m *moment, out []float64) {
			size := 4000 * math.Exp(0.2*u.p[0])
			demand := 0.65 + 0.2*m.cycle(11)
			oxygen := 2 + 0.2*u.p[1]
			drop := 1.0
			switch r {
			case blStorm:
				demand, oxygen = 1.0+0.05*m.cycle(11), 1.2
			case blIntermittent:
				demand = 0.85 * onOff(u.duty(0, m, 40, 50))
				oxygen = u.follow(1, m, 0.3+2.5*demand, 30*time.Minute)
			case blStandby:
				demand, oxygen = 0, 0.2
			case blSurgeLimited:
				demand, oxygen = 0.55, 1.0
			case blFilter:
				// A clogged inlet filter: the blower runs flat out, draws
				// more power and still falls short of the air asked for.
				drop = 1.6 + 0.02*min(m.days, 20)
				demand *= 0.9
			}
			flow := size * demand * (1 + 0.02*m.n())
			pressure := 0.0
			if demand > 0 {
				pressure = (550 + 30*u.p[2]) * (0.9 + 0.1*demand*demand)
			}
			if r == blSurgeLimited {
				pressure += 90
			}
			speed := 70 * math.Sqrt(demand)
			if r == blFilter {
				speed = 100
			}
			power := flow * pressure / 1e5 * 3.2 * drop
			out[0] = max(flow, 0)
			out[1] = pressure + 3*m.n()
			out[2] = max(power*(1+0.02*m.n()), 0)
			out[3] = max(oxygen+0.1*m.n(), 0)
			out[4] = min(speed, 100) + 0.5*m.n()
			out[5] = m.air + 0.3*m.n()
		},
	})
}

// Regimes of the compressor-station fleet.
const (
	gcBase = iota
	gcPeak
	gcRecycle
	gcStandby
	gcShutdown
	gcCycling
	gcFouledCooler
	gcBearingWear
)

// compressorsScenario: gas compressor stations with eight regimes.
func compressorsScenario() *scenario {
	return withPlant(&scenario{
		name: "compressors", sites: 240, weeks: 6, step: 10 * time.Minute,
		channels: []channelSpec{
			{Channel{"suction_p", "bar"}, 1, 10},
			{Channel{"discharge_p", "bar"}, 1, 20},
			{Channel{"speed", "rpm"}, 0, 0},
			{Channel{"power", "MW"}, 2, 3},
			{Channel{"gas_temp", "°C"}, 1, 30},
			{Channel{"vibration", "mm/s"}, 2, 5},
			{Channel{"lube_temp", "°C"}, 1, 20},
			{Channel{"flow", "kNm³/h"}, 1, 50},
		},
		regimes: []string{gcBase: "base-load", gcPeak: "peak-load", gcRecycle: "recycle", gcStandby: "standby-pressurised", gcShutdown: "shutdown", gcCycling: "start-stop", gcFouledCooler: "fouled-cooler", gcBearingWear: "bearing-wear"},
		shares:  []float64{gcBase: 0.24, gcPeak: 0.12, gcRecycle: 0.1, gcStandby: 0.12, gcShutdown: 0.08, gcCycling: 0.12, gcFouledCooler: 0.1, gcBearingWear: 0.12},
		next: [][]int{
			gcBase:         {gcPeak, gcFouledCooler, gcBearingWear, gcStandby},
			gcPeak:         {gcBase},
			gcRecycle:      {gcBase, gcStandby},
			gcStandby:      {gcBase, gcShutdown},
			gcShutdown:     {gcStandby},
			gcCycling:      {gcBase},
			gcFouledCooler: {gcBase},
			gcBearingWear:  {gcShutdown, gcBase},
		},
		frozen:      noneFrozen(8),
		climate:     climateSpec{mean: 8, trend: 0.05, swing: 5, weather: 3},
		switchShare: 0.15,
		absent:      []int{6}, absentShare: 0.03,
	}, &plantModel{
		prefix: "CS", kind: "compressor station", area: [4]float64{49.5, 17.0, 51.0, 22.0},
		signal: func(u *unit, r int, m *moment, out []float64) {
			suction := 45 + 3*u.p[0]
			run, flowShare, ratio := 0.75, 0.75, 1.45
			cooler, shake := 0.0, 1.0
			switch r {
			case gcPeak:
				run, flowShare, ratio = 0.95, 0.95+0.03*m.cycle(18), 1.6
			case gcRecycle:
				run, flowShare, ratio = 0.8, 0.3, 1.2
			case gcStandby, gcShutdown:
				run, flowShare, ratio = 0, 0, 1
			case gcCycling:
				if !u.duty(0, m, 150, 120) {
					run, flowShare, ratio = 0, 0, 1
				}
			case gcFouledCooler:
				cooler = 18
			case gcBearingWear:
				shake = 2 + 0.08*min(m.days, 20)
			}
			if r == gcShutdown {
				suction = 2
			}
			speed, power, vib := 0.0, 0.0, 0.3
			if run > 0 {
				speed = 9000 * run * (1 + 0.01*m.n())
				power = 12 * run * run * ratio / 1.45 * (1 + 0.02*m.n())
				vib = (2.2 + 0.3*u.p[1]) * run * shake * (1 + 0.05*m.n())
			}
			gas := m.air + 8 + 35*(ratio-1) + cooler
			lube := u.follow(0, m, 40+25*run+0.2*m.air+cooler*0.3, time.Hour)
			out[0] = suction + 0.3*m.n()
			out[1] = suction*ratio + 0.3*m.n()
			out[2] = speed
			out[3] = power
			out[4] = gas + 0.5*m.n()
			out[5] = vib
			out[6] = lube + 0.2*m.n()
			out[7] = max(300*(1+0.1*u.p[2])*flowShare*(1+0.02*m.n()), 0)
		},
	})
}
