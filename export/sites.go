package export

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"time"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/ingest"
)

// site is what the outputs say about one site.
type site struct {
	id         string
	info       *ingest.Site // register entry, nil when not registered
	windows    []int        // indexes into Run.Table.Windows, in time order
	lon, lat   float64
	located    bool
	home       [2]float64 // registered position, lon and lat
	homed      bool       // home is known
	mobile     bool       // more than one distinct window position
	last       *features.Window
	dominant   int
	count      map[int]int // windows by regime ID
	switches   int
	lastSw     time.Time // zero when the site did not switch
	lastOnset  time.Time // the drift onset of the last switch; zero when it had none
	meanQE     float64
	unfamiliar int // unfamiliar windows
}

// attrValues returns the site's register attributes in the order of
// names, nil where it has none.
func (s *site) attrValues(names []string) []any {
	values := map[string]any{}
	if s.info != nil {
		for _, a := range s.info.Attrs {
			values[a.Name] = a.Value
		}
	}
	out := make([]any, len(names))
	for i, name := range names {
		out[i] = values[name]
	}
	return out
}

// sites gathers the sites of r, sorted by ID, and the warnings about them.
func sites(r *Run) ([]*site, []string) {
	// The register's own index is built by its reader; the exported list
	// serves any register.
	registered := map[string]*ingest.Site{}
	if r.Register != nil {
		for _, s := range r.Register.Sites {
			registered[s.ID] = s
		}
	}
	byID := map[string]*site{}
	var out []*site
	for i, w := range r.Table.Windows {
		s := byID[w.Site]
		if s == nil {
			s = &site{id: w.Site, info: registered[w.Site], count: map[int]int{}}
			byID[w.Site] = s
			out = append(out, s)
		}
		s.windows = append(s.windows, i)
	}
	slices.SortFunc(out, func(a, b *site) int { return cmp.Compare(a.id, b.id) })
	for _, sw := range r.Switches {
		if s := byID[sw.Site]; s != nil {
			s.switches++
			if sw.Time.After(s.lastSw) {
				s.lastSw, s.lastOnset = sw.Time, time.Time{}
				if sw.Onset.Before(sw.Time) {
					s.lastOnset = sw.Onset
				}
			}
		}
	}
	var warnings, unlocated []string
	for _, s := range out {
		slices.SortStableFunc(s.windows, func(a, b int) int { return r.Table.Windows[a].Start.Compare(r.Table.Windows[b].Start) })
		var qe float64
		positions := map[[2]float64]bool{}
		for _, i := range s.windows {
			w := &r.Table.Windows[i]
			s.count[w.Regime]++
			qe += w.QE
			if w.Unfamiliar {
				s.unfamiliar++
			}
			if w.Located && validPosition(w.Lon, w.Lat) {
				positions[roundPosition(w.Lon, w.Lat)] = true
				s.lon, s.lat, s.located = w.Lon, w.Lat, true
			}
		}
		s.meanQE = qe / float64(len(s.windows))
		s.last = &r.Table.Windows[s.windows[len(s.windows)-1]]
		s.mobile = len(positions) > 1
		for id, n := range s.count {
			if d := s.count[s.dominant]; n > d || n == d && id < s.dominant {
				s.dominant = id
			}
		}
		if p := r.Table.Paths[s.id]; s.mobile && len(p) > 0 && validPosition(p[len(p)-1].Lon, p[len(p)-1].Lat) {
			s.lon, s.lat = p[len(p)-1].Lon, p[len(p)-1].Lat
		}
		if s.info != nil && s.info.Located {
			if validPosition(s.info.Lon, s.info.Lat) {
				s.home, s.homed = [2]float64{s.info.Lon, s.info.Lat}, true
				if !s.mobile {
					s.lon, s.lat, s.located = s.info.Lon, s.info.Lat, true
				}
			} else {
				warnings = append(warnings, fmt.Sprintf("site %q: registered position (lat %g, lon %g) is outside WGS 84 ranges; ignored", s.id, s.info.Lat, s.info.Lon))
			}
		}
		if !s.located {
			unlocated = append(unlocated, s.id)
		}
	}
	return out, append(warnings, positionWarnings(unlocated)...)
}

// maxNamedSites is how many sites without a position are named one by one;
// more are summed up in one warning.
const maxNamedSites = 3

// positionWarnings warns of the sites without a position.
func positionWarnings(ids []string) []string {
	if len(ids) <= maxNamedSites {
		var w []string
		for _, id := range ids {
			w = append(w, fmt.Sprintf("site %q has no position; its feature in %s has no geometry", id, SitesFile))
		}
		return w
	}
	return []string{fmt.Sprintf("%d sites have no position (%q, %q, %q and %d more); their features in %s have no geometry: give a site register (export.Run.Register)",
		len(ids), ids[0], ids[1], ids[2], len(ids)-maxNamedSites, SitesFile)}
}

// validPosition reports whether lon and lat are WGS 84 degrees in range
// (RFC 7946, section 3.1.1 and 4).
func validPosition(lon, lat float64) bool {
	return lon >= -180 && lon <= 180 && lat >= -90 && lat <= 90
}

// coordDigits is the number of decimals kept in coordinates: 1e-6 degrees
// is about 10 cm (RFC 7946, section 11.2).
const coordDigits = 6

func roundPosition(lon, lat float64) [2]float64 {
	return [2]float64{round(lon, coordDigits), round(lat, coordDigits)}
}

func round(v float64, digits int) float64 {
	p := math.Pow10(digits)
	return math.Round(v*p) / p
}
