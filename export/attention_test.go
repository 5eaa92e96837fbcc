package export

import (
	"bytes"
	"encoding/json"
	"testing"
	"time"

	"github.com/kinmap/kinmap/attention"
	"github.com/kinmap/kinmap/internal/parquettest"
)

// attention.parquet, read with arrow-go's own reader, holds the rows of
// attention.csv; a row no switch set has null switch columns in Parquet
// and empty fields in CSV.
func TestAttentionTables(t *testing.T) {
	at := time.Date(2026, 11, 9, 0, 0, 0, 0, time.UTC)
	list := []attention.Row{
		{Rank: 1, Level: attention.Fault, Site: "PS-1", Sites: []string{"PS-1"}, Reason: "switched into fault regime 1 → 4", Time: at, From: 1, To: 4, Confidence: 0.9},
		{Rank: 2, Level: attention.Switch, Sites: []string{"PS-2", "PS-3", "PS-4"}, Reason: "3 sites switched", Time: at, From: 1, To: 2, Confidence: 0.7},
		{Rank: 3, Level: attention.Unfamiliar, Site: "PS-5", Sites: []string{"PS-5"}, Reason: "4 of 28 windows unfamiliar"},
	}
	rows := attentionRows(list)
	var pq, cs bytes.Buffer
	if err := writeParquet(&pq, rows); err != nil {
		t.Fatal(err)
	}
	if err := writeCSV(&cs, attentionColumns, rows); err != nil {
		t.Fatal(err)
	}
	header, records := readCSV(t, cs.Bytes())
	cols := parquetColumns(t, pq.Bytes())
	if len(cols) != len(header) || len(records) != len(list) {
		t.Fatalf("Parquet %d columns, CSV %d×%d, want %d×%d", len(cols), len(records), len(header), len(list), len(header))
	}
	for i, name := range header {
		if got := cols[i].Name; got != name {
			t.Errorf("column %d: Parquet %q, CSV %q", i, got, name)
		}
		if len(cols[i].Values) != len(list) {
			t.Errorf("column %s: %d Parquet rows, want %d", name, len(cols[i].Values), len(list))
		}
	}
	col := func(name string) []any {
		c, _ := parquettest.ByName(cols, name)
		return c.Values
	}
	for _, name := range []string{"time", "from_regime", "to_regime", "confidence"} {
		c := col(name)
		if c[0] == nil || c[1] == nil || c[2] != nil {
			t.Errorf("column %s: %v, want nulls in the third row only", name, c)
		}
	}
	if got := records[2][7:11]; got[0] != "" || got[1] != "" || got[2] != "" || got[3] != "" {
		t.Errorf("CSV switch fields of a row no switch set: %q, want empty", got)
	}
	kinds, ids := col("kind"), col("site_ids")
	if kinds[1] != "fleet" || ids[1] != "PS-2,PS-3,PS-4" || records[1][2] != "fleet" || records[1][5] != "PS-2,PS-3,PS-4" {
		t.Errorf("fleet row: kind %v site_ids %v in Parquet, %q %q in CSV", kinds[1], ids[1], records[1][2], records[1][5])
	}
	if records[0][11] != "new" || records[2][11] != "" || records[0][1] != "fault" || records[0][7] != "2026-11-09T00:00:00Z" {
		t.Errorf("CSV rows %q", records)
	}
}

// The explorer's sites table carries the work list's rank: a site's own
// row, or the fleet-wide event it is part of when that ranks higher; a
// site on no row has none.
func TestExplorerRank(t *testing.T) {
	r := fixtureRun()
	r.Attention = []attention.Row{
		{Rank: 1, Level: attention.Watch, Sites: []string{"T-7", "PS-01"}, Reason: "2 sites switched"},
		{Rank: 2, Level: attention.Switch, Site: "PS-01", Sites: []string{"PS-01"}, Reason: "switched"},
		{Rank: 3, Level: attention.Unfamiliar, Site: "X-9", Sites: []string{"X-9"}, Reason: "1 of 3 windows unfamiliar"},
	}
	ss, _ := sites(r)
	data, _, err := explorerJSON(r, ss, nil)
	if err != nil {
		t.Fatal(err)
	}
	var d struct {
		Sites []struct {
			ID   string `json:"id"`
			Rank *int   `json:"rank"`
		} `json:"sites"`
	}
	if err := json.Unmarshal(data, &d); err != nil {
		t.Fatal(err)
	}
	want := map[string]int{"PS-01": 1, "T-7": 1, "X-9": 3}
	if len(d.Sites) != 4 {
		t.Fatalf("%d sites in the explorer, want 4", len(d.Sites))
	}
	for _, s := range d.Sites {
		w, ok := want[s.ID]
		switch {
		case !ok && s.Rank != nil:
			t.Errorf("site %s: rank %d, want none", s.ID, *s.Rank)
		case ok && (s.Rank == nil || *s.Rank != w):
			t.Errorf("site %s: rank %v, want %d", s.ID, s.Rank, w)
		}
	}
}
