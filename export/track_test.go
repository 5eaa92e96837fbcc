package export

import (
	"math"
	"path/filepath"
	"testing"
	"time"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/ingest"
)

// roundTripRun is a delivery van registered at depot H that is parked at
// A for two days, then on the third drives out to C by noon and back to
// A by 22:00, reporting a reading and a fix every 10 minutes. Its daily
// centroid that day lies midway between A and C; the van is at A.
func roundTripRun(t *testing.T) *Run {
	t.Helper()
	const step = 10 * time.Minute
	a, c := [2]float64{9.0, 47.0}, [2]float64{9.6, 47.3} // lon, lat
	var series ingest.Series
	var track ingest.Track
	for at := day0; at.Before(day0.AddDate(0, 0, 3)); at = at.Add(step) {
		pos := a
		if d := at.Sub(day0.AddDate(0, 0, 2)); d >= 0 && d < 22*time.Hour {
			// Out and back at a steady pace, 11 h each way.
			f := min(d.Hours(), 22-d.Hours()) / 11
			pos = [2]float64{a[0] + f*(c[0]-a[0]), a[1] + f*(c[1]-a[1])}
		}
		series.Times = append(series.Times, at.UnixNano())
		series.Values = append(series.Values, 1)
		track.Times = append(track.Times, at.UnixNano())
		track.Lon, track.Lat = append(track.Lon, pos[0]), append(track.Lat, pos[1])
	}
	home := &ingest.Site{ID: "V-1", Lon: 8.2, Lat: 46.8, Located: true}
	ds := &ingest.Dataset{Channels: []string{"v"}, Sites: []*ingest.SiteData{
		{ID: "V-1", Info: home, Series: map[string]ingest.Series{"v": series}, Track: track},
	}}
	tab, err := features.Extract(ds, features.Config{Window: 24 * time.Hour, Features: "count"})
	if err != nil {
		t.Fatal(err)
	}
	if len(tab.Windows) != 3 {
		t.Fatalf("%d windows, want 3", len(tab.Windows))
	}
	m := fixtureModel()
	r := &Run{Model: m, Table: tab, Register: &ingest.Register{Key: "site", Sites: []*ingest.Site{home}}}
	for i := range tab.Windows {
		g := []int{1, 1, 2}[i]
		w := &tab.Windows[i]
		w.Unit, w.Regime, w.QE = m.Regimes[g-1].Units[0], g, 0.1
	}
	return r
}

// A round trip within one window ends where the van stopped, at A, both
// in tracks.geojson and as the van's point in sites.geojson, which keeps
// the registered depot as home_lon and home_lat. Daily centroids would put
// the van midway to C.
func TestRoundTripEndsAtItsEnd(t *testing.T) {
	r := roundTripRun(t)
	if w := r.Table.Windows[2]; math.Abs(w.Lon-9.3) > 0.05 || math.Abs(w.Lat-47.15) > 0.05 {
		t.Fatalf("third window's centroid %v, %v: the case needs it midway", w.Lon, w.Lat)
	}
	dir := filepath.Join(t.TempDir(), "out")
	if err := Write(dir, r); err != nil {
		t.Fatal(err)
	}
	site := byProperty(checkRFC7946(t, SitesFile, read(t, dir, SitesFile)), "site")["V-1"]
	if c := site["geometry"].(map[string]any)["coordinates"].([]any); c[0] != 9.0 || c[1] != 47.0 {
		t.Errorf("V-1 at %v, want its last position [9 47]", c)
	}
	if p := site["properties"].(map[string]any); p["home_lon"] != 8.2 || p["home_lat"] != 46.8 || p["mobile"] != true {
		t.Errorf("V-1 properties %v: want mobile with home 8.2, 46.8", p)
	}
	tracks := checkRFC7946(t, TracksFile, read(t, dir, TracksFile))
	if len(tracks) != 1 {
		// Regime 1 was parked at A: no line; regime 2 drove.
		t.Fatalf("%d tracks, want 1", len(tracks))
	}
	line := tracks[0]["geometry"].(map[string]any)["coordinates"].([]any)
	end := line[len(line)-1].([]any)
	if end[0] != 9.0 || end[1] != 47.0 {
		t.Errorf("track ends at %v, want [9 47]", end)
	}
	// The turning point is kept: the van turns at C at 11:00, and the
	// median of an hour's fixes lies within half an hour's drive of where
	// the van was in that hour, 0.5/11 of the way.
	var far float64
	for _, p := range line {
		q := p.([]any)
		far = max(far, math.Hypot(q[0].(float64)-9.0, q[1].(float64)-47.0))
	}
	if want := math.Hypot(0.6, 0.3); far < want*(1-0.5/11) {
		t.Errorf("track reaches %.4f° from A, want about %.4f (C)", far, want)
	}
	if len(line) > 6 {
		t.Errorf("a straight drive out and back kept %d points after simplification", len(line))
	}
}
