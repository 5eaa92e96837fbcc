package score

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strconv"
	"time"

	"github.com/parquet-go/parquet-go"
)

// The files Folder reads: the truth files that package scenarios writes
// and the tables of a kinmap output folder (package export).
const (
	TruthWindowsFile  = "truth-windows.csv"
	TruthSwitchesFile = "truth-switches.csv"

	timelineCSV     = "timeline.csv"
	timelineParquet = "timeline.parquet"
	switchesCSV     = "switches.csv"
	switchesParquet = "switches.parquet"
)

// Folder scores the kinmap output folder out against the truth and matches
// switches within tol (see Compare).
//
// truth is a folder holding truth-windows.csv and, optionally,
// truth-switches.csv, or a windows file alone. The windows file is CSV with
// a header row and the columns site, window_start (RFC 3339, or a date
// for midnight UTC) and regime (any name), one row per site and window;
// other columns are ignored. The switches file has the columns site and
// time (RFC 3339), the start of the first window in the new regime. Without
// it, the true switches are the changes of regime between consecutive
// windows of a site in the windows file, dated alike.
//
// From out, Folder reads timeline.csv (site, window_start, regime) and
// switches.csv (site, time), or timeline.parquet and switches.parquet when
// the CSV files are missing.
//
// It fails when no window of the output is a window of the truth, which
// happens when the two were cut with other window lengths or time zones.
func Folder(out, truth string, tol time.Duration) (Report, error) {
	trueWindows, trueSwitches, err := readTruth(truth)
	if err != nil {
		return Report{}, err
	}
	found, err := readTimeline(out)
	if err != nil {
		return Report{}, err
	}
	foundSwitches, err := readSwitches(out)
	if err != nil {
		return Report{}, err
	}
	r := Compare(trueWindows, found, trueSwitches, foundSwitches, tol)
	if r.Scored == 0 {
		return r, fmt.Errorf("score: no window of %s is a window of the truth %s (%d and %d windows; %s): cut with another window length or time zone?",
			out, truth, len(found), len(trueWindows), firstStarts(found, trueWindows))
	}
	return r, nil
}

// firstStarts names the earliest window start of each side.
func firstStarts(found, truth []Window) string {
	first := func(ws []Window) string {
		if len(ws) == 0 {
			return "none"
		}
		t := ws[0].Start
		for _, w := range ws {
			if w.Start.Before(t) {
				t = w.Start
			}
		}
		return t.UTC().Format(time.RFC3339)
	}
	return "the first starts at " + first(found) + " and " + first(truth)
}

// readTruth reads the true windows and switches from a truth folder or
// windows file.
func readTruth(path string) ([]Window, []Event, error) {
	st, err := os.Stat(path)
	if err != nil {
		return nil, nil, fmt.Errorf("score: truth: %w", err)
	}
	windowsPath, switchesPath := path, ""
	if st.IsDir() {
		windowsPath = filepath.Join(path, TruthWindowsFile)
		switchesPath = filepath.Join(path, TruthSwitchesFile)
	}
	windows, err := readWindowsCSV(windowsPath)
	if err != nil {
		return nil, nil, err
	}
	if switchesPath != "" {
		switches, err := readEventsCSV(switchesPath)
		if err == nil {
			return windows, switches, nil
		}
		if !errors.Is(err, fs.ErrNotExist) {
			return nil, nil, err
		}
	}
	return windows, changes(windows), nil
}

// changes returns the changes of regime between consecutive windows of a
// site, at the start of the later window.
func changes(ws []Window) []Event {
	var es []Event
	s := sortedWindows(ws)
	for i := 1; i < len(s); i++ {
		if s[i].Site == s[i-1].Site && s[i].Regime != s[i-1].Regime {
			es = append(es, Event{s[i].Site, s[i].Start})
		}
	}
	return es
}

// readTimeline reads the windows of an output folder.
func readTimeline(dir string) ([]Window, error) {
	ws, err := readWindowsCSV(filepath.Join(dir, timelineCSV))
	if !errors.Is(err, fs.ErrNotExist) {
		return ws, err
	}
	type row struct {
		Site        string    `parquet:"site"`
		WindowStart time.Time `parquet:"window_start,timestamp(microsecond:utc)"`
		Regime      int32     `parquet:"regime"`
	}
	rows, err := readParquet[row](dir, timelineCSV, timelineParquet)
	if err != nil {
		return nil, err
	}
	ws = make([]Window, len(rows))
	for i, r := range rows {
		ws[i] = Window{r.Site, r.WindowStart, strconv.Itoa(int(r.Regime))}
	}
	return ws, checkUnique(filepath.Join(dir, timelineParquet), ws)
}

// readSwitches reads the switches of an output folder.
func readSwitches(dir string) ([]Event, error) {
	es, err := readEventsCSV(filepath.Join(dir, switchesCSV))
	if !errors.Is(err, fs.ErrNotExist) {
		return es, err
	}
	type row struct {
		Site string    `parquet:"site"`
		Time time.Time `parquet:"time,timestamp(microsecond:utc)"`
	}
	rows, err := readParquet[row](dir, switchesCSV, switchesParquet)
	if err != nil {
		return nil, err
	}
	es = make([]Event, len(rows))
	for i, r := range rows {
		es[i] = Event{r.Site, r.Time}
	}
	return es, nil
}

// readParquet reads the rows of the Parquet table name in dir, read when
// its CSV twin csvName is missing.
func readParquet[T any](dir, csvName, name string) ([]T, error) {
	path := filepath.Join(dir, name)
	rows, err := parquet.ReadFile[T](path)
	if errors.Is(err, fs.ErrNotExist) {
		return nil, fmt.Errorf("score: %s: no %s or %s: not an output folder of kinmap: %w", dir, csvName, name, err)
	}
	if err != nil {
		return nil, fmt.Errorf("score: %s: %w", path, err)
	}
	return rows, nil
}

// readWindowsCSV reads site, window_start and regime from a CSV file and
// refuses a window named twice.
func readWindowsCSV(path string) ([]Window, error) {
	var ws []Window
	err := readCSV(path, []string{"site", "window_start", "regime"}, func(rec []string) error {
		start, err := parseTime(rec[1])
		if err != nil {
			return fmt.Errorf("column \"window_start\": %w", err)
		}
		ws = append(ws, Window{rec[0], start, rec[2]})
		return nil
	})
	if err != nil {
		return nil, err
	}
	return ws, checkUnique(path, ws)
}

// readEventsCSV reads site and time from a CSV file.
func readEventsCSV(path string) ([]Event, error) {
	var es []Event
	err := readCSV(path, []string{"site", "time"}, func(rec []string) error {
		t, err := parseTime(rec[1])
		if err != nil {
			return fmt.Errorf("column \"time\": %w", err)
		}
		es = append(es, Event{rec[0], t})
		return nil
	})
	return es, err
}

// checkUnique refuses a window named twice.
func checkUnique(path string, ws []Window) error {
	s := sortedWindows(ws)
	for i := 1; i < len(s); i++ {
		if s[i].Site == s[i-1].Site && s[i].Start.Equal(s[i-1].Start) {
			return fmt.Errorf("score: %s: window of site %q at %s listed twice", path, s[i].Site, s[i].Start.UTC().Format(time.RFC3339))
		}
	}
	return nil
}

// readCSV calls row with the named columns of every record of a CSV file
// with a header row. Errors are wrapped with the path and the line; a
// missing file gives an error that is fs.ErrNotExist.
func readCSV(path string, columns []string, row func([]string) error) error {
	f, err := os.Open(path)
	if err != nil {
		return fmt.Errorf("score: %w", err)
	}
	defer f.Close()
	r := csv.NewReader(f)
	r.ReuseRecord = true
	header, err := r.Read()
	if err != nil {
		return fmt.Errorf("score: %s: header: %w", path, err)
	}
	at := make([]int, len(columns))
	for i, c := range columns {
		at[i] = -1
		for j, h := range header {
			if h == c {
				at[i] = j
			}
		}
		if at[i] < 0 {
			return fmt.Errorf("score: %s: no column %q in the header %q", path, c, header)
		}
	}
	picked := make([]string, len(columns))
	for {
		rec, err := r.Read()
		if err == io.EOF {
			return nil
		}
		if err != nil {
			return fmt.Errorf("score: %s: %w", path, err)
		}
		for i, j := range at {
			picked[i] = rec[j]
		}
		if err := row(picked); err != nil {
			line, _ := r.FieldPos(0)
			return fmt.Errorf("score: %s: line %d: %w", path, line, err)
		}
	}
}

// parseTime reads an RFC 3339 time, or a date as midnight UTC.
func parseTime(s string) (time.Time, error) {
	if t, err := time.Parse(time.RFC3339Nano, s); err == nil {
		return t, nil
	}
	if t, err := time.Parse(time.DateOnly, s); err == nil {
		return t, nil
	}
	return time.Time{}, fmt.Errorf("%q is no RFC 3339 time or date", s)
}
