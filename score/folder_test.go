package score

import (
	"errors"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// writeFiles writes files named by their paths under dir.
func writeFiles(t *testing.T, dir string, files map[string]string) {
	t.Helper()
	for name, content := range files {
		path := filepath.Join(dir, name)
		if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, []byte(content), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

// A truth of two sites over four days and an output that lacks one window,
// has one the truth lacks and names its regimes by numbers.
var (
	truthWindows = `site,window_start,window_end,regime,coverage
A,2026-06-01T00:00:00Z,2026-06-02T00:00:00Z,duty,1
A,2026-06-02T00:00:00Z,2026-06-03T00:00:00Z,duty,1
A,2026-06-03T00:00:00Z,2026-06-04T00:00:00Z,standby,1
A,2026-06-04T00:00:00Z,2026-06-05T00:00:00Z,standby,0.2
B,2026-06-01T00:00:00Z,2026-06-02T00:00:00Z,standby,1
B,2026-06-02T00:00:00Z,2026-06-03T00:00:00Z,standby,1
B,2026-06-03T00:00:00Z,2026-06-04T00:00:00Z,standby,1
B,2026-06-04T00:00:00Z,2026-06-05T00:00:00Z,fault,1
`
	truthSwitches = `site,time,from_regime,to_regime
A,2026-06-03T00:00:00Z,duty,standby
B,2026-06-04T00:00:00Z,standby,fault
`
	// Columns in another order than the truth's, extra columns, CRLF.
	timelineCSVText = "regime,site,window_start,qe\r\n" +
		"1,A,2026-06-01T00:00:00Z,0.1\r\n" +
		"1,A,2026-06-02T00:00:00Z,0.1\r\n" +
		"1,A,2026-06-03T00:00:00Z,0.1\r\n" +
		"2,B,2026-06-01T00:00:00Z,0.1\r\n" +
		"2,B,2026-06-02T00:00:00Z,0.1\r\n" +
		"3,B,2026-06-03T00:00:00Z,0.1\r\n" +
		"3,B,2026-06-04T00:00:00Z,0.1\r\n" +
		"3,C,2026-06-01T00:00:00Z,0.1\r\n"
	// A's switch is missed; B's is found a day early; C's is on no true site.
	switchesCSVText = "site,time,from_regime,to_regime\r\n" +
		"B,2026-06-03T00:00:00Z,2,3\r\n" +
		"C,2026-06-01T00:00:00Z,1,3\r\n"
)

func TestFolder(t *testing.T) {
	dir := t.TempDir()
	writeFiles(t, dir, map[string]string{
		"truth/truth-windows.csv":  truthWindows,
		"truth/truth-switches.csv": truthSwitches,
		"out/timeline.csv":         timelineCSVText,
		"out/switches.csv":         switchesCSVText,
	})
	r, err := Folder(filepath.Join(dir, "out"), filepath.Join(dir, "truth"), 24*time.Hour)
	if err != nil {
		t.Fatal(err)
	}
	// Counts by hand from the files above: A's fourth window is missing
	// from the output, C's window is not in the truth.
	counts := []struct {
		name      string
		got, want int
	}{
		{"truth windows", r.TruthWindows, 8},
		{"scored", r.Scored, 7},
		{"missing", r.Missing, 1},
		{"extra", r.Extra, 1},
		{"sites", r.Sites, 2},
		{"true regimes", r.TrueRegimes, 3},
		{"found regimes", r.FoundRegimes, 3},
		{"true switches", r.TrueSwitches, 2},
		{"found switches", r.FoundSwitches, 2},
		{"TP", r.Found.Switches.TP, 1},
		{"FP", r.Found.Switches.FP, 1},
		{"FN", r.Found.Switches.FN, 1},
		{"baseline TP", r.Baseline.Switches.TP, 0},
		{"baseline FN", r.Baseline.Switches.FN, 2},
	}
	for _, c := range counts {
		if c.got != c.want {
			t.Errorf("%s: %d, want %d", c.name, c.got, c.want)
		}
	}
	// The scored windows in site and time order, written out by hand:
	// truth  A: duty duty standby       B: standby standby standby fault
	// found  A: 1 1 1                   B: 2 2 3 3
	// no switch: A held in duty (2 of 3), B in standby (3 of 4).
	truth := []int{0, 0, 1, 1, 1, 1, 2}
	found := []int{1, 1, 1, 2, 2, 3, 3}
	base := []int{0, 0, 0, 1, 1, 1, 1}
	// Covering, by hand: A's true segments [duty×2][standby×1] against one
	// found segment of 3: (2·2/3 + 1·1/3) = 5/3; B's [standby×3][fault×1]
	// against [2×2][3×2]: 3·(2/3) + 1·(1/2) = 5/2. Pooled: (5/3 + 5/2)/7.
	// No switch: A 2·2/3 + 1·1/3 = 5/3, B 3·3/4 + 1·1/4 = 5/2.
	measures := []struct {
		name      string
		got, want float64
	}{
		{"ARI", r.Found.ARI, ARI(truth, found)},
		{"AMI", r.Found.AMI, AMI(truth, found)},
		{"covering", r.Found.Covering, (5.0/3 + 5.0/2) / 7},
		{"baseline ARI", r.Baseline.ARI, ARI(truth, base)},
		{"baseline AMI", r.Baseline.AMI, AMI(truth, base)},
		{"baseline covering", r.Baseline.Covering, (5.0/3 + 5.0/2) / 7},
		{"precision", r.Found.Switches.Precision, 0.5},
		{"recall", r.Found.Switches.Recall, 0.5},
		{"baseline recall", r.Baseline.Switches.Recall, 0},
		{"baseline F1", r.Baseline.Switches.F1, 0},
	}
	for _, m := range measures {
		if math.Abs(m.got-m.want) > 1e-12 {
			t.Errorf("%s: %.15g, want %.15g", m.name, m.got, m.want)
		}
	}

	// The windows file alone: its switches are its changes of regime, the
	// same two as in truth-switches.csv.
	alone, err := Folder(filepath.Join(dir, "out"), filepath.Join(dir, "truth", TruthWindowsFile), 24*time.Hour)
	if err != nil {
		t.Fatal(err)
	}
	if alone != r {
		t.Errorf("scored against the windows file alone:\n%+v\nagainst the folder:\n%+v", alone, r)
	}
}

// Without truth-switches.csv, a truth folder's switches are the changes of
// regime of its windows; with it, the file counts even where it differs.
func TestFolderTruthSwitches(t *testing.T) {
	dir := t.TempDir()
	writeFiles(t, dir, map[string]string{
		"derived/truth-windows.csv": truthWindows,
		"listed/truth-windows.csv":  truthWindows,
		// One switch only, dated where the windows show none.
		"listed/truth-switches.csv": "site,time\nA,2026-06-02T00:00:00Z\n",
		"out/timeline.csv":          timelineCSVText,
		"out/switches.csv":          switchesCSVText,
	})
	out := filepath.Join(dir, "out")
	derived, err := Folder(out, filepath.Join(dir, "derived"), 24*time.Hour)
	if err != nil {
		t.Fatal(err)
	}
	if derived.TrueSwitches != 2 || derived.Found.Switches.TP != 1 {
		t.Errorf("derived: %d true switches, %d matched; want 2 and 1 (B's)", derived.TrueSwitches, derived.Found.Switches.TP)
	}
	listed, err := Folder(out, filepath.Join(dir, "listed"), 24*time.Hour)
	if err != nil {
		t.Fatal(err)
	}
	if listed.TrueSwitches != 1 || listed.Found.Switches.TP != 0 {
		t.Errorf("listed: %d true switches, %d matched; want 1 and 0", listed.TrueSwitches, listed.Found.Switches.TP)
	}
}

// Errors name the file and, for a bad row, its line.
func TestFolderErrors(t *testing.T) {
	tests := []struct {
		name   string
		files  map[string]string
		want   []string // in the message
		noFile bool     // the error is fs.ErrNotExist
	}{
		{"no truth", map[string]string{"out/timeline.csv": timelineCSVText, "out/switches.csv": switchesCSVText},
			[]string{"truth"}, true},
		{"no timeline", map[string]string{"truth/truth-windows.csv": truthWindows},
			[]string{"timeline.csv", "timeline.parquet", "not an output folder"}, true},
		{"no switches", map[string]string{"truth/truth-windows.csv": truthWindows, "out/timeline.csv": timelineCSVText},
			[]string{"switches.csv", "switches.parquet"}, true},
		{"no column", map[string]string{"truth/truth-windows.csv": "site,start,regime\nA,2026-06-01,x\n",
			"out/timeline.csv": timelineCSVText, "out/switches.csv": switchesCSVText},
			[]string{"truth-windows.csv", `no column "window_start"`}, false},
		{"bad time", map[string]string{"truth/truth-windows.csv": truthWindows + "B,yesterday,,fault,1\n",
			"out/timeline.csv": timelineCSVText, "out/switches.csv": switchesCSVText},
			[]string{"truth-windows.csv", "line 10", `"window_start"`, `"yesterday"`}, false},
		{"bad switch time", map[string]string{"truth/truth-windows.csv": truthWindows,
			"out/timeline.csv": timelineCSVText, "out/switches.csv": "site,time\nA,2026-13-01T00:00:00Z\n"},
			[]string{"switches.csv", "line 2", `"time"`}, false},
		{"window twice", map[string]string{"truth/truth-windows.csv": truthWindows,
			"out/timeline.csv": timelineCSVText + "1,A,2026-06-02T00:00:00Z,0.2\r\n", "out/switches.csv": switchesCSVText},
			[]string{"timeline.csv", `site "A"`, "2026-06-02T00:00:00Z", "twice"}, false},
		{"no common window", map[string]string{"truth/truth-windows.csv": truthWindows,
			"out/timeline.csv": "site,window_start,regime\nA,2026-06-01T00:00:00+02:00,1\n", "out/switches.csv": switchesCSVText},
			[]string{"no window of", "window length or time zone", "2026-05-31T22:00:00Z"}, false},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			dir := t.TempDir()
			writeFiles(t, dir, tt.files)
			_, err := Folder(filepath.Join(dir, "out"), filepath.Join(dir, "truth"), time.Hour)
			if err == nil {
				t.Fatal("no error")
			}
			for _, w := range tt.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error %q does not say %q", err, w)
				}
			}
			if errors.Is(err, fs.ErrNotExist) != tt.noFile {
				t.Errorf("error %q: errors.Is(fs.ErrNotExist) = %v, want %v", err, !tt.noFile, tt.noFile)
			}
		})
	}
}

// The no-switch baseline holds a site whose windows split evenly in the
// regime whose name sorts first. Site X spends two windows in "a" and two
// in "b", site Y all four in "a": held in "a", X makes the baseline one
// group, which scores ARI 0; held in "b", it would score above 0.
func TestCompareBaselineTie(t *testing.T) {
	var truth []Window
	for i, regime := range []string{"b", "b", "a", "a", "a", "a", "a", "a"} {
		site := "X"
		if i >= 4 {
			site = "Y"
		}
		truth = append(truth, Window{site, day0.AddDate(0, 0, i%4), regime})
	}
	r := Compare(truth, truth, nil, nil, 0)
	if r.Baseline.ARI != 0 || r.Found.ARI != 1 {
		t.Errorf("baseline ARI %g, found ARI %g; want 0 (X held in a) and 1", r.Baseline.ARI, r.Found.ARI)
	}
}
