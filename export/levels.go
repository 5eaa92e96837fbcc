package export

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/model"
)

// Levels are the typical raw levels of the channels in each regime and in
// the whole run (features.Levels over the windows of each decoded regime),
// with the channels' units, for the regime descriptions.
type Levels struct {
	Regimes map[int][]features.Level // by regime ID
	Fleet   []features.Level         // over every window of the run
	Units   map[string]string        // by channel; a channel without one reads bare
}

// maxLevels is the number of channels a regime's description names.
const maxLevels = 4

// described returns r with a copy of its model whose regime descriptions
// read in engineering terms (describe), for every output that shows them;
// the model file is written from r.Model itself.
func described(r *Run) *Run {
	c := *r
	m := *r.Model
	m.Regimes = slices.Clone(m.Regimes)
	for i := range m.Regimes {
		m.Regimes[i].Description = describe(r.Levels, m.Regimes[i])
	}
	c.Model = &m
	return &c
}

// Described returns the regimes of m described as the outputs describe
// them, from the levels the model keeps (model.Levels) in the units it
// records; without levels, a model written before format version 6, the
// standardised differences alone. m is not changed.
func Described(m *model.Model) []mapper.Regime {
	out := slices.Clone(m.Regimes)
	if m.Levels == nil {
		return out
	}
	lv := &Levels{Regimes: m.Levels.Regimes, Fleet: m.Levels.Fleet, Units: m.Units}
	for i := range out {
		out[i].Description = describe(lv, out[i])
	}
	return out
}

// describe writes a regime as the typical levels of its channels beside
// the fleet's, then the standardised differences that set it apart:
// "vibration median 7.1 mm/s (fleet 2.3), flow median 12 m3/h (fleet 48);
// apart: vibration.p95 +2.1σ, flow.mean −1.4σ". The channels are those of
// the regime's traits, strongest first, then the others by name, at most
// maxLevels; a regime without windows in the run has its traits alone.
func describe(lv *Levels, g mapper.Regime) string {
	var parts []string
	for _, l := range regimeLevels(lv, g) {
		if len(parts) == maxLevels {
			break
		}
		parts = append(parts, fmt.Sprintf("%s median %s (fleet %s)", l.Channel, withUnit(l.Median, lv.Units[l.Channel]), number(fleetLevel(lv, l.Channel).Median)))
	}
	if len(parts) == 0 {
		return g.Description
	}
	text := strings.Join(parts, ", ")
	if g.Description != "" {
		text += "; apart: " + g.Description
	}
	return text
}

// regimeLevels returns the levels of the regime's channels with readings,
// the channels of its traits first, strongest first, then the others by
// name.
func regimeLevels(lv *Levels, g mapper.Regime) []features.Level {
	if lv == nil {
		return nil
	}
	var order []string
	for _, t := range g.Traits {
		for _, ch := range features.Channels([]string{t.Feature}) {
			if !slices.Contains(order, ch) {
				order = append(order, ch)
			}
		}
	}
	rank := func(ch string) int {
		if i := slices.Index(order, ch); i >= 0 {
			return i
		}
		return len(order)
	}
	var out []features.Level
	for _, l := range lv.Regimes[g.ID] {
		if l.Readings > 0 {
			out = append(out, l)
		}
	}
	slices.SortStableFunc(out, func(a, b features.Level) int {
		if d := rank(a.Channel) - rank(b.Channel); d != 0 {
			return d
		}
		return strings.Compare(a.Channel, b.Channel)
	})
	return out
}

// fleetLevel returns the fleet's level of a channel.
func fleetLevel(lv *Levels, ch string) features.Level {
	for _, l := range lv.Fleet {
		if l.Channel == ch {
			return l
		}
	}
	return features.Level{Channel: ch, Median: math.NaN(), P95: math.NaN()}
}

// levelProps is the "levels" property of a regime in regimes.geojson: an
// object keyed by channel, one field whatever the channels.
func levelProps(lv *Levels, g mapper.Regime) props {
	var p props
	if lv == nil {
		return p
	}
	for _, l := range lv.Regimes[g.ID] {
		f := fleetLevel(lv, l.Channel)
		var q props
		q.add("unit", lv.Units[l.Channel])
		q.add("readings", l.Readings)
		q.add("median", l.Median)
		q.add("p95", l.P95)
		q.add("fleet_median", f.Median)
		q.add("fleet_p95", f.P95)
		p.add(l.Channel, q)
	}
	return p
}

// withUnit writes a value and its unit, if any.
func withUnit(v float64, unit string) string {
	if unit == "" {
		return number(v)
	}
	return number(v) + " " + unit
}

// number writes v to three significant digits without an exponent, as an
// engineer reads a gauge: 1234, 12.3, 0.0123.
func number(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "–"
	}
	if v == 0 {
		return "0"
	}
	decimals := max(0, 2-int(math.Floor(math.Log10(math.Abs(v)))))
	s := strconv.FormatFloat(v, 'f', decimals, 64)
	if strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	return strings.Replace(s, "-", "\u2212", 1)
}

// regimeLabel returns the user's name and status of regime id of m, ""
// when it has none.
func regimeLabel(m *model.Model, id int) (name, status string) {
	for _, g := range m.Regimes {
		if g.ID == id {
			return g.Name, g.Status
		}
	}
	return "", ""
}
