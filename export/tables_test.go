package export

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/parquet/schema"
	"github.com/kinmap/kinmap/internal/parquettest"
)

// readCSV reads a CSV file with its header, checking RFC 4180: CRLF line
// ends (section 2, rule 1) and the same number of fields on every line
// (rule 4).
func readCSV(t *testing.T, b []byte) ([]string, [][]string) {
	t.Helper()
	if n, crlf := bytes.Count(b, []byte("\n")), bytes.Count(b, []byte("\r\n")); n != crlf || n == 0 {
		t.Errorf("%d of %d line ends are CRLF (RFC 4180, 2.1)", crlf, n)
	}
	rows, err := csv.NewReader(bytes.NewReader(b)).ReadAll() // checks field counts
	if err != nil {
		t.Fatal(err)
	}
	return rows[0], rows[1:]
}

// parquetColumns reads a Parquet file with arrow-go's own Parquet reader
// (package parquettest), an implementation independent of the writer.
func parquetColumns(t *testing.T, b []byte) []parquettest.Column {
	t.Helper()
	cols, err := parquettest.Read(b)
	if err != nil {
		t.Fatal(err)
	}
	return cols
}

// parseCSVValue reads a CSV field as the type of the Parquet value, with
// the standard library's parsers: RFC 3339 times (RFC 3339, 5.6); a null
// is an empty field.
func parseCSVValue(field string, like any) (any, error) {
	switch like.(type) {
	case nil:
		if field != "" {
			return nil, fmt.Errorf("%q for a null", field)
		}
		return nil, nil
	case string:
		return field, nil
	case int64:
		return strconv.ParseInt(field, 10, 64)
	case float64:
		return strconv.ParseFloat(field, 64)
	case bool:
		return strconv.ParseBool(field)
	case time.Time:
		if !strings.HasSuffix(field, "Z") {
			return nil, fmt.Errorf("time %q is not in UTC (Z)", field)
		}
		return time.Parse(time.RFC3339Nano, field)
	}
	return nil, fmt.Errorf("no parser for %T", like)
}

func equalValues(a, b any) bool {
	if ta, ok := a.(time.Time); ok {
		tb, ok := b.(time.Time)
		return ok && ta.Equal(tb)
	}
	return a == b
}

// The Parquet files, read back with arrow-go, hold exactly what the CSV
// files hold, column by column, with UTC-adjusted microsecond timestamps.
func TestParquetEqualsCSV(t *testing.T) {
	dir := written(t)
	for _, tc := range []struct {
		parquet, csv string
		header       []string
		times        []string
	}{
		{TimelineParquetFile, TimelineCSVFile, []string{"site", "window_start", "window_end", "col", "row", "regime", "qe", "unfamiliar", "regime_name", "regime_status", "likely_condition", "condition_confidence"}, []string{"window_start", "window_end"}},
		{SwitchesParquetFile, SwitchesCSVFile, []string{"site", "time", "from_regime", "to_regime", "windows_before", "windows_after", "confidence", "from_name", "from_status", "to_name", "to_status", "onset", "shared_start"}, []string{"time", "onset", "shared_start"}},
		{SharedParquetFile, SharedCSVFile, []string{"start", "end", "regime", "regime_name", "regime_status", "like_regime", "like_name", "like_status", "sites", "regime_sites", "site_ids", "p_value"}, []string{"start", "end"}},
	} {
		t.Run(tc.parquet, func(t *testing.T) {
			header, rows := readCSV(t, read(t, dir, tc.csv))
			if strings.Join(header, ",") != strings.Join(tc.header, ",") {
				t.Errorf("CSV header %v, want %v", header, tc.header)
			}
			cols := parquetColumns(t, read(t, dir, tc.parquet))
			for i, c := range cols {
				if i >= len(tc.header) || c.Name != tc.header[i] {
					t.Errorf("Parquet column %d is %q, want %q", i, c.Name, tc.header[min(i, len(tc.header)-1)])
				}
			}
			for _, name := range tc.times {
				c, ok := parquettest.ByName(cols, name)
				if !ok {
					t.Fatalf("no column %s", name)
				}
				// TIMESTAMP(isAdjustedToUTC=true, unit=MICROS) (Parquet
				// format, LogicalTypes.md).
				ts, ok := c.Logical.(schema.TimestampLogicalType)
				if !ok || ts.TimeUnit() != schema.TimeUnitMicros || !ts.IsAdjustedToUTC() {
					t.Errorf("column %s is %s, want TIMESTAMP(MICROS, UTC)", name, c.Logical)
				}
			}
			if len(cols) != len(header) {
				t.Fatalf("%d Parquet columns, %d CSV columns", len(cols), len(header))
			}
			for c := range cols {
				if len(cols[c].Values) != len(rows) {
					t.Fatalf("column %s: %d Parquet rows, %d CSV rows", header[c], len(cols[c].Values), len(rows))
				}
				for r, pv := range cols[c].Values {
					cv, err := parseCSVValue(rows[r][c], pv)
					if err != nil || !equalValues(cv, pv) {
						t.Errorf("row %d, %s: CSV %q (%v), Parquet %v", r, header[c], rows[r][c], err, pv)
					}
				}
			}
		})
	}
}

// The CSV files hold the run's windows and switches, by site and time.
func TestCSVContents(t *testing.T) {
	dir := written(t)
	_, rows := readCSV(t, read(t, dir, TimelineCSVFile))
	n := 0
	for _, s := range fixture {
		for d, g := range s.regimes {
			row := rows[n]
			n++
			start := day0.AddDate(0, 0, d).Format(time.RFC3339)
			if row[0] != s.id || row[1] != start || row[5] != strconv.Itoa(g) {
				t.Errorf("row %d: %v, want site %s, start %s, regime %d", n, row, s.id, start, g)
			}
		}
	}
	if n != len(rows) {
		t.Errorf("%d rows, want %d", len(rows), n)
	}
	// QE 0.1 × 3 in binary floating point, in its shortest round-trip form.
	if want := []string{"X-9", "2025-03-03T00:00:00Z", "2025-03-04T00:00:00Z", "2", "0", "2", "0.30000000000000004", "true", "worn bearing, \"B\"", "fault", "", "0"}; strings.Join(rows[len(rows)-1], ",") != strings.Join(want, ",") {
		t.Errorf("last row %v, want %v", rows[len(rows)-1], want)
	}
	_, sw := readCSV(t, read(t, dir, SwitchesCSVFile))
	want := [][]string{
		{"PS-01", "2025-03-04T00:00:00Z", "1", "2", "3", "3", "0.9", "", "", "worn bearing, \"B\"", "fault", "2025-03-02T00:00:00Z", ""},
		{"T-7", "2025-03-03T00:00:00Z", "1", "3", "2", "3", "0.75", "", "", "", "", "", ""},
	}
	if fmt.Sprint(sw) != fmt.Sprint(want) {
		t.Errorf("switches %v, want %v", sw, want)
	}
}
