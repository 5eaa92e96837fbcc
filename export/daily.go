package export

import (
	"math"
	"slices"
	"time"

	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/internal/parallel"
	"github.com/kinmap/kinmap/internal/quantile"
)

// DailySummary is what one channel of one site read on one UTC day: the
// number of readings and their 5th, 50th and 95th percentiles. The
// explorer of the report draws them, so that a switch of regime can be
// seen in the readings.
type DailySummary struct {
	Site, Channel    string
	Day              time.Time // midnight UTC
	Readings         int
	P05, Median, P95 float64 // sample quantiles, definition 7 of Hyndman & Fan (1996)
}

// DailySummaries summarises the readings of every site and channel of ds
// by UTC day, by site, channel and day; days without readings are absent.
// workers bounds the parallel work (0 means every core).
func DailySummaries(ds *ingest.Dataset, workers int) []DailySummary {
	if ds == nil {
		return nil
	}
	per := parallel.Map(len(ds.Sites), workers, func() []float64 { return nil }, func(buf []float64, i int) []DailySummary {
		s := ds.Sites[i]
		var out []DailySummary
		for _, ch := range ds.Channels {
			out = appendDays(out, s.ID, ch, s.Series[ch], buf)
		}
		return out
	})
	return slices.Concat(per...)
}

// appendDays appends the daily summaries of one series, using buf as
// scratch.
func appendDays(out []DailySummary, site, channel string, s ingest.Series, buf []float64) []DailySummary {
	const day = int64(24 * time.Hour)
	for i := 0; i < len(s.Times); {
		d := floorDiv(s.Times[i], day)
		buf = buf[:0]
		for ; i < len(s.Times) && floorDiv(s.Times[i], day) == d; i++ {
			if v := s.Values[i]; !math.IsNaN(v) {
				buf = append(buf, v)
			}
		}
		if len(buf) == 0 {
			continue
		}
		p05, p50, p95 := quantile.Spread(buf)
		out = append(out, DailySummary{
			Site: site, Channel: channel, Day: time.Unix(0, d*day).UTC(), Readings: len(buf),
			P05: p05, Median: p50, P95: p95,
		})
	}
	return out
}

// floorDiv is a/b rounded towards minus infinity, so that instants before
// 1970 fall on their own day.
func floorDiv(a, b int64) int64 {
	q := a / b
	if a%b != 0 && (a < 0) != (b < 0) {
		q--
	}
	return q
}
