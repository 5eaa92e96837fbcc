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
	g     grid
	daily []float64 // daily means
}

func newClimate(g grid, spec climateSpec, rng *rand.Rand) *climate {
	c := &climate{spec: spec, g: g, daily: make([]float64, g.windows+2)}
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
	return c.mean(k) + c.spec.swing*math.Cos(2*math.Pi*(c.g.hour(k, lon)-15)/24)
}

// mean returns the daily mean air temperature around slot k, interpolated
// between the days, in °C.
func (c *climate) mean(k int) float64 {
	day := float64(k) / float64(c.g.per)
	d := min(int(day), len(c.daily)-2)
	frac := day - float64(d)
	return c.daily[d]*(1-frac) + c.daily[d+1]*frac
}

// anomaly returns the weather of slot k: the daily mean air temperature
// less the seasonal one, in °C.
func (c *climate) anomaly(k int) float64 {
	return c.mean(k) - c.spec.mean - c.spec.trend*float64(k)/float64(c.g.per)
}

// hour returns the local solar time of slot k at longitude lon in hours
// since midnight. Slot 0 is a midnight UTC.
func (g grid) hour(k int, lon float64) float64 {
	h := float64(k%g.per)*g.step.Hours() + lon/15
	return math.Mod(h+24, 24)
}

// cycle is a cosine of the local solar time peaking at hour peak.
func (g grid) cycle(k int, lon, peak float64) float64 {
	return math.Cos(2 * math.Pi * (g.hour(k, lon) - peak) / 24)
}

// lag is the weight a first-order lag with time constant tau gives each new
// input at one sampling step.
func (g grid) lag(tau time.Duration) float64 {
	return 1 - math.Exp(-float64(g.step)/float64(tau))
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
