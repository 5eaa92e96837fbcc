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

// key identifies a window in the history.
type key struct {
	site  string
	start int64 // µs since the epoch
}

func keyOf(w *Window) key { return key{w.Site, micro(w.Start).UnixMicro()} }

func micro(t time.Time) time.Time { return t.UTC().Truncate(time.Microsecond) }

// Stage adds to tx, whose folders must include h.Dir, the writing of run,
// the windows of one run, whose regimes the map of lineage numbered, into
// the history: each replaces the window of the same site and start
// wherever the history holds one, the run's windows of a site replace its
// windows of another lineage that they hold more than half of (those of
// another window grid), and every other window stays. The
// windows of h whose regimes the run revised (Continuation.Settle) are
// written with it. The run's windows go to the period folder of the UTC
// date of the earliest. If another run wrote the history after h was
// read, Stage refuses (ChangedError) before adding anything.
func (h *History) Stage(tx *atomicfile.Tx, lineage string, run []Window) error {
	if err := h.unchanged(); err != nil {
		return err
	}
	gen := h.gen + 1
	held := holdingOf(run)
	byFile := make([][]Window, len(h.files))
	touched := map[int]bool{}
	for i := range h.Windows {
		w, f := &h.Windows[i], h.fileOf[i]
		if held.replaces(w, lineage) {
			touched[f] = true
			continue
		}
		byFile[f] = append(byFile[f], *w)
	}
	var files []string
	for f, name := range h.files {
		if !touched[f] && !h.dirty[f] {
			files = append(files, name)
			continue
		}
		if err := tx.Remove(filepath.Join(h.Dir, name)); err != nil {
			return fmt.Errorf("history: %w", err)
		}
		if len(byFile[f]) == 0 {
			continue
		}
		next := filepath.Join(filepath.Dir(name), fmt.Sprintf("part-%d-%d.parquet", gen, len(files)))
		if err := h.create(tx, next, byFile[f][0].Lineage, byFile[f]); err != nil {
			return err
		}
		files = append(files, next)
	}
	if len(run) > 0 {
		ws := make([]Window, len(run))
		first := run[0].Start
		for i, w := range run {
			w.Lineage, w.cell = lineage, nil
			ws[i] = w
			if w.Start.Before(first) {
				first = w.Start
			}
		}
		name := filepath.Join(periodPrefix+first.UTC().Format(time.DateOnly), fmt.Sprintf("part-%d-%d.parquet", gen, len(files)))
		if err := h.create(tx, name, lineage, ws); err != nil {
			return err
		}
		files = append(files, name)
	}
	for _, name := range h.junk {
		if err := tx.Remove(filepath.Join(h.Dir, name)); err != nil {
			return fmt.Errorf("history: %w", err)
		}
	}
	slices.Sort(files)
	b, err := json.MarshalIndent(manifest{Format: 1, Generation: gen, Files: files}, "", "  ")
	if err != nil {
		return err
	}
	if err := tx.Create(filepath.Join(h.Dir, manifestFile), func(w io.Writer) error {
		_, err := w.Write(append(b, '\n'))
		return err
	}); err != nil {
		return fmt.Errorf("history: %w", err)
	}
	return nil
}

// holding is what a run's windows hold: their keys, and their time spans by
// site, sorted and merged, in µs since the epoch.
type holding struct {
	keys  map[key]bool
	spans map[string][][2]int64
}

func holdingOf(run []Window) holding {
	out := holding{keys: make(map[key]bool, len(run)), spans: map[string][][2]int64{}}
	for i := range run {
		w := &run[i]
		out.keys[keyOf(w)] = true
		out.spans[w.Site] = append(out.spans[w.Site], [2]int64{micro(w.Start).UnixMicro(), micro(w.End).UnixMicro()})
	}
	for site, ss := range out.spans {
		slices.SortFunc(ss, func(a, b [2]int64) int { return cmp.Compare(a[0], b[0]) })
		merged := ss[:1]
		for _, s := range ss[1:] {
			if last := &merged[len(merged)-1]; s[0] <= last[1] {
				last[1] = max(last[1], s[1])
			} else {
				merged = append(merged, s)
			}
		}
		out.spans[site] = merged
	}
	return out
}

// replaces reports whether the run holds a window of w's site and start,
// or, for a window of another lineage than the run's, whether its windows
// of that site hold more than half of w's span. A lineage's windows are on
// one grid, the window settings of its model, where only the window of the
// same start is the same time: with overlapping windows (a stride shorter
// than the window) a stored window the run skipped stays. On another grid, as after a change of time zone or window
// length, it is the window whose time the run's windows now describe, so
// that the history never holds the same hours twice, while a window the
// run only grazes stays.
func (h holding) replaces(w *Window, lineage string) bool {
	if h.keys[keyOf(w)] {
		return true
	}
	if w.Lineage == lineage {
		return false
	}
	ss := h.spans[w.Site]
	a, b := micro(w.Start).UnixMicro(), micro(w.End).UnixMicro()
	held := int64(0)
	i, _ := slices.BinarySearchFunc(ss, a, func(s [2]int64, t int64) int { return cmp.Compare(s[1], t) })
	for ; i < len(ss) && ss[i][0] < b; i++ {
		held += min(b, ss[i][1]) - max(a, ss[i][0])
	}
	return 2*held > b-a
}

// unchanged reports whether the folder is still at the generation h read.
func (h *History) unchanged() error {
	b, err := os.ReadFile(filepath.Join(h.Dir, manifestFile))
	at := int64(0)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		if !h.legacy {
			at = -1 // the manifest went away
		}
	case err != nil:
		return fmt.Errorf("history: %w", err)
	default:
		var m manifest
		if err := json.Unmarshal(b, &m); err != nil {
			return fmt.Errorf("history: %s: %w", filepath.Join(h.Dir, manifestFile), err)
		}
		at = m.Generation
		if h.legacy {
			at = max(at, 1)
		}
	}
	if at != h.gen {
		return &ChangedError{Dir: h.Dir, Read: h.gen, At: at}
	}
	return nil
}

// create adds the file name of the history, holding ws, to tx, in the
// layout its windows were read in, by site and then time. It sorts the
// windows' indices, not the windows: moving the records themselves
// (BenchmarkSortWindows in package features) costs 15 to 75 times as
// much.
func (h *History) create(tx *atomicfile.Tx, name, lineage string, ws []Window) error {
	order := make([]int, len(ws))
	for i := range order {
		order[i] = i
	}
	slices.SortFunc(order, func(a, b int) int {
		return cmp.Or(strings.Compare(ws[a].Site, ws[b].Site), ws[a].Start.Compare(ws[b].Start))
	})
	write := func(w io.Writer) error {
		opts := []parquet.WriterOption{parquet.Compression(&parquet.Zstd), parquet.KeyValueMetadata(LineageKey, lineage)}
		if ws[0].cell != nil {
			rows := make([]legacyRow, len(ws))
			for i, k := range order {
				w := &ws[k]
				rows[i] = legacyRow{Site: w.Site, WindowStart: micro(w.Start), WindowEnd: micro(w.End), Col: int32(w.cell[0]), Row: int32(w.cell[1]),
					Regime: int32(w.Regime), QE: w.QE, Unfamiliar: w.Unfamiliar, Scaled: w.Scaled, Revised: w.Revised}
			}
			return writeRows(w, rows, opts)
		}
		rows := make([]row, len(ws))
		for i, k := range order {
			w := &ws[k]
			rows[i] = row{Site: w.Site, WindowStart: micro(w.Start), WindowEnd: micro(w.End), Unit: int32(w.Unit),
				Regime: int32(w.Regime), QE: w.QE, Unfamiliar: w.Unfamiliar, Scaled: w.Scaled, Revised: w.Revised}
		}
		return writeRows(w, rows, opts)
	}
	if err := tx.Create(filepath.Join(h.Dir, name), write); err != nil {
		return fmt.Errorf("history: %w", err)
	}
	return nil
}

func writeRows[T any](w io.Writer, rows []T, opts []parquet.WriterOption) error {
	pw := parquet.NewGenericWriter[T](w, opts...)
	if _, err := pw.Write(rows); err != nil {
		return err
	}
	return pw.Close()
}

// Write writes run into the history folder dir as Stage does, in a
// transaction of its own: the folder's lock is taken (waiting at most a
// minute for another run) and held from reading the history to the
// commit.
func Write(dir, lineage string, run []Window) error {
	tx, err := atomicfile.Begin(dir, nil, lockWait)
	if err != nil {
		return fmt.Errorf("history: %w", err)
	}
	defer tx.Abort()
	h, err := Load(dir)
	if err != nil {
		return err
	}
	if err := h.Stage(tx, lineage, run); err != nil {
		return err
	}
	if err := tx.Commit(); err != nil {
		return fmt.Errorf("history: %w", err)
	}
	return nil
}
