// Package history keeps the timelines of earlier runs in a history folder,
// so that a later run decodes each site's regime across the boundary of
// two dumps, and owns its format, its reading and writing and the
// continuation of a site's decoding from where the history left it.
//
// The history is a set of windows keyed by site and window start. A run
// replaces the windows (site, start) it holds, and on another window grid
// (another time zone or window length) those of its sites that its windows
// mostly cover, and keeps every other; a window records its regime, its best-matching unit, its
// quantization error, its scaled feature vector and the lineage of the map
// that numbered its regimes.
//
// On disk the windows are Parquet files in Hive-style period folders,
// DIR/period=YYYY-MM-DD/, one lineage to a file (Parquet key-value metadata
// kinmap.lineage), and a manifest, DIR/kinmap-history.json, lists the files
// that make up the history and its generation. A write never changes a
// file in place: it writes new files aside, then switches the manifest
// (package atomicfile), so that readers see the history before the write
// or after it, never half of it. A history folder from before the
// manifest, one DIR/period=YYYY-MM-DD/timeline.parquet per period with the
// cell (col, row) in place of the unit, reads as it did; its first write
// adds the manifest.
package history

import (
	"cmp"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"github.com/parquet-go/parquet-go"

	"github.com/kinmap/kinmap/internal/atomicfile"
)

// The names in a history folder.
const (
	// LineageKey is the key of the Parquet key-value metadata in which a
	// file records the lineage of the map that numbered its regimes.
	LineageKey = "kinmap.lineage"

	manifestFile = "kinmap-history.json"
	periodPrefix = "period="
	legacyFile   = "timeline.parquet" // the one file of a period before the manifest
)

// Window is one window of one site in the history.
type Window struct {
	Site       string
	Start, End time.Time // to the microsecond, UTC
	Unit       int       // best-matching unit; -1 when not recorded (see Cell)
	Regime     int
	QE         float64
	Unfamiliar bool
	Scaled     []float64 // scaled feature vector; nil when not recorded
	Revised    bool      // Regime was changed by decoding the window again with a later dump
	Lineage    string    // of the map that numbered Regime; "" when not recorded

	cell *[2]int // (col, row) of a window written before units were
}

// Cell returns the lattice cell that a window written before the history
// recorded units holds in their place.
func (w *Window) Cell() (col, row int, ok bool) {
	if w.cell == nil {
		return 0, 0, false
	}
	return w.cell[0], w.cell[1], true
}

// History is the content of a history folder at one generation.
type History struct {
	Dir     string
	Windows []Window // by site, then start
	Notes   []string // what reading set aside or tidied, for the run's warnings

	gen    int64
	legacy bool         // no manifest yet
	files  []string     // the files, relative to Dir
	fileOf []int        // the file of each window, an index into files
	junk   []string     // temporary files of an earlier kinmap to remove with the next write
	dirty  map[int]bool // files whose windows a run revised
}

// manifest lists the files of a history folder.
type manifest struct {
	Format     int      `json:"format"`
	Generation int64    `json:"generation"`
	Files      []string `json:"files"`
}

// ChangedError reports that another run wrote the history after this run
// read it: writing on would lose that run's windows or revisions.
type ChangedError struct {
	Dir      string
	Read, At int64 // generations
}

func (e *ChangedError) Error() string {
	return fmt.Sprintf("history: %s: another run wrote it (generation %d, was %d) after this run read it; nothing was written, run again", e.Dir, e.At, e.Read)
}

// lockWait bounds the wait for another run that writes the folder.
const lockWait = time.Minute

// Read reads the history folder dir; a folder that does not exist is an
// empty history. It takes the folder's lock while it reads, which first
// settles what an interrupted write left (see atomicfile.Recover, and
// Notes). A folder the process cannot lock, such as a read-only one, is
// read without the lock when no interrupted write is pending in it.
func Read(dir string) (*History, error) {
	if _, err := os.Stat(dir); errors.Is(err, fs.ErrNotExist) {
		return &History{Dir: dir, legacy: true}, nil
	}
	l, err := atomicfile.LockDir(dir, lockWait)
	var busy *atomicfile.ErrBusy
	switch {
	case errors.As(err, &busy):
		return nil, fmt.Errorf("history: %w", err)
	case err != nil && atomicfile.Pending(dir):
		return nil, fmt.Errorf("history: %s: an interrupted write needs settling, but: %w", dir, err)
	case err != nil:
		return Load(dir)
	}
	defer l.Unlock()
	notes, err := atomicfile.Recover(dir)
	if err != nil {
		return nil, fmt.Errorf("history: %w", err)
	}
	h, err := Load(dir)
	if err != nil {
		return nil, err
	}
	h.Notes = append(notes, h.Notes...)
	if !h.legacy {
		// A write that removed a period's last file leaves its folder.
		items, _ := os.ReadDir(dir)
		for _, it := range items {
			if it.IsDir() && strings.HasPrefix(it.Name(), periodPrefix) {
				os.Remove(filepath.Join(dir, it.Name())) // only when empty
			}
		}
	}
	return h, nil
}

// Load reads the history folder dir like Read, for a caller that holds its
// lock, such as a transaction that writes it.
func Load(dir string) (*History, error) {
	h := &History{Dir: dir}
	b, err := os.ReadFile(filepath.Join(dir, manifestFile))
	switch {
	case err == nil:
		var m manifest
		if err := json.Unmarshal(b, &m); err != nil {
			return nil, fmt.Errorf("history: %s: %w", filepath.Join(dir, manifestFile), err)
		}
		if m.Format != 1 {
			return nil, fmt.Errorf("history: %s: format %d; this kinmap reads format 1", filepath.Join(dir, manifestFile), m.Format)
		}
		h.gen, h.files = m.Generation, m.Files
	case errors.Is(err, fs.ErrNotExist):
		h.legacy = true
		if err := h.findLegacy(); err != nil {
			return nil, err
		}
	default:
		return nil, fmt.Errorf("history: %w", err)
	}
	for i, name := range h.files {
		ws, err := readFile(filepath.Join(dir, name))
		if err != nil {
			return nil, fmt.Errorf("history: %s: %w", filepath.Join(dir, name), err)
		}
		h.Windows = append(h.Windows, ws...)
		for range ws {
			h.fileOf = append(h.fileOf, i)
		}
	}
	h.sort()
	for i := 1; i < len(h.Windows); i++ {
		if a, b := &h.Windows[i-1], &h.Windows[i]; a.Site == b.Site && a.Start.Equal(b.Start) {
			// Only a history written before windows were keyed can hold one
			// twice; the later file, as listed, wins.
			if h.fileOf[i-1] > h.fileOf[i] {
				h.Windows[i], h.fileOf[i] = h.Windows[i-1], h.fileOf[i-1]
			}
			h.Notes = append(h.Notes, fmt.Sprintf("history %s: window of %s at %s held twice; the later one is kept", dir, a.Site, a.Start.Format(time.RFC3339)))
			h.Windows = slices.Delete(h.Windows, i-1, i)
			h.fileOf = slices.Delete(h.fileOf, i-1, i)
			i--
		}
	}
	return h, nil
}

// findLegacy lists the period files of a folder without a manifest, and
// notes the remains of an interrupted write of an earlier kinmap: a period
// folder without its file is ignored, its hidden temporary files removed
// with the next write.
func (h *History) findLegacy() error {
	items, err := os.ReadDir(h.Dir)
	if err != nil {
		return fmt.Errorf("history: %w", err)
	}
	for _, it := range items {
		key, ok := strings.CutPrefix(it.Name(), periodPrefix)
		if !it.IsDir() || !ok {
			continue
		}
		if _, err := time.Parse(time.DateOnly, key); err != nil {
			return fmt.Errorf("history: %s: not a period folder (want %sYYYY-MM-DD)", filepath.Join(h.Dir, it.Name()), periodPrefix)
		}
		inner, err := os.ReadDir(filepath.Join(h.Dir, it.Name()))
		if err != nil {
			return fmt.Errorf("history: %w", err)
		}
		found := false
		for _, f := range inner {
			name := filepath.Join(it.Name(), f.Name())
			switch {
			case f.Name() == legacyFile:
				h.files = append(h.files, name)
				found = true
			case strings.HasPrefix(f.Name(), "."+legacyFile+".") && strings.HasSuffix(f.Name(), ".tmp"):
				h.junk = append(h.junk, name)
			}
		}
		if !found {
			h.Notes = append(h.Notes, fmt.Sprintf("history %s: %s holds no timeline, the remains of an interrupted write; ignored", h.Dir, it.Name()))
		}
	}
	if len(h.junk) > 0 {
		h.Notes = append(h.Notes, fmt.Sprintf("history %s: %d temporary files of an interrupted write are removed with this run's", h.Dir, len(h.junk)))
	}
	slices.Sort(h.files)
	return nil
}

// sort orders the windows by site and start, keeping fileOf in step.
func (h *History) sort() {
	idx := make([]int, len(h.Windows))
	for i := range idx {
		idx[i] = i
	}
	slices.SortStableFunc(idx, func(a, b int) int {
		return cmp.Or(strings.Compare(h.Windows[a].Site, h.Windows[b].Site), h.Windows[a].Start.Compare(h.Windows[b].Start))
	})
	ws, fs := make([]Window, len(idx)), make([]int, len(idx))
	for i, j := range idx {
		ws[i], fs[i] = h.Windows[j], h.fileOf[j]
	}
	h.Windows, h.fileOf = ws, fs
}

// row is one window in a history file.
type row struct {
	Site        string    `parquet:"site,dict"`
	WindowStart time.Time `parquet:"window_start,timestamp(microsecond:utc)"`
	WindowEnd   time.Time `parquet:"window_end,timestamp(microsecond:utc)"`
	Unit        int32     `parquet:"unit"`
	Regime      int32     `parquet:"regime"`
	QE          float64   `parquet:"qe"`
	Unfamiliar  bool      `parquet:"unfamiliar"`
	Scaled      []float64 `parquet:"scaled,list"`
	Revised     bool      `parquet:"revised"`
}

// legacyRow is one window in a period file from before the manifest: the
// columns of timeline.parquet, with the cell in place of the unit, and
// (since lineages were recorded) scaled and revised.
type legacyRow struct {
	Site        string    `parquet:"site,dict"`
	WindowStart time.Time `parquet:"window_start,timestamp(microsecond:utc)"`
	WindowEnd   time.Time `parquet:"window_end,timestamp(microsecond:utc)"`
	Col         int32     `parquet:"col"`
	Row         int32     `parquet:"row"`
	Regime      int32     `parquet:"regime"`
	QE          float64   `parquet:"qe"`
	Unfamiliar  bool      `parquet:"unfamiliar"`
	Scaled      []float64 `parquet:"scaled,list"`
	Revised     bool      `parquet:"revised"`
}

// readFile reads the windows of one history file, of either layout.
func readFile(path string) ([]Window, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	info, err := f.Stat()
	if err != nil {
		return nil, err
	}
	pf, err := parquet.OpenFile(f, info.Size())
	if err != nil {
		return nil, err
	}
	lineage, _ := pf.Lookup(LineageKey)
	if _, ok := pf.Schema().Lookup("unit"); ok {
		rows, err := readRows[row](pf)
		ws := make([]Window, len(rows))
		for i, r := range rows {
			ws[i] = Window{Site: r.Site, Start: r.WindowStart, End: r.WindowEnd, Unit: int(r.Unit), Regime: int(r.Regime),
				QE: r.QE, Unfamiliar: r.Unfamiliar, Scaled: vector(r.Scaled), Revised: r.Revised, Lineage: lineage}
		}
		return ws, err
	}
	rows, err := readRows[legacyRow](pf)
	ws := make([]Window, len(rows))
	for i, r := range rows {
		ws[i] = Window{Site: r.Site, Start: r.WindowStart, End: r.WindowEnd, Unit: -1, Regime: int(r.Regime),
			QE: r.QE, Unfamiliar: r.Unfamiliar, Scaled: vector(r.Scaled), Revised: r.Revised, Lineage: lineage,
			cell: &[2]int{int(r.Col), int(r.Row)}}
	}
	return ws, err
}

func readRows[T any](pf *parquet.File) ([]T, error) {
	rows := make([]T, pf.NumRows())
	r := parquet.NewGenericReader[T](pf)
	defer r.Close()
	n, err := r.Read(rows)
	if err != nil && !errors.Is(err, io.EOF) {
		return nil, err
	}
	if n != len(rows) {
		return nil, fmt.Errorf("%d of %d rows read", n, len(rows))
	}
	return rows, nil
}

// vector is a scaled vector as read: an empty list is none recorded.
func vector(v []float64) []float64 {
	if len(v) == 0 {
		return nil
	}
	return v
}
