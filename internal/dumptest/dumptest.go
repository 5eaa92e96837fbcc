// Package dumptest writes dumps of scenario fleets for end-to-end tests:
// a chosen part of a fleet's readings as a long CSV dump, the layout users
// export from a historian (site, time, channel, value), so that a test can
// cut weeks, sites and channels out of one generated fleet.
package dumptest

import (
	"encoding/csv"
	"math"
	"math/rand/v2"
	"os"
	"strconv"
	"testing"
	"time"

	"github.com/kinmap/kinmap/scenarios"
)

// CSV says which readings WriteCSV writes and how.
type CSV struct {
	From, To time.Time     // the readings in [From, To)
	Shift    time.Duration // added to every time written
	// Keep, when set, keeps only the readings for which it is true.
	Keep func(site, channel string, at time.Time) bool
	// Noise multiplies every value by 1 + Noise·N(0, 1), drawn with Seed.
	Noise float64
	Seed  uint64
}

// WriteCSV writes the readings of fleet that d selects to path as a long
// CSV dump, in the fleet's order of sites, then times, then channels;
// missing readings (NaN) are left out. Times are RFC 3339 in UTC and values
// in the shortest form that reads back exactly.
func WriteCSV(t testing.TB, path string, fleet *scenarios.Fleet, d CSV) {
	t.Helper()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	w := csv.NewWriter(f)
	w.Write([]string{"site", "time", "channel", "value"})
	rng := rand.New(rand.NewPCG(d.Seed, 1))
	for _, s := range fleet.Sites {
		r := s.Readings
		for i, ns := range r.Times {
			at := time.Unix(0, ns).UTC()
			if at.Before(d.From) || !at.Before(d.To) {
				continue
			}
			for c, ch := range fleet.Channels {
				v := r.Values[c][i]
				if math.IsNaN(v) || d.Keep != nil && !d.Keep(s.ID, ch.Name, at) {
					continue
				}
				if d.Noise != 0 {
					v *= 1 + d.Noise*rng.NormFloat64()
				}
				w.Write([]string{s.ID, at.Add(d.Shift).Format(time.RFC3339), ch.Name, strconv.FormatFloat(v, 'g', -1, 64)})
			}
		}
	}
	w.Flush()
	if err := w.Error(); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
}
