package export

import (
	"bytes"
	"encoding/json"
	"fmt"
	"image/color"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/geojson"
	"github.com/paulmach/orb/simplify"

	"github.com/kinmap/kinmap/export/picture"
	"github.com/kinmap/kinmap/features"
)

// props is a feature's properties in a fixed order, so that GIS tools show
// the fields in that order.
type props []prop

type prop struct {
	key   string
	value any // nil, string, bool, int, int64, float64 or time.Time
}

func (p *props) add(key string, value any) { *p = append(*p, prop{key, value}) }

// MarshalJSON writes the properties as an object. Floats always carry a
// decimal point or an exponent, so that a column of whole values is still
// read as Real rather than Integer; NaN and infinities become null; times
// are RFC 3339 strings in UTC.
func (p props) MarshalJSON() ([]byte, error) {
	var b bytes.Buffer
	b.WriteByte('{')
	for i, kv := range p {
		if i > 0 {
			b.WriteByte(',')
		}
		k, _ := json.Marshal(kv.key)
		b.Write(k)
		b.WriteByte(':')
		switch v := kv.value.(type) {
		case float64:
			if math.IsNaN(v) || math.IsInf(v, 0) {
				b.WriteString("null")
				continue
			}
			s := strconv.FormatFloat(v, 'g', -1, 64)
			if !strings.ContainsAny(s, ".e") {
				s += ".0"
			}
			b.WriteString(s)
		case time.Time:
			j, _ := json.Marshal(rfc3339(v))
			b.Write(j)
		default:
			j, err := json.Marshal(v)
			if err != nil {
				return nil, fmt.Errorf("property %q: %w", kv.key, err)
			}
			b.Write(j)
		}
	}
	b.WriteByte('}')
	return b.Bytes(), nil
}

type feature = geojson.FeatureOf[props]

// writeCollection writes features as an RFC 7946 FeatureCollection
// (section 3.3), one feature per line.
func writeCollection(w io.Writer, features []*feature) error {
	var b bytes.Buffer
	b.WriteString(`{"type":"FeatureCollection","features":[`)
	for i, f := range features {
		j, err := json.Marshal(f)
		if err != nil {
			return err
		}
		if i > 0 {
			b.WriteByte(',')
		}
		b.WriteByte('\n')
		b.Write(j)
	}
	b.WriteString("\n]}\n")
	_, err := w.Write(b.Bytes())
	return err
}

func point(s *site) orb.Geometry {
	if !s.located {
		return nil
	}
	return orb.Point(roundPosition(s.lon, s.lat))
}

// reserved are the property names of sites.geojson that kinmap sets itself.
func reserved() map[string]bool {
	r := map[string]bool{}
	for _, k := range []string{"site", "regime", "regime_name", "regime_status", "dominant_regime", "shares", "windows", "switches", "last_switch", "last_switch_onset", "col", "row", "qe", "unfamiliar", "unfamiliar_windows", "mobile", "home_lon", "home_lat"} {
		r[k] = true
	}
	return r
}

// shares is the share of a site's windows in each regime of the model,
// keyed by regime ID in ascending order: one field whatever the number of
// regimes, so that a GIS style keeps working when it changes.
func shares(ids []int, s *site) props {
	var p props
	for _, id := range ids {
		p.add(strconv.Itoa(id), round(float64(s.count[id])/float64(len(s.windows)), 4))
	}
	return p
}

// attrName is the property name of a register attribute: its own, or
// prefixed by "register_" when kinmap uses that name itself.
func attrName(name string, taken map[string]bool) string {
	if taken[name] {
		return "register_" + name
	}
	return name
}

func siteFeatures(r *Run, ss []*site) []*feature {
	ids := regimeIDs(r)
	taken := reserved()
	var out []*feature
	for _, s := range ss {
		var p props
		p.add("site", s.id)
		if r.Register != nil {
			for i, v := range s.attrValues(r.Register.AttrNames) {
				p.add(attrName(r.Register.AttrNames[i], taken), v)
			}
		}
		p.add("regime", s.last.Regime)
		name, status := regimeLabel(r.Model, s.last.Regime)
		p.add("regime_name", name)
		p.add("regime_status", status)
		p.add("dominant_regime", s.dominant)
		p.add("shares", shares(ids, s))
		p.add("windows", len(s.windows))
		p.add("switches", s.switches)
		if s.lastSw.IsZero() {
			p.add("last_switch", nil)
		} else {
			p.add("last_switch", s.lastSw)
		}
		if s.lastOnset.IsZero() {
			p.add("last_switch_onset", nil)
		} else {
			p.add("last_switch_onset", s.lastOnset)
		}
		col, row := r.Model.Map.Lattice.Cell(s.last.Unit)
		p.add("col", col)
		p.add("row", row)
		p.add("qe", significant(s.meanQE, 6))
		p.add("unfamiliar", s.unfamiliar > 0)
		p.add("unfamiliar_windows", s.unfamiliar)
		p.add("likely_condition", s.last.Condition)
		p.add("condition_confidence", significant(s.last.ConditionConfidence, 6))
		p.add("mobile", s.mobile)
		if s.homed {
			h := roundPosition(s.home[0], s.home[1])
			p.add("home_lon", h[0])
			p.add("home_lat", h[1])
		} else {
			p.add("home_lon", nil)
			p.add("home_lat", nil)
		}
		out = append(out, &feature{ID: s.id, Type: "Feature", Geometry: point(s), Properties: p})
	}
	return out
}

func regimeFeatures(r *Run, ss []*site) []*feature {
	var out []*feature
	for _, g := range r.Model.Regimes {
		var mp orb.MultiPoint
		var names []string
		for _, s := range ss {
			if s.last.Regime != g.ID {
				continue
			}
			names = append(names, s.id)
			if s.located {
				mp = append(mp, orb.Point(roundPosition(s.lon, s.lat)))
			}
		}
		var geom orb.Geometry
		if len(mp) > 0 {
			geom = mp
		}
		var p props
		p.add("regime", g.ID)
		p.add("regime_name", g.Name)
		p.add("regime_status", g.Status)
		p.add("description", g.Description)
		p.add("levels", levelProps(r.Levels, g))
		p.add("colour", hex(picture.RegimeColour(g.ID)))
		p.add("sites", len(names))
		p.add("site_ids", strings.Join(names, ","))
		p.add("units", len(g.Units))
		out = append(out, &feature{ID: g.ID, Type: "Feature", Geometry: geom, Properties: p})
	}
	return out
}

// trackTolerance is the Douglas–Peucker tolerance, in degrees, to which
// tracks are simplified: about 55 m of latitude, finer than a fleet map
// shows, while a vehicle's hourly positions along a road fall to a few
// points (D. H. Douglas and T. K. Peucker, "Algorithms for the reduction
// of the number of points required to represent a digitized line or its
// caricature", The Canadian Cartographer 10(2), 1973).
const trackTolerance = 0.0005

// trackFeatures draws each mobile site's path as one LineString per regime
// segment (a run of windows in the same regime). The path is the site's
// positions at features.PathStep (features.Table.Paths), or its window
// centroids when the table has none; a position belongs to the segment of
// the last window that starts at or before it (the first, for positions
// before any window). Each line is simplified (trackTolerance) keeping
// its ends, and starts at the last position of the line before it, so the
// track is continuous; a segment with fewer than two distinct positions is
// left out.
func trackFeatures(r *Run, ss []*site) []*feature {
	simplifier := simplify.DouglasPeucker(trackTolerance)
	var out []*feature
	for _, s := range ss {
		if !s.mobile {
			continue
		}
		// The segments: indexes into s.windows where a new regime starts.
		starts := []int{0}
		for j := 1; j < len(s.windows); j++ {
			if r.Table.Windows[s.windows[j]].Regime != r.Table.Windows[s.windows[j-1]].Regime {
				starts = append(starts, j)
			}
		}
		positions := trackPositions(r, s)
		var line orb.LineString
		at := 0 // next position
		for k, j := range starts {
			end := len(s.windows)
			if k+1 < len(starts) {
				end = starts[k+1]
			}
			for ; at < len(positions) && (end == len(s.windows) || positions[at].Time.Before(r.Table.Windows[s.windows[end]].Start)); at++ {
				line = append(line, orb.Point(roundPosition(positions[at].Lon, positions[at].Lat)))
			}
			first, last := r.Table.Windows[s.windows[j]], r.Table.Windows[s.windows[end-1]]
			if distinct(line) {
				var p props
				p.add("site", s.id)
				p.add("regime", first.Regime)
				p.add("start", first.Start)
				p.add("end", last.End)
				p.add("windows", end-j)
				p.add("colour", hex(picture.RegimeColour(first.Regime)))
				out = append(out, &feature{Type: "Feature", Geometry: simplifier.Simplify(slices.Clone(line)), Properties: p})
			}
			// The next segment starts where this one ended.
			if n := len(line); n > 0 {
				line = orb.LineString{line[n-1]}
			}
		}
	}
	return out
}

// trackPositions is the path of a site, or its located window centroids
// at the start of each window when the table keeps no path for it.
func trackPositions(r *Run, s *site) []features.Fix {
	var out []features.Fix
	for _, f := range r.Table.Paths[s.id] {
		if validPosition(f.Lon, f.Lat) {
			out = append(out, f)
		}
	}
	if len(out) > 0 {
		return out
	}
	for _, i := range s.windows {
		if w := r.Table.Windows[i]; w.Located && validPosition(w.Lon, w.Lat) {
			out = append(out, features.Fix{Time: w.Start, Lat: w.Lat, Lon: w.Lon})
		}
	}
	return out
}

func distinct(line orb.LineString) bool {
	for _, p := range line[min(1, len(line)):] {
		if p != line[0] {
			return true
		}
	}
	return false
}

func hex(c color.RGBA) string { return fmt.Sprintf("#%02x%02x%02x", c.R, c.G, c.B) }

func significant(v float64, digits int) float64 {
	f, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'g', digits, 64), 64)
	return f
}

// rfc3339 writes a time in UTC with a Z (RFC 3339, section 5.6), to the
// microsecond like the Parquet files.
func rfc3339(t time.Time) string { return micro(t).Format(time.RFC3339Nano) }
