package scenarios

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"iter"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/kinmap/kinmap/internal/atomicfile"
)

// Files written by Fleet.Write, in the order it returns them.
const (
	FileLongParquet = "readings-long.parquet" // readings, long layout, Parquet
	FileWideParquet = "readings-wide.parquet" // readings, wide layout, Parquet
	FileArrow       = "readings.arrow"        // readings, long layout, Arrow IPC file
	FileCSV         = "readings.csv"          // readings, long layout, CSV
	FileSites       = "sites.csv"             // site register
	FileTruthWin    = "truth-windows.csv"     // true regime per site and window
	FileTruthSwitch = "truth-switches.csv"    // true switches
)

// Write writes the fleet into dir, creating dir if needed, and returns the
// paths written: every file below, or only the files named in only. Every file is first written under a temporary name in dir
// and renamed only once all of them are complete, so that a failed Write
// leaves no partial file behind.
//
// The readings, sorted by site and time, come in four files with the same
// content:
//   - readings-long.parquet: one row per value with columns site (string),
//     time (TIMESTAMP in milliseconds, adjusted to UTC), channel (string) and
//     value (double);
//   - readings-wide.parquet: one row per site and time with columns site,
//     time and one optional double column per channel, null where a value is
//     missing;
//   - readings.arrow: an Arrow IPC file in the long layout (site and channel
//     utf8, time timestamp[ms, UTC], value float64), in record batches of
//     65 536 rows, buffers compressed with LZ4 frame;
//   - readings.csv: the long layout as comma-separated values with a header
//     row, quoted as in RFC 4180 but with LF line ends, and RFC 3339 times
//     in UTC.
//
// The Parquet files are Snappy-compressed and split into up to eight row
// groups of equal size.
//
// Mobile fleets add nullable lat and lon columns (WGS 84 degrees) at the end
// of each reading file; they are null (empty in CSV) where the unit had no
// position fix. Missing values have no row in the long files.
// Duplicated rows appear twice.
//
// The other files are CSV with a header row:
//   - sites.csv: the site register, columns site, name, lat, lon and the
//     fleet's attributes;
//   - truth-windows.csv: site, window_start, window_end (RFC 3339, UTC),
//     regime (name) and coverage (share of the window's sampling slots for
//     which the site sent a row, 0 to 1), one row per site and daily window;
//   - truth-switches.csv: site, time (RFC 3339, the start of the first window
//     in the new regime), from_regime and to_regime.
func (f *Fleet) Write(dir string, only ...string) ([]string, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, fmt.Errorf("scenarios: %w", err)
	}
	names := only
	if len(names) == 0 {
		names = FileNames()
	}
	files := make([]fileWriter, len(names))
	for i, name := range names {
		if files[i] = f.writer(name); files[i].write == nil {
			return nil, fmt.Errorf("scenarios: no file %q; a fleet writes %s", name, strings.Join(FileNames(), ", "))
		}
	}
	tx, err := atomicfile.Begin(dir, nil, time.Minute)
	if err != nil {
		return nil, fmt.Errorf("scenarios: %w", err)
	}
	defer tx.Abort()
	errs := make([]error, len(files))
	paths := make([]string, len(files))
	var wg sync.WaitGroup
	slots := make(chan struct{}, runtime.GOMAXPROCS(0))
	for i, file := range files {
		paths[i] = filepath.Join(dir, file.name)
		wg.Go(func() {
			slots <- struct{}{}
			defer func() { <-slots }()
			errs[i] = tx.Create(paths[i], file.write)
		})
	}
	wg.Wait()
	if err := errors.Join(errs...); err != nil {
		return nil, fmt.Errorf("scenarios: %w", err)
	}
	if err := tx.Commit(); err != nil {
		return nil, fmt.Errorf("scenarios: %w", err)
	}
	return paths, nil
}

// fileWriter is one file of a fleet and the function that writes it.
type fileWriter struct {
	name  string
	write func(io.Writer) error
}

// FileNames returns the names of the files Write writes, in its order.
func FileNames() []string {
	return []string{FileLongParquet, FileWideParquet, FileArrow, FileCSV, FileSites, FileTruthWin, FileTruthSwitch}
}

// writer returns the writer of the file called name; its write is nil for
// an unknown name.
func (f *Fleet) writer(name string) fileWriter {
	w := map[string]func(io.Writer) error{
		FileLongParquet: f.writeLongParquet,
		FileWideParquet: f.writeWideParquet,
		FileArrow:       f.writeArrow,
		FileCSV:         f.writeCSV,
		FileSites:       f.writeSites,
		FileTruthWin:    f.writeTruthWindows,
		FileTruthSwitch: f.writeTruthSwitches,
	}[name]
	return fileWriter{name, w}
}

// longRow is one value of the long layout.
type longRow struct {
	site, row, channel int // indices into Fleet.Sites, Readings and Fleet.Channels
	value              float64
}

// longRows yields the fleet's values in site, time and channel order,
// leaving out missing values.
func (f *Fleet) longRows() iter.Seq[longRow] {
	return func(yield func(longRow) bool) {
		for si, s := range f.Sites {
			for i := range s.Readings.Times {
				for ch, values := range s.Readings.Values {
					if v := values[i]; !math.IsNaN(v) && !yield(longRow{si, i, ch, v}) {
						return
					}
				}
			}
		}
	}
}

// longCount reports the number of rows of the long layout.
func (f *Fleet) longCount() int {
	n := 0
	for range f.longRows() {
		n++
	}
	return n
}

// position returns the position of a row, NaN for fixed sites and rows
// without a fix.
func (r Readings) position(i int) (lat, lon float64) {
	if r.Lat == nil {
		return math.NaN(), math.NaN()
	}
	return r.Lat[i], r.Lon[i]
}

func (f *Fleet) writeCSV(w io.Writer) error {
	cw := csv.NewWriter(w)
	header := []string{"site", "time", "channel", "value"}
	if f.Mobile {
		header = append(header, "lat", "lon")
	}
	if err := cw.Write(header); err != nil {
		return err
	}
	record := make([]string, len(header))
	lastSite, lastRow := -1, -1
	for r := range f.longRows() {
		if r.site != lastSite || r.row != lastRow {
			// Each time and position is formatted once for all channels.
			s := f.Sites[r.site]
			record[0] = s.ID
			record[1] = formatTime(s.Readings.Times[r.row])
			if f.Mobile {
				lat, lon := s.Readings.position(r.row)
				record[4], record[5] = formatNumber(lat), formatNumber(lon)
			}
			lastSite, lastRow = r.site, r.row
		}
		record[2] = f.Channels[r.channel].Name
		record[3] = formatNumber(r.value)
		if err := cw.Write(record); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

func (f *Fleet) writeSites(w io.Writer) error {
	header := []string{"site", "name", "lat", "lon"}
	for _, a := range f.Sites[0].Attrs {
		header = append(header, a.Name)
	}
	return writeRecords(w, header, func(yield func([]string) bool) {
		for _, s := range f.Sites {
			record := []string{s.ID, s.Name, formatNumber(s.Lat), formatNumber(s.Lon)}
			for _, a := range s.Attrs {
				record = append(record, formatAttr(a.Value))
			}
			if !yield(record) {
				return
			}
		}
	})
}

func (f *Fleet) writeTruthWindows(w io.Writer) error {
	header := []string{"site", "window_start", "window_end", "regime", "coverage"}
	return writeRecords(w, header, func(yield func([]string) bool) {
		for _, s := range f.Sites {
			for i, c := range f.coverage(s) {
				record := []string{
					s.ID,
					f.WindowStart(i).Format(time.RFC3339),
					f.WindowStart(i + 1).Format(time.RFC3339),
					f.Regimes[s.Regimes[i]],
					strconv.FormatFloat(c, 'f', 4, 64),
				}
				if !yield(record) {
					return
				}
			}
		}
	})
}

func (f *Fleet) writeTruthSwitches(w io.Writer) error {
	header := []string{"site", "time", "from_regime", "to_regime"}
	return writeRecords(w, header, func(yield func([]string) bool) {
		for _, sw := range f.Switches() {
			if !yield([]string{sw.Site, sw.Time.Format(time.RFC3339), f.Regimes[sw.From], f.Regimes[sw.To]}) {
				return
			}
		}
	})
}

// writeRecords writes a CSV file with a header row.
func writeRecords(w io.Writer, header []string, records iter.Seq[[]string]) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(header); err != nil {
		return err
	}
	for r := range records {
		if err := cw.Write(r); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// coverage returns, per window, the share of the window's slots for which
// the site sent a row.
func (f *Fleet) coverage(s *Site) []float64 {
	counts := make([]float64, f.Windows())
	start := f.Spec.Start.UnixNano()
	for i, t := range s.Readings.Times {
		if i > 0 && t == s.Readings.Times[i-1] {
			continue // a duplicate
		}
		counts[(t-start)/int64(f.Window)]++
	}
	per := float64(f.Window / f.Step)
	for i := range counts {
		counts[i] /= per
	}
	return counts
}

func formatTime(ns int64) string {
	return time.Unix(0, ns).UTC().Format(time.RFC3339)
}

// formatNumber formats a value in the fewest digits that read back exactly;
// NaN becomes an empty field.
func formatNumber(v float64) string {
	if math.IsNaN(v) {
		return ""
	}
	return strconv.FormatFloat(v, 'f', -1, 64)
}

func formatAttr(v any) string {
	switch v := v.(type) {
	case string:
		return v
	case int64:
		return strconv.FormatInt(v, 10)
	case float64:
		return formatNumber(v)
	}
	panic(fmt.Sprintf("scenarios: attribute of type %T", v))
}
