package export

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"github.com/parquet-go/parquet-go"

	"github.com/kinmap/kinmap/timeline"
)

// periodPrefix names the Hive-style partition folders of a history folder.
const periodPrefix = "period="

// LineageKey is the key of the Parquet key-value metadata in which a history
// period records the lineage of the map that numbered its regimes.
const LineageKey = "kinmap.lineage"

// Period is one dump period of a history folder.
type Period struct {
	Key     string // the UTC date of its earliest window, YYYY-MM-DD
	Lineage string // lineage of the map that numbered its regimes (mapper.Model.Lineage); "" when not recorded
	Windows []HistoryWindow
}

// HistoryWindow is one window of a history period.
type HistoryWindow struct {
	timeline.Entry           // BMU is -1: the history keeps the cell, not the unit
	Scaled         []float64 // scaled feature vector, to decode the window again with later ones; nil when not recorded
	Revised        bool      // Regime was changed by decoding the window again with a later dump
}

// historyRow is one row of a history period: a timeline row, the window's
// scaled feature vector and whether a later dump revised its regime.
type historyRow struct {
	timelineRow
	Scaled  []float64 `parquet:"scaled,list"`
	Revised bool      `parquet:"revised"`
}

// AppendHistory writes p as the timeline of one dump period into
// dir/period=KEY/timeline.parquet, KEY the UTC date of its earliest window,
// and returns KEY; p.Key is ignored. A window (site and start) that p holds
// is removed from every other period, so that running a dump again, even one
// cut a day earlier or later, replaces its windows instead of duplicating
// them: those periods are rewritten, and removed when left empty.
func AppendHistory(dir string, p Period) (string, error) {
	if len(p.Windows) == 0 {
		return "", errors.New("export: history: an empty timeline has no period")
	}
	first := p.Windows[0].Start
	for _, w := range p.Windows[1:] {
		if w.Start.Before(first) {
			first = w.Start
		}
	}
	p.Key = first.UTC().Format(time.DateOnly)
	others, err := ReadHistory(dir)
	if err != nil {
		return "", err
	}
	// The new period is written first: a failure later leaves windows twice
	// rather than losing any.
	if err := WritePeriod(dir, p); err != nil {
		return "", err
	}
	type window struct {
		site  string
		start int64
	}
	held := make(map[window]bool, len(p.Windows))
	for _, w := range p.Windows {
		held[window{w.Site, micro(w.Start).UnixMicro()}] = true
	}
	for _, o := range others {
		if o.Key == p.Key {
			continue
		}
		n := len(o.Windows)
		o.Windows = slices.DeleteFunc(o.Windows, func(w HistoryWindow) bool { return held[window{w.Site, micro(w.Start).UnixMicro()}] })
		if len(o.Windows) == n {
			continue
		}
		if err := WritePeriod(dir, o); err != nil {
			return "", err
		}
	}
	return p.Key, nil
}

// WritePeriod replaces period p.Key of the history folder dir with p,
// through a temporary file renamed into place; a period without windows is
// removed.
func WritePeriod(dir string, p Period) error {
	if _, err := time.Parse(time.DateOnly, p.Key); err != nil {
		return fmt.Errorf("export: history: period %q: want YYYY-MM-DD", p.Key)
	}
	folder := filepath.Join(dir, periodPrefix+p.Key)
	if len(p.Windows) == 0 {
		for _, path := range []string{filepath.Join(folder, TimelineParquetFile), folder} {
			if err := os.Remove(path); err != nil && !errors.Is(err, os.ErrNotExist) {
				return fmt.Errorf("export: history: %w", err)
			}
		}
		return nil
	}
	rows := make([]historyRow, len(p.Windows))
	for i, w := range p.Windows {
		rows[i] = historyRow{timelineRow: rowOf(w.Entry), Scaled: w.Scaled, Revised: w.Revised}
	}
	slices.SortStableFunc(rows, func(a, b historyRow) int {
		if c := strings.Compare(a.Site, b.Site); c != 0 {
			return c
		}
		return a.WindowStart.Compare(b.WindowStart)
	})
	st, err := newStage(folder)
	if err != nil {
		return err
	}
	st.add(TimelineParquetFile, func(w io.Writer) error {
		pw := parquet.NewGenericWriter[historyRow](w, parquet.Compression(&parquet.Zstd), parquet.KeyValueMetadata(LineageKey, p.Lineage))
		if _, err := pw.Write(rows); err != nil {
			return err
		}
		return pw.Close()
	})
	return st.commit()
}

// ReadHistory reads every period of a history folder, oldest first. A
// folder that does not exist is an empty history. A period written before
// lineages and scaled vectors were recorded reads with neither.
func ReadHistory(dir string) ([]Period, error) {
	items, err := os.ReadDir(dir)
	if errors.Is(err, os.ErrNotExist) {
		return nil, nil
	}
	if err != nil {
		return nil, fmt.Errorf("export: history: %w", err)
	}
	var out []Period
	for _, it := range items {
		key, ok := strings.CutPrefix(it.Name(), periodPrefix)
		if !it.IsDir() || !ok {
			continue
		}
		if _, err := time.Parse(time.DateOnly, key); err != nil {
			return nil, fmt.Errorf("export: history: %s: not a period folder (want %sYYYY-MM-DD)", filepath.Join(dir, it.Name()), periodPrefix)
		}
		path := filepath.Join(dir, it.Name(), TimelineParquetFile)
		p, err := readPeriod(path)
		if err != nil {
			return nil, fmt.Errorf("export: history: %s: %w", path, err)
		}
		p.Key = key
		out = append(out, p)
	}
	slices.SortFunc(out, func(a, b Period) int { return strings.Compare(a.Key, b.Key) })
	return out, nil
}

// readPeriod reads one period file, without its key.
func readPeriod(path string) (Period, error) {
	f, err := os.Open(path)
	if err != nil {
		return Period{}, err
	}
	defer f.Close()
	info, err := f.Stat()
	if err != nil {
		return Period{}, err
	}
	pf, err := parquet.OpenFile(f, info.Size())
	if err != nil {
		return Period{}, err
	}
	var p Period
	p.Lineage, _ = pf.Lookup(LineageKey)
	rows := make([]historyRow, pf.NumRows())
	r := parquet.NewGenericReader[historyRow](pf)
	defer r.Close()
	if n, err := r.Read(rows); err != nil && !errors.Is(err, io.EOF) {
		return Period{}, err
	} else if n != len(rows) {
		return Period{}, fmt.Errorf("%d of %d rows read", n, len(rows))
	}
	p.Windows = make([]HistoryWindow, len(rows))
	for i, r := range rows {
		p.Windows[i] = HistoryWindow{
			Entry: timeline.Entry{
				Site: r.Site, Start: r.WindowStart, End: r.WindowEnd, BMU: -1,
				Col: int(r.Col), Row: int(r.Row), Regime: int(r.Regime), QE: r.QE, Unfamiliar: r.Unfamiliar,
			},
			Revised: r.Revised,
		}
		if len(r.Scaled) > 0 {
			p.Windows[i].Scaled = r.Scaled
		}
	}
	return p, nil
}
