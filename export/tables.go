package export

import (
	"encoding/csv"
	"io"
	"strconv"
	"time"

	"github.com/parquet-go/parquet-go"

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
}

var (
	timelineHeader = []string{"site", "window_start", "window_end", "col", "row", "regime", "qe", "unfamiliar"}
	switchHeader   = []string{"site", "time", "from_regime", "to_regime", "windows_before", "windows_after", "confidence"}
)

func (r timelineRow) record() []string {
	return []string{r.Site, rfc3339(r.WindowStart), rfc3339(r.WindowEnd), itoa(r.Col), itoa(r.Row), itoa(r.Regime), ftoa(r.QE), strconv.FormatBool(r.Unfamiliar)}
}

func (r switchRow) record() []string {
	return []string{r.Site, rfc3339(r.Time), itoa(r.FromRegime), itoa(r.ToRegime), itoa(r.WindowsBefore), itoa(r.WindowsAfter), ftoa(r.Confidence)}
}

// timelineRows lists the windows by site, then time. Times are kept to the
// microsecond, the Parquet unit.
func timelineRows(r *Run, ss []*site) []timelineRow {
	rows := make([]timelineRow, 0, len(r.Entries))
	for _, s := range ss {
		for _, i := range s.entries {
			rows = append(rows, rowOf(r.Entries[i]))
		}
	}
	return rows
}

// rowOf is the timeline row of one entry.
func rowOf(e timeline.Entry) timelineRow {
	return timelineRow{
		Site: e.Site, WindowStart: micro(e.Start), WindowEnd: micro(e.End),
		Col: int32(e.Col), Row: int32(e.Row), Regime: int32(e.Regime),
		QE: e.QE, Unfamiliar: e.Unfamiliar,
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
	}
	return rows
}

// writeCSV writes a header and records with CRLF line ends (RFC 4180,
// section 2).
func writeCSV[T interface{ record() []string }](w io.Writer, header []string, rows []T) error {
	c := csv.NewWriter(w)
	c.UseCRLF = true
	if err := c.Write(header); err != nil {
		return err
	}
	for _, r := range rows {
		if err := c.Write(r.record()); err != nil {
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

func itoa(v int32) string { return strconv.FormatInt(int64(v), 10) }

// ftoa writes the shortest decimal that reads back as the same float64.
func ftoa(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
