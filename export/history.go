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

// Period is one dump period of a history folder: its key (the UTC date of
// its earliest window, YYYY-MM-DD) and its timeline.
type Period struct {
	Key     string
	Entries []timeline.Entry // BMU is -1: the history keeps the cell, not the unit
}

// PeriodKey returns the period key of a timeline: the UTC date of its
// earliest window start.
func PeriodKey(entries []timeline.Entry) (string, error) {
	if len(entries) == 0 {
		return "", errors.New("export: history: an empty timeline has no period")
	}
	first := entries[0].Start
	for _, e := range entries[1:] {
		if e.Start.Before(first) {
			first = e.Start
		}
	}
	return first.UTC().Format(time.DateOnly), nil
}

// AppendHistory writes entries as the timeline of one dump period into
// dir/period=KEY/timeline.parquet, KEY from PeriodKey, in the format of
// timeline.parquet. A period written before is replaced, so running the
// same dump twice does not duplicate it. It returns the key.
func AppendHistory(dir string, entries []timeline.Entry) (string, error) {
	key, err := PeriodKey(entries)
	if err != nil {
		return "", err
	}
	st, err := newStage(filepath.Join(dir, periodPrefix+key))
	if err != nil {
		return "", err
	}
	rows := entryRows(entries)
	st.add(TimelineParquetFile, func(w io.Writer) error { return writeParquet(w, rows) })
	return key, st.commit()
}

// ReadHistory reads every period of a history folder, oldest first. A
// folder that does not exist is an empty history.
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
		rows, err := parquet.ReadFile[timelineRow](path)
		if err != nil {
			return nil, fmt.Errorf("export: history: %s: %w", path, err)
		}
		p := Period{Key: key, Entries: make([]timeline.Entry, len(rows))}
		for i, r := range rows {
			p.Entries[i] = timeline.Entry{
				Site: r.Site, Start: r.WindowStart, End: r.WindowEnd, BMU: -1,
				Col: int(r.Col), Row: int(r.Row), Regime: int(r.Regime), QE: r.QE, Unfamiliar: r.Unfamiliar,
			}
		}
		out = append(out, p)
	}
	slices.SortFunc(out, func(a, b Period) int { return strings.Compare(a.Key, b.Key) })
	return out, nil
}

// entryRows lists entries as timeline rows by site, then time.
func entryRows(entries []timeline.Entry) []timelineRow {
	rows := make([]timelineRow, len(entries))
	for i, e := range entries {
		rows[i] = rowOf(e)
	}
	slices.SortStableFunc(rows, func(a, b timelineRow) int {
		if c := strings.Compare(a.Site, b.Site); c != 0 {
			return c
		}
		return a.WindowStart.Compare(b.WindowStart)
	})
	return rows
}
