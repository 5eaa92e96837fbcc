package scaleout

import (
	"encoding/csv"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"sync"
	"testing"
	"time"

	"github.com/parquet-go/parquet-go"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/beam/internal/beamtest"
	"github.com/kinmap/kinmap/scenarios"
)

func TestMain(m *testing.M) { os.Exit(beamtest.Main(m)) }

// longRecord is one row of a long dump.
type longRecord struct {
	Site    string  `parquet:"site,dict"`
	Time    int64   `parquet:"time,timestamp(millisecond)"`
	Channel string  `parquet:"channel,dict"`
	Value   float64 `parquet:"value"`
}

// fleetFiles are the inputs made from a generated fleet.
type fleetFiles struct {
	dumps    []string // two weekly dumps that share one day, with different values
	register string   // positions of every site but the last
	fleet    *scenarios.Fleet
}

// The fleet is made once for all tests, in the tests' temporary folder.
var fixtureOnce = sync.OnceValues(func() (fleetFiles, error) {
	dir, err := os.MkdirTemp("", "scaleout-fleet-")
	if err != nil {
		return fleetFiles{}, err
	}
	return makeFleet(20, dir)
})

// fixture returns a small pumping-station fleet, 20 sites over two weeks,
// split into two dumps: the first holds days 1 to 8, the second days 8 to
// 14, its readings of day 8 shifted by 0.5 so that the later file must win.
// One site is left out of the register.
func fixture(t testing.TB) fleetFiles {
	t.Helper()
	f, err := fixtureOnce()
	if err != nil {
		t.Fatal(err)
	}
	return f
}

// makeFleet writes a pumping-station fleet of the given number of sites
// over two weeks into dir, as fixture describes.
func makeFleet(sites int, dir string) (fleetFiles, error) {
	spec, err := scenarios.DefaultSpec("pumping")
	if err != nil {
		return fleetFiles{}, err
	}
	spec.Sites, spec.Weeks = sites, 2
	fleet, err := scenarios.Generate(spec)
	if err != nil {
		return fleetFiles{}, err
	}
	day := int64(24 * time.Hour)
	start := spec.Start.UnixNano()
	var a, b []longRecord
	for _, s := range fleet.Sites {
		for i, tm := range s.Readings.Times {
			for ch, vals := range s.Readings.Values {
				v := vals[i]
				if math.IsNaN(v) {
					continue
				}
				r := longRecord{Site: s.ID, Time: tm / 1e6, Channel: fleet.Channels[ch].Name, Value: v}
				if tm < start+8*day {
					a = append(a, r)
				}
				if tm >= start+7*day {
					if tm < start+8*day {
						r.Value += 0.5
					}
					b = append(b, r)
				}
			}
		}
	}
	files := fleetFiles{fleet: fleet, dumps: []string{filepath.Join(dir, "week-1.parquet"), filepath.Join(dir, "week-2.parquet")}}
	for i, rows := range [][]longRecord{a, b} {
		if err := parquet.WriteFile(files.dumps[i], rows); err != nil {
			return fleetFiles{}, err
		}
	}
	files.register = filepath.Join(dir, "sites.csv")
	reg, err := os.Create(files.register)
	if err != nil {
		return fleetFiles{}, err
	}
	w := csv.NewWriter(reg)
	w.Write([]string{"site", "lat", "lon", "name"})
	for _, s := range fleet.Sites[:len(fleet.Sites)-1] {
		w.Write([]string{s.ID, strconv.FormatFloat(s.Lat, 'f', -1, 64), strconv.FormatFloat(s.Lon, 'f', -1, 64), s.Name})
	}
	w.Flush()
	if err := w.Error(); err != nil {
		reg.Close()
		return fleetFiles{}, err
	}
	return files, reg.Close()
}

// options are the settings both paths run with in the tests: a small map
// and few epochs, to keep the tests short.
func options(f fleetFiles) kinmap.Options {
	o := kinmap.DefaultOptions()
	o.Data = f.dumps
	o.Sites = f.register
	o.Map.Epochs = 8
	o.Map.Seed = 7
	return o
}

// maxDiff is the largest absolute difference between two equally long
// vectors, +Inf when their lengths differ.
func maxDiff(a, b []float64) float64 {
	if len(a) != len(b) {
		return math.Inf(1)
	}
	d := 0.0
	for i := range a {
		d = math.Max(d, math.Abs(a[i]-b[i]))
	}
	return d
}

// sameBits reports whether two vectors are identical bit for bit (NaN
// equal to the same NaN).
func sameBits(a, b []float64) error {
	if len(a) != len(b) {
		return fmt.Errorf("%d values, want %d", len(a), len(b))
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return fmt.Errorf("value %d: %v, want %v", i, a[i], b[i])
		}
	}
	return nil
}
