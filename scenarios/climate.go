package scenarios

import (
	"math"
	"math/rand/v2"
	"time"
)

// climateSpec describes the outside air of a region.
type climateSpec struct {
	mean    float64 // daily mean at the start, °C
	trend   float64 // seasonal change of the daily mean, °C per day
	swing   float64 // half the day-night difference, °C
	weather float64 // standard deviation of a day's mean around the season, °C
}

// climate is the outside air temperature shared by the sites of a fleet: a
// seasonal trend, day-to-day weather and a daily cycle peaking at 15:00
// local solar time.
type climate struct {
	spec  climateSpec
	daily []float64 // daily means
}

func newClimate(days int, spec climateSpec, rng *rand.Rand) *climate {
	c := &climate{spec: spec, daily: make([]float64, days+1)}
	const persistence = 0.7 // day-to-day correlation of the weather
	anomaly := rng.NormFloat64() * spec.weather
	for d := range c.daily {
		c.daily[d] = spec.mean + spec.trend*float64(d) + anomaly
		anomaly = persistence*anomaly + math.Sqrt(1-persistence*persistence)*spec.weather*rng.NormFloat64()
	}
	return c
}

// at returns the air temperature at slot k of g at longitude lon, in °C.
func (c *climate) at(k int, lon float64) float64 {
	day := float64(k) / perWindow
	d := min(int(day), len(c.daily)-2)
	frac := day - float64(d)
	mean := c.daily[d]*(1-frac) + c.daily[d+1]*frac
	return mean + c.spec.swing*math.Cos(2*math.Pi*(localHour(k, lon)-15)/24)
}

// localHour returns the local solar time of slot k at longitude lon in hours
// since midnight. Slot 0 is a midnight UTC.
func localHour(k int, lon float64) float64 {
	h := float64(k%perWindow)*step.Hours() + lon/15
	return math.Mod(h+24, 24)
}

// dailyCycle is a cosine of the local solar time peaking at hour peak.
func dailyCycle(k int, lon, peak float64) float64 {
	return math.Cos(2 * math.Pi * (localHour(k, lon) - peak) / 24)
}

// lag is the weight a first-order lag with time constant tau gives each new
// input at one sampling step.
func lag(tau time.Duration) float64 {
	return 1 - math.Exp(-float64(step)/float64(tau))
}

// placeName invents a place name from two syllables.
func placeName(rng *rand.Rand) string {
	first := []string{"Ash", "Bram", "Carr", "Dun", "Elver", "Fenn", "Garth", "Hollin", "Ives", "Kell",
		"Lang", "Morr", "Ness", "Orl", "Pell", "Quar", "Rook", "Sallow", "Thorn", "Ulver", "Vell",
		"Wend", "Yarr", "Brack", "Cress", "Drum", "Eske", "Frith", "Gorse", "Hask"}
	second := []string{"by", "mere", "holt", "wick", "stead", "ling", "ey", "combe", "dale",
		"wyn", "sett", "thwaite", "hope", "lade", "mire", "scar", "garth", "ridge"}
	return first[rng.IntN(len(first))] + second[rng.IntN(len(second))]
}
