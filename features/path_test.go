package features

import (
	"testing"
	"time"

	"github.com/kinmap/kinmap/ingest"
)

// path keeps one position per UTC hour holding fixes: the median latitude
// and longitude, so that one stray fix does not move it, and an hour across
// the antimeridian stays there.
func TestPath(t *testing.T) {
	t0 := time.Date(2025, 3, 1, 0, 0, 0, 0, time.UTC)
	at := func(min int) int64 { return t0.Add(time.Duration(min) * time.Minute).UnixNano() }
	tests := []struct {
		name  string
		track ingest.Track
		want  []Fix
	}{
		{"stray fix", ingest.Track{
			Times: []int64{at(0), at(10), at(20), at(30), at(40)},
			Lat:   []float64{47.0, 47.1, 10.0, 47.2, 47.3},
			Lon:   []float64{8.0, 8.1, -60.0, 8.2, 8.3},
		}, []Fix{{t0, 47.1, 8.1}}},
		{"even count and a gap of hours", ingest.Track{
			Times: []int64{at(5), at(55), at(185)},
			Lat:   []float64{1, 2, 3},
			Lon:   []float64{10, 20, 30},
		}, []Fix{{t0, 1.5, 15}, {t0.Add(3 * time.Hour), 3, 30}}},
		// The mean of 179.9 and -179.7 is 0.1, on the far side of the
		// globe; the fixes are 0.4° apart across the antimeridian.
		{"antimeridian", ingest.Track{
			Times: []int64{at(0), at(30)},
			Lat:   []float64{-17, -17},
			Lon:   []float64{179.9, -179.7},
		}, []Fix{{t0, -17, -179.9}}},
		{"no fix", ingest.Track{}, nil},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got := path(tc.track)
			if len(got) != len(tc.want) {
				t.Fatalf("path %v, want %v", got, tc.want)
			}
			for i, f := range got {
				w := tc.want[i]
				if !f.Time.Equal(w.Time) || !near(f.Lat, w.Lat, 1e-9) || !near(f.Lon, w.Lon, 1e-9) {
					t.Errorf("fix %d: %v, want %v", i, f, w)
				}
			}
		})
	}
}
