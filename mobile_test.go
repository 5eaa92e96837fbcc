package kinmap_test

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/scenarios"
)

// On the reefers scenario (two draws), every unit's point in sites.geojson
// lies among its fixes of its last hour with a fix (the hourly median of
// a path step is inside their bounding box), its registered depot is kept
// as home_lon and home_lat, and its last track ends at that point.
func TestMobileUnitsAtLastPosition(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end run")
	}
	for _, seed := range []int64{3, 11} {
		spec, err := scenarios.DefaultSpec("reefers")
		if err != nil {
			t.Fatal(err)
		}
		spec.Sites, spec.Weeks, spec.Seed = 16, 2, seed
		fleet, res := trainScenario(t, spec)
		out := t.TempDir()
		if err := res.Write(out); err != nil {
			t.Fatal(err)
		}
		points := map[string]geoFeature{}
		for _, f := range geoJSON(t, filepath.Join(out, export.SitesFile)) {
			points[f.Properties["site"].(string)] = f
		}
		tracks := geoJSON(t, filepath.Join(out, export.TracksFile))
		trackEnd := map[string][]float64{}
		for _, f := range tracks {
			c := f.Geometry.Coordinates.([]any)
			last := c[len(c)-1].([]any)
			trackEnd[f.Properties["site"].(string)] = []float64{last[0].(float64), last[1].(float64)}
		}
		away := 0
		for _, s := range fleet.Sites {
			f, ok := points[s.ID]
			if !ok {
				t.Fatalf("seed %d: %s not in %s", seed, s.ID, export.SitesFile)
			}
			c := f.Geometry.Coordinates.([]any)
			lon, lat := c[0].(float64), c[1].(float64)
			lo, hi := lastHour(s.Readings)
			const slack = 1e-6 // coordinates are written to 6 decimals
			if lon < lo[0]-slack || lon > hi[0]+slack || lat < lo[1]-slack || lat > hi[1]+slack {
				t.Errorf("seed %d: %s at (%g, %g), outside its last hour's fixes (%v to %v)", seed, s.ID, lon, lat, lo, hi)
			}
			if p := f.Properties; p["home_lon"] != s.Lon || p["home_lat"] != s.Lat || p["mobile"] != true {
				t.Errorf("seed %d: %s home (%v, %v), mobile %v; want the depot (%g, %g), mobile", seed, s.ID, p["home_lon"], p["home_lat"], p["mobile"], s.Lon, s.Lat)
			}
			if e, ok := trackEnd[s.ID]; ok && (e[0] != lon || e[1] != lat) {
				t.Errorf("seed %d: %s's last track ends at %v, its point is (%g, %g)", seed, s.ID, e, lon, lat)
			}
			if math.Hypot(lon-s.Lon, lat-s.Lat) > 0.01 {
				away++
			}
		}
		t.Logf("seed %d: %d of %d units end away from their depot", seed, away, len(fleet.Sites))
	}
}

// lastHour returns the bounding box (lon, lat) of a unit's fixes in the
// UTC hour of its last fix.
func lastHour(r scenarios.Readings) (lo, hi [2]float64) {
	last := -1
	for i := range r.Times {
		if !math.IsNaN(r.Lat[i]) && !math.IsNaN(r.Lon[i]) {
			last = i
		}
	}
	lo, hi = [2]float64{math.Inf(1), math.Inf(1)}, [2]float64{math.Inf(-1), math.Inf(-1)}
	if last < 0 {
		return lo, hi
	}
	hour := time.Unix(0, r.Times[last]).UTC().Truncate(time.Hour)
	for i := range r.Times {
		if math.IsNaN(r.Lat[i]) || math.IsNaN(r.Lon[i]) || time.Unix(0, r.Times[i]).UTC().Truncate(time.Hour) != hour {
			continue
		}
		lo = [2]float64{min(lo[0], r.Lon[i]), min(lo[1], r.Lat[i])}
		hi = [2]float64{max(hi[0], r.Lon[i]), max(hi[1], r.Lat[i])}
	}
	return lo, hi
}

type geoFeature struct {
	Geometry struct {
		Coordinates any `json:"coordinates"`
	} `json:"geometry"`
	Properties map[string]any `json:"properties"`
}

// geoJSON reads the features of a GeoJSON file.
func geoJSON(t *testing.T, path string) []geoFeature {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var doc struct{ Features []geoFeature }
	if err := json.Unmarshal(b, &doc); err != nil {
		t.Fatal(err)
	}
	return doc.Features
}
