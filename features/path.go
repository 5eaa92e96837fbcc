package features

import (
	"math"
	"slices"
	"time"

	"github.com/kinmap/kinmap/ingest"
)

// PathStep is the step of the paths Extract keeps of mobile sites: one
// position per clock hour (UTC) that holds fixes. An hour is short beside a
// daily window, so that a round trip within a window still ends where it
// ended rather than at the window's centroid, and long enough to smooth
// out the scatter of single fixes.
const PathStep = time.Hour

// Fix is a position of a site at a time, in WGS 84 degrees.
type Fix struct {
	Time     time.Time // UTC
	Lat, Lon float64
}

// path summarises a track at PathStep: for each UTC hour holding fixes, a
// Fix at the start of the hour with the median latitude and the median
// longitude of its fixes (the mean of the middle two for an even count).
// A median, unlike a mean, ignores a stray fix. Longitudes are taken
// relative to the hour's first fix before the median, so that an hour
// crossing the antimeridian is not placed on the far side of the globe.
func path(tr ingest.Track) []Fix {
	var out []Fix
	step := int64(PathStep)
	var lat, lon []float64
	for lo := 0; lo < tr.Len(); {
		hour := floorDiv(tr.Times[lo], step)
		hi := lo
		lat, lon = lat[:0], lon[:0]
		for ; hi < tr.Len() && floorDiv(tr.Times[hi], step) == hour; hi++ {
			lat = append(lat, tr.Lat[hi])
			lon = append(lon, tr.Lon[lo]+wrap(tr.Lon[hi]-tr.Lon[lo]))
		}
		out = append(out, Fix{Time: time.Unix(0, hour*step).UTC(), Lat: median(lat), Lon: wrap(median(lon))})
		lo = hi
	}
	return out
}

// wrap brings a longitude, or a difference of two, into [-180, 180],
// leaving one in range as it is.
func wrap(deg float64) float64 {
	if deg >= -180 && deg <= 180 {
		return deg
	}
	return deg - 360*math.Floor((deg+180)/360)
}

// median sorts v and returns its median.
func median(v []float64) float64 {
	slices.Sort(v)
	n := len(v)
	if n%2 == 1 {
		return v[n/2]
	}
	return (v[n/2-1] + v[n/2]) / 2
}
