package ingest

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"

	"github.com/parquet-go/parquet-go"
)

// The benchmark dump: 1,000 sites × 10 channels × 1,000 readings in long
// layout, ordered by time as historians export, 10 row groups.
const (
	benchSites    = 1000
	benchChannels = 10
	benchReadings = 1000
	benchRows     = benchSites * benchChannels * benchReadings
)

type benchRow struct {
	Site    string  `parquet:"site,dict"`
	Time    int64   `parquet:"time,timestamp(microsecond)"`
	Channel string  `parquet:"channel,dict"`
	Value   float64 `parquet:"value"`
}

var bench struct {
	once sync.Once
	dir  string
	path string
	err  error
}

// TestMain removes the benchmark dump, which is shared by the benchmarks
// of a run.
func TestMain(m *testing.M) {
	code := m.Run()
	if bench.dir != "" {
		os.RemoveAll(bench.dir)
	}
	os.Exit(code)
}

// benchDump writes the dump once per run.
func benchDump(b *testing.B) string {
	bench.once.Do(func() {
		if bench.dir, bench.err = os.MkdirTemp("", "ingest-bench"); bench.err != nil {
			return
		}
		bench.path = filepath.Join(bench.dir, "long.parquet")
		bench.err = writeBenchDump(bench.path)
	})
	if bench.err != nil {
		b.Fatal(bench.err)
	}
	return bench.path
}

func writeBenchDump(path string) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	defer f.Close()
	w := parquet.NewGenericWriter[benchRow](f, parquet.Compression(&parquet.Snappy),
		parquet.MaxRowsPerRowGroup(benchRows/10))
	sites := make([]string, benchSites)
	for i := range sites {
		sites[i] = fmt.Sprintf("site-%04d", i)
	}
	channels := make([]string, benchChannels)
	for i := range channels {
		channels[i] = fmt.Sprintf("ch%d", i)
	}
	start := int64(1_700_000_000_000_000) // microseconds
	rows := make([]benchRow, 0, benchSites*benchChannels)
	for k := 0; k < benchReadings; k++ {
		rows = rows[:0]
		for s, site := range sites {
			for c, ch := range channels {
				v := math.Sin(float64(k)*0.01+float64(s)) * float64(c+1)
				rows = append(rows, benchRow{site, start + int64(k)*60_000_000, ch, v})
			}
		}
		if _, err := w.Write(rows); err != nil {
			return err
		}
	}
	if err := w.Close(); err != nil {
		return err
	}
	return f.Close()
}

// BenchmarkReadLongParquet reads the dump with Read and reports rows per
// second, and the peak resident memory of a process that does one Read.
func BenchmarkReadLongParquet(b *testing.B) {
	path := benchDump(b)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		ds, err := Read([]string{path}, DefaultOptions())
		if err != nil {
			b.Fatal(err)
		}
		if ds.Summary.Readings != benchRows || len(ds.Sites) != benchSites {
			b.Fatalf("%d readings of %d sites", ds.Summary.Readings, len(ds.Sites))
		}
	}
	b.ReportMetric(float64(benchRows)*float64(b.N)/b.Elapsed().Seconds(), "rows/s")
	b.StopTimer()
	peak, err := peakOfRead(path)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportMetric(peak/(1<<20), "peak-MiB")
}

// BenchmarkBareScanParquet reads every value of the dump's four columns
// with parquet-go and nothing else: page by page, through the typed value
// readers where a page has one and the generic value reader otherwise.
func BenchmarkBareScanParquet(b *testing.B) {
	path := benchDump(b)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		n, err := bareScan(path)
		if err != nil {
			b.Fatal(err)
		}
		if n != 4*benchRows {
			b.Fatalf("%d values", n)
		}
	}
	b.ReportMetric(float64(benchRows)*float64(b.N)/b.Elapsed().Seconds(), "rows/s")
}

func bareScan(path string) (values int64, err error) {
	f, err := os.Open(path)
	if err != nil {
		return 0, err
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return 0, err
	}
	pf, err := parquet.OpenFile(f, st.Size(), parquet.SkipPageIndex(true), parquet.SkipBloomFilters(true))
	if err != nil {
		return 0, err
	}
	var cols []int
	for _, name := range []string{"site", "time", "channel", "value"} {
		cols = append(cols, pf.Root().Column(name).Index())
	}
	vals := make([]parquet.Value, 4096)
	ints := make([]int64, 4096)
	floats := make([]float64, 4096)
	for _, rg := range pf.RowGroups() {
		for _, c := range cols {
			pages := rg.ColumnChunks()[c].Pages()
			for {
				p, err := pages.ReadPage()
				if err == io.EOF {
					break
				}
				if err != nil {
					return 0, err
				}
				var n int
				vr := p.Values()
				for err = nil; err == nil; values += int64(n) {
					switch r := vr.(type) {
					case parquet.Int64Reader:
						n, err = r.ReadInt64s(ints)
					case parquet.DoubleReader:
						n, err = r.ReadDoubles(floats)
					default:
						n, err = r.ReadValues(vals)
					}
				}
				parquet.Release(p)
				if err != io.EOF {
					return 0, err
				}
			}
			pages.Close()
		}
	}
	return values, nil
}

// peakOfRead runs TestPeakOfRead in a new process and returns the peak
// resident set (VmHWM) it reports, in bytes.
func peakOfRead(path string) (float64, error) {
	cmd := exec.Command(os.Args[0], "-test.run=^TestPeakOfRead$", "-test.v")
	cmd.Env = append(os.Environ(), "INGEST_PEAK_DUMP="+path)
	out, err := cmd.CombinedOutput()
	if err != nil {
		return 0, fmt.Errorf("%v: %s", err, out)
	}
	for _, line := range strings.Split(string(out), "\n") {
		if rest, ok := strings.CutPrefix(strings.TrimSpace(line), "peak-bytes "); ok {
			return strconv.ParseFloat(rest, 64)
		}
	}
	return 0, fmt.Errorf("no peak in %s", out)
}

// TestPeakOfRead is the child process of BenchmarkReadLongParquet: it reads
// the dump named by INGEST_PEAK_DUMP once and prints the peak resident set
// of the process from /proc/self/status. Without the variable it skips.
func TestPeakOfRead(t *testing.T) {
	path := os.Getenv("INGEST_PEAK_DUMP")
	if path == "" {
		t.Skip("run by BenchmarkReadLongParquet")
	}
	ds, err := Read([]string{path}, DefaultOptions())
	if err != nil {
		t.Fatal(err)
	}
	f, err := os.Open("/proc/self/status")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		if rest, ok := strings.CutPrefix(sc.Text(), "VmHWM:"); ok {
			kb, err := strconv.ParseFloat(strings.TrimSuffix(strings.TrimSpace(rest), " kB"), 64)
			if err != nil {
				t.Fatal(err)
			}
			fmt.Printf("peak-bytes %.0f\n", kb*1024)
		}
	}
	if ds.Summary.Readings != benchRows {
		t.Fatalf("%d readings", ds.Summary.Readings)
	}
}
