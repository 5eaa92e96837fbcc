package export

import (
	"encoding/csv"
	"fmt"
	"io"
	"slices"
	"strconv"
	"time"

	"github.com/parquet-go/parquet-go"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/lattice"
	"github.com/kinmap/kinmap/timeline"
)

// timelineRow is one row of timeline.parquet and timeline.csv.
type timelineRow struct {
	Site        string    `parquet:"site,dict"`
	WindowStart time.Time `parquet:"window_start,timestamp(microsecond:utc)"`
	WindowEnd   time.Time `parquet:"window_end,timestamp(microsecond:utc)"`
	Col         int32     `parquet:"col"`
	Row         int32     `parquet:"row"`
	Regime      int32     `parquet:"regime"`
	QE          float64   `parquet:"qe"`
	Unfamiliar  bool      `parquet:"unfamiliar"`
	// The user's label of the regime (mapper.Regime), "" for none.
	RegimeName   string `parquet:"regime_name,dict"`
	RegimeStatus string `parquet:"regime_status,dict"`
	// Condition and ConditionConfidence are the window's likely condition
	// from the labelled windows near it on the map (package events).
	Condition           string  `parquet:"likely_condition,dict"`
	ConditionConfidence float64 `parquet:"condition_confidence"`
}

// switchRow is one row of switches.parquet and switches.csv.
type switchRow struct {
	Site          string    `parquet:"site,dict"`
	Time          time.Time `parquet:"time,timestamp(microsecond:utc)"`
	FromRegime    int32     `parquet:"from_regime"`
	ToRegime      int32     `parquet:"to_regime"`
	WindowsBefore int32     `parquet:"windows_before"`
	WindowsAfter  int32     `parquet:"windows_after"`
	Confidence    float64   `parquet:"confidence"`
	// The user's labels of the two regimes, "" for none.
	FromName   string `parquet:"from_name,dict"`
	FromStatus string `parquet:"from_status,dict"`
	ToName     string `parquet:"to_name,dict"`
	ToStatus   string `parquet:"to_status,dict"`
	// Onset is the start of the drift towards the new regime that led to
	// the switch (timeline.Switch.Onset); nil when none was found. Last,
	// so that the columns before it keep their places.
	Onset *time.Time `parquet:"onset,optional,timestamp(microsecond:utc)"`
	// SharedStart is the start of the shared condition the switch is part
	// of (timeline.Shared.Holds): with FromRegime, the start and regime of
	// its row in shared.csv; nil for a switch of the site's own.
	SharedStart *time.Time `parquet:"shared_start,optional,timestamp(microsecond:utc)"`
}

// The columns of the timeline and switch tables, for CSV headers and the
// GeoPackage, in the order of the rows' fields.
var (
	timelineColumns = []gpkgColumn{{"site", "TEXT"}, {"window_start", "DATETIME"}, {"window_end", "DATETIME"},
		{"col", "INTEGER"}, {"row", "INTEGER"}, {"regime", "INTEGER"}, {"qe", "REAL"}, {"unfamiliar", "BOOLEAN"},
		{"regime_name", "TEXT"}, {"regime_status", "TEXT"},
		{"likely_condition", "TEXT"}, {"condition_confidence", "REAL"}}
	switchColumns = []gpkgColumn{{"site", "TEXT"}, {"time", "DATETIME"}, {"from_regime", "INTEGER"}, {"to_regime", "INTEGER"},
		{"windows_before", "INTEGER"}, {"windows_after", "INTEGER"}, {"confidence", "REAL"},
		{"from_name", "TEXT"}, {"from_status", "TEXT"}, {"to_name", "TEXT"}, {"to_status", "TEXT"}, {"onset", "DATETIME"},
		{"shared_start", "DATETIME"}}
)

func (r timelineRow) values() []any {
	return []any{r.Site, r.WindowStart, r.WindowEnd, r.Col, r.Row, r.Regime, r.QE, r.Unfamiliar, r.RegimeName, r.RegimeStatus, r.Condition, r.ConditionConfidence}
}

func (r switchRow) values() []any {
	return []any{r.Site, r.Time, r.FromRegime, r.ToRegime, r.WindowsBefore, r.WindowsAfter, r.Confidence,
		r.FromName, r.FromStatus, r.ToName, r.ToStatus, optionalTime(r.Onset), optionalTime(r.SharedStart)}
}

// optionalTime is a row value of a time that may be missing: nil, which
// CSV writes empty and the GeoPackage as NULL, when t is.
func optionalTime(t *time.Time) any {
	if t == nil {
		return nil
	}
	return *t
}

// csvField writes a value of a row as CSV text: times RFC 3339 in UTC,
// floats the shortest decimal that reads back the same, nil empty.
func csvField(v any) string {
	switch v := v.(type) {
	case nil:
		return ""
	case time.Time:
		return rfc3339(v)
	case float64:
		return strconv.FormatFloat(v, 'g', -1, 64)
	default:
		return fmt.Sprint(v)
	}
}

// attributesLayer makes a GeoPackage attributes table of rows.
func attributesLayer[T interface{ values() []any }](name, description string, columns []gpkgColumn, rows []T) gpkgLayer {
	l := gpkgLayer{name: name, description: description, columns: columns}
	for _, r := range rows {
		l.rows = append(l.rows, r.values())
	}
	return l
}

// timelineRows lists the windows by site, then time. Times are kept to the
// microsecond, the Parquet unit.
func timelineRows(r *Run, ss []*site) []timelineRow {
	rows := make([]timelineRow, 0, len(r.Table.Windows))
	for _, s := range ss {
		for _, i := range s.windows {
			w := &r.Table.Windows[i]
			row := rowOf(r.Model.Map.Lattice, w)
			row.RegimeName, row.RegimeStatus = regimeLabel(r.Model, w.Regime)
			rows = append(rows, row)
		}
	}
	return rows
}

// rowOf is the timeline row of one window, its unit a cell of l.
func rowOf(l lattice.Lattice, w *features.Window) timelineRow {
	col, row := l.Cell(w.Unit)
	return timelineRow{
		Site: w.Site, WindowStart: micro(w.Start), WindowEnd: micro(w.End),
		Col: int32(col), Row: int32(row), Regime: int32(w.Regime),
		QE: w.QE, Unfamiliar: w.Unfamiliar,
		Condition: w.Condition, ConditionConfidence: w.ConditionConfidence,
	}
}

func switchRows(r *Run) []switchRow {
	rows := make([]switchRow, len(r.Switches))
	for i, s := range r.Switches {
		rows[i] = switchRow{
			Site: s.Site, Time: micro(s.Time),
			FromRegime: int32(s.From), ToRegime: int32(s.To),
			WindowsBefore: int32(s.Before), WindowsAfter: int32(s.After),
			Confidence: s.Confidence,
		}
		rows[i].FromName, rows[i].FromStatus = regimeLabel(r.Model, s.From)
		rows[i].ToName, rows[i].ToStatus = regimeLabel(r.Model, s.To)
		if !s.Onset.IsZero() && s.Onset.Before(s.Time) {
			t := micro(s.Onset)
			rows[i].Onset = &t
		}
		if k := slices.IndexFunc(r.Shared, func(sh timeline.Shared) bool { return sh.Holds(s) }); k >= 0 {
			t := micro(r.Shared[k].Start)
			rows[i].SharedStart = &t
		}
	}
	return rows
}

// writeCSV writes a header and rows with CRLF line ends (RFC 4180,
// section 2).
func writeCSV[T interface{ values() []any }](w io.Writer, columns []gpkgColumn, rows []T) error {
	c := csv.NewWriter(w)
	c.UseCRLF = true
	record := make([]string, len(columns))
	for i, col := range columns {
		record[i] = col.name
	}
	if err := c.Write(record); err != nil {
		return err
	}
	for _, r := range rows {
		for i, v := range r.values() {
			record[i] = csvField(v)
		}
		if err := c.Write(record); err != nil {
			return err
		}
	}
	c.Flush()
	return c.Error()
}

func writeParquet[T any](w io.Writer, rows []T) error {
	pw := parquet.NewGenericWriter[T](w, parquet.Compression(&parquet.Zstd))
	if _, err := pw.Write(rows); err != nil {
		return err
	}
	return pw.Close()
}

func micro(t time.Time) time.Time { return t.UTC().Truncate(time.Microsecond) }
