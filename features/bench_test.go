package features

import (
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/kinmap/kinmap/ingest"
	"github.com/parquet-go/parquet-go"
)

// The benchmark fleet: 1,000 sites × 8 weeks × 5 channels every 10 minutes,
// 40,320,000 readings. The values are invented (a daily cycle, a slow
// drift and noise per site and channel); only their number and layout
// matter here.
const (
	benchSites    = 1000
	benchWeeks    = 8
	benchStep     = 10 * time.Minute
	benchPerSite  = benchWeeks * 7 * 24 * 6 // one reading every benchStep
	benchReadings = benchSites * 5 * benchPerSite
)

var (
	benchChannels = [5]string{"bearing_temp", "current", "flow", "pressure", "vibration"}
	benchStart    = time.Date(2024, 1, 1, 0, 0, 0, 0, time.UTC)
)

// benchSeries generates the readings of one site, one slice per channel.
func benchSeries(site int) []ingest.Series {
	rng := rand.New(rand.NewPCG(uint64(site), 17))
	times := make([]int64, benchPerSite)
	for i := range times {
		times[i] = benchStart.Add(time.Duration(i) * benchStep).UnixNano()
	}
	out := make([]ingest.Series, len(benchChannels))
	for c := range out {
		level, amp, drift := 10+rng.Float64()*50, rng.Float64()*5, rng.NormFloat64()*1e-3
		vals := make([]float64, benchPerSite)
		for i := range vals {
			h := float64(i) / 6
			vals[i] = level + amp*math.Sin(2*math.Pi*h/24) + drift*h + rng.NormFloat64()
		}
		out[c] = ingest.Series{Times: times, Values: vals}
	}
	return out
}

func benchSiteID(i int) string { return "site-" + strconv.Itoa(10000+i) }

func benchDataset() *ingest.Dataset {
	ds := &ingest.Dataset{Channels: benchChannels[:]}
	for i := range benchSites {
		sd := &ingest.SiteData{ID: benchSiteID(i), Series: map[string]ingest.Series{}}
		for c, s := range benchSeries(i) {
			sd.Series[benchChannels[c]] = s
		}
		ds.Sites = append(ds.Sites, sd)
	}
	return ds
}

// benchRow is one reading of the long-format dump.
type benchRow struct {
	Site    string  `parquet:"site,dict"`
	Time    int64   `parquet:"time,timestamp(millisecond)"`
	Channel string  `parquet:"channel,dict"`
	Value   float64 `parquet:"value"`
}

// writeBenchDump writes the benchmark fleet as a long-format Parquet dump
// (rows by site, then time, then channel; a row group per 25 sites, Snappy).
func writeBenchDump(b *testing.B, path string) {
	f, err := os.Create(path)
	if err != nil {
		b.Fatal(err)
	}
	w := parquet.NewGenericWriter[benchRow](f, parquet.Compression(&parquet.Snappy))
	rows := make([]benchRow, 0, benchPerSite*len(benchChannels))
	for i := range benchSites {
		rows = rows[:0]
		series := benchSeries(i)
		id := benchSiteID(i)
		for k := range benchPerSite {
			for c, s := range series {
				rows = append(rows, benchRow{Site: id, Time: s.Times[k] / int64(time.Millisecond), Channel: benchChannels[c], Value: s.Values[k]})
			}
		}
		if _, err := w.Write(rows); err != nil {
			b.Fatal(err)
		}
		if (i+1)%25 == 0 {
			if err := w.Flush(); err != nil {
				b.Fatal(err)
			}
		}
	}
	if err := w.Close(); err != nil {
		b.Fatal(err)
	}
	if err := f.Close(); err != nil {
		b.Fatal(err)
	}
}

// BenchmarkExtract computes the default (basic) and the full feature set
// with pairs for the benchmark fleet on all cores. Compare its readings/s
// with BenchmarkReadSameDump's: extraction should be no slower than reading.
func BenchmarkExtract(b *testing.B) {
	ds := benchDataset()
	for _, bc := range []struct {
		name  string
		edit  func(*Config)
		names int
	}{
		{"basic", func(*Config) {}, 9 * len(benchChannels)},
		{"full+pairs", func(c *Config) { c.Features, c.Pairs = "full", true }, numStats*len(benchChannels) + 10},
	} {
		b.Run(bc.name, func(b *testing.B) {
			cfg := DefaultConfig()
			bc.edit(&cfg)
			var tab *Table
			for b.Loop() {
				var err error
				if tab, err = Extract(ds, cfg); err != nil {
					b.Fatal(err)
				}
			}
			if want := benchSites * benchWeeks * 7; len(tab.Windows) != want || len(tab.Names) != bc.names {
				b.Fatalf("%d windows of %d features, want %d of %d", len(tab.Windows), len(tab.Names), want, bc.names)
			}
			b.ReportMetric(float64(benchReadings)*float64(b.N)/b.Elapsed().Seconds(), "readings/s")
			b.ReportMetric(float64(runtime.GOMAXPROCS(0)), "cores")
		})
	}
}

// BenchmarkReadSameDump reads the benchmark fleet from a long-format Parquet
// dump with ingest.Read. The dump is written once per run (untimed).
func BenchmarkReadSameDump(b *testing.B) {
	path := filepath.Join(b.TempDir(), "fleet.parquet")
	writeBenchDump(b, path)
	var ds *ingest.Dataset
	for b.Loop() {
		var err error
		if ds, err = ingest.Read([]string{path}, ingest.DefaultOptions()); err != nil {
			b.Fatal(err)
		}
	}
	if ds.Summary.Readings != benchReadings || len(ds.Sites) != benchSites {
		b.Fatalf("read %d readings of %d sites, want %d of %d", ds.Summary.Readings, len(ds.Sites), benchReadings, benchSites)
	}
	// The dump holds exactly the readings BenchmarkExtract works on.
	want := benchSeries(7)
	got := ds.Sites[7].Series
	for c, ch := range benchChannels {
		if !slices.Equal(got[ch].Times, want[c].Times) || !slices.Equal(got[ch].Values, want[c].Values) {
			b.Fatalf("site %s channel %s differs from the generated series", ds.Sites[7].ID, ch)
		}
	}
	b.ReportMetric(float64(benchReadings)*float64(b.N)/b.Elapsed().Seconds(), "readings/s")
	b.ReportMetric(float64(runtime.GOMAXPROCS(0)), "cores")
}

// BenchmarkSortWindows measures what sorting a table's windows by site and
// start costs when the sort moves the records themselves (216 bytes each),
// pointers to them, or their indices, on the benchmark fleet's count of
// daily windows, in table order (already sorted, as the stages hold them)
// and shuffled. Each way includes the copy a caller makes so as not to
// reorder the table.
func BenchmarkSortWindows(b *testing.B) {
	ws := make([]Window, 0, benchSites*benchWeeks*7)
	for s := range benchSites {
		for d := range benchWeeks * 7 {
			start := benchStart.AddDate(0, 0, d)
			ws = append(ws, Window{Site: benchSiteID(s), Start: start, End: start.AddDate(0, 0, 1), Values: make([]float64, 40)})
		}
	}
	shuffled := slices.Clone(ws)
	rand.New(rand.NewPCG(1, 2)).Shuffle(len(shuffled), func(i, j int) { shuffled[i], shuffled[j] = shuffled[j], shuffled[i] })
	less := func(a, b *Window) int {
		if c := strings.Compare(a.Site, b.Site); c != 0 {
			return c
		}
		return a.Start.Compare(b.Start)
	}
	for _, in := range []struct {
		name string
		ws   []Window
	}{{"sorted", ws}, {"shuffled", shuffled}} {
		b.Run(in.name+"/records", func(b *testing.B) {
			for b.Loop() {
				out := slices.Clone(in.ws)
				slices.SortFunc(out, func(a, b Window) int { return less(&a, &b) })
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(in.ws)), "ns/window")
		})
		b.Run(in.name+"/pointers", func(b *testing.B) {
			for b.Loop() {
				out := make([]*Window, len(in.ws))
				for i := range in.ws {
					out[i] = &in.ws[i]
				}
				slices.SortFunc(out, less)
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(in.ws)), "ns/window")
		})
		b.Run(in.name+"/indices", func(b *testing.B) {
			for b.Loop() {
				out := make([]int, len(in.ws))
				for i := range out {
					out[i] = i
				}
				slices.SortFunc(out, func(i, j int) int { return less(&in.ws[i], &in.ws[j]) })
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(in.ws)), "ns/window")
		})
	}
}
