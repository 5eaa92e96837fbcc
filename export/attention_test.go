package export

import (
	"bytes"
	"context"
	"encoding/json"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"

	"github.com/kinmap/kinmap/attention"
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
	tbl, err := pqarrow.ReadTable(context.Background(), bytes.NewReader(pq.Bytes()), nil, pqarrow.ArrowReadProperties{}, memory.DefaultAllocator)
	if err != nil {
		t.Fatal(err)
	}
	defer tbl.Release()
	if int(tbl.NumCols()) != len(header) || int(tbl.NumRows()) != len(list) || len(records) != len(list) {
		t.Fatalf("Parquet %d×%d, CSV %d×%d, want %d×%d", tbl.NumRows(), tbl.NumCols(), len(records), len(header), len(list), len(header))
	}
	for i, name := range header {
		if got := tbl.Schema().Field(i).Name; got != name {
			t.Errorf("column %d: Parquet %q, CSV %q", i, got, name)
		}
	}
	col := func(name string) *arrow.Chunked {
		return tbl.Column(tbl.Schema().FieldIndices(name)[0]).Data()
	}
	for _, name := range []string{"time", "from_regime", "to_regime", "confidence"} {
		c := col(name).Chunk(0)
		if c.IsNull(0) || c.IsNull(1) || !c.IsNull(2) {
			t.Errorf("column %s: nulls %v %v %v, want only the third", name, c.IsNull(0), c.IsNull(1), c.IsNull(2))
		}
	}
	if got := records[2][7:11]; got[0] != "" || got[1] != "" || got[2] != "" || got[3] != "" {
		t.Errorf("CSV switch fields of a row no switch set: %q, want empty", got)
	}
	kinds := col("kind").Chunk(0).(*array.String)
	ids := col("site_ids").Chunk(0).(*array.String)
	if kinds.Value(1) != "fleet" || ids.Value(1) != "PS-2,PS-3,PS-4" || records[1][2] != "fleet" || records[1][5] != "PS-2,PS-3,PS-4" {
		t.Errorf("fleet row: kind %q site_ids %q in Parquet, %q %q in CSV", kinds.Value(1), ids.Value(1), records[1][2], records[1][5])
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
