package features

import (
	"math"
	"slices"
	"time"

	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/internal/parallel"
	"github.com/kinmap/kinmap/internal/quantile"
)

// Level is a channel's typical level over a set of windows, in the
// channel's own unit: the median and the 95th percentile (definition 7 of
// Hyndman & Fan, numpy's default) of its raw readings in those windows.
type Level struct {
	Channel  string
	Readings int     // readings in the windows
	Median   float64 // NaN without readings
	P95      float64 // NaN without readings
}

// Levels returns the levels of the channels over the windows ws (sorted by
// site, then start, as in a Table) of each group: group[i] in [0, k) is
// the group of ws[i], a negative group leaves the window out. The readings
// are the raw ones of ds in [Start, End) of the windows; a reading that
// falls in several windows of a group (overlapping windows) counts once
// for it. all is the same over every window with a group. Readings are
// taken whole, not as window features, so that a level reads in the
// channel's unit and a few long windows weigh as much as their readings.
func Levels(ds *ingest.Dataset, ws []Window, group []int, k int, channels []string) (groups [][]Level, all []Level) {
	vals := make([][][]float64, k+1) // by group, the last for all; then by channel
	for g := range vals {
		vals[g] = make([][]float64, len(channels))
	}
	bySite := make(map[string]*ingest.SiteData, len(ds.Sites))
	for _, s := range ds.Sites {
		bySite[s.ID] = s
	}
	eachSite := func(add func(g, c int, v []float64)) {
		for lo := 0; lo < len(ws); {
			hi := lo + 1
			for hi < len(ws) && ws[hi].Site == ws[lo].Site {
				hi++
			}
			if site := bySite[ws[lo].Site]; site != nil {
				SiteReadings(site, ws[lo:hi], group[lo:hi], k, channels, add)
			}
			lo = hi
		}
	}
	// Count first, then copy once: growing the lists as they fill moved
	// every reading several times.
	count := make([]int, (k+1)*len(channels))
	eachSite(func(g, c int, v []float64) { count[g*len(channels)+c] += len(v) })
	for g := range vals {
		for c := range vals[g] {
			vals[g][c] = make([]float64, 0, count[g*len(channels)+c])
		}
	}
	eachSite(func(g, c int, v []float64) { vals[g][c] = append(vals[g][c], v...) })
	groups = make([][]Level, k)
	for g := range groups {
		groups[g] = make([]Level, len(channels))
	}
	all = make([]Level, len(channels))
	n := len(channels)
	// All windows' readings first: the largest piece of work.
	parallel.For[struct{}]((k+1)*n, 0, nil, func(_ struct{}, i int) {
		g, c := k-i/n, i%n
		l := LevelOf(channels[c], vals[g][c])
		if g == k {
			all[c] = l
		} else {
			groups[g][c] = l
		}
	})
	return groups, all
}

// SiteReadings passes to add the raw readings of one site in its windows
// ws (sorted by start) by group and channel index, as Levels counts them:
// group[i] in [0, k) is the group of ws[i], group k stands for all
// windows, and a reading in several windows of a group is passed once for
// it. add may keep v only as a copy.
func SiteReadings(site *ingest.SiteData, ws []Window, group []int, k int, channels []string, add func(g, c int, v []float64)) {
	upto := make([]int, k+1) // per group: readings of the series taken so far
	for c, ch := range channels {
		s := site.Series[ch]
		clear(upto)
		for i := range ws {
			g := group[i]
			if g < 0 || g >= k {
				continue
			}
			a, b := readingsIn(s.Times, ws[i].Start, ws[i].End)
			for _, at := range []int{g, k} {
				if from := max(a, upto[at]); from < b {
					add(at, c, s.Values[from:b])
					upto[at] = b
				}
			}
		}
	}
}

// LevelOf returns the level of channel ch over the readings v, which it
// reorders.
func LevelOf(ch string, v []float64) Level {
	l := Level{Channel: ch, Readings: len(v), Median: math.NaN(), P95: math.NaN()}
	if len(v) > 0 {
		_, l.Median, l.P95 = quantile.Spread(v)
	}
	return l
}

// readingsIn returns the indexes [a, b) of the ascending times in
// [start, end).
func readingsIn(times []int64, start, end time.Time) (int, int) {
	a, _ := slices.BinarySearch(times, start.UnixNano())
	b, _ := slices.BinarySearch(times, end.UnixNano())
	return a, max(a, b)
}
