package export

import (
	"strings"
	"time"

	"github.com/kinmap/kinmap/attention"
)

// The files of the work list and the data health.
const (
	AttentionCSVFile     = "attention.csv"
	AttentionParquetFile = "attention.parquet"
	HealthFile           = "health.csv"
)

// attentionRow is one row of attention.csv and attention.parquet. The
// switch columns are null for a row that no switch set.
type attentionRow struct {
	Rank       int32      `parquet:"rank"`
	Level      string     `parquet:"level,dict"`
	Kind       string     `parquet:"kind,dict"`
	Site       string     `parquet:"site"`
	Sites      int32      `parquet:"sites"`
	SiteIDs    string     `parquet:"site_ids"`
	Reason     string     `parquet:"reason"`
	Time       *time.Time `parquet:"time,optional,timestamp(microsecond:utc)"`
	FromRegime *int32     `parquet:"from_regime,optional"`
	ToRegime   *int32     `parquet:"to_regime,optional"`
	Confidence *float64   `parquet:"confidence,optional"`
	News       string     `parquet:"news,dict"`
}

// attentionColumns are the columns of attention.csv, in the order of the
// row's fields.
var attentionColumns = []gpkgColumn{{"rank", "INTEGER"}, {"level", "TEXT"}, {"kind", "TEXT"}, {"site", "TEXT"},
	{"sites", "INTEGER"}, {"site_ids", "TEXT"}, {"reason", "TEXT"}, {"time", "DATETIME"}, {"from_regime", "INTEGER"},
	{"to_regime", "INTEGER"}, {"confidence", "REAL"}, {"news", "TEXT"}}

func (r attentionRow) values() []any {
	v := []any{r.Rank, r.Level, r.Kind, r.Site, r.Sites, r.SiteIDs, r.Reason, "", "", "", "", r.News}
	if r.Time != nil {
		v[7], v[8], v[9], v[10] = *r.Time, *r.FromRegime, *r.ToRegime, *r.Confidence
	}
	return v
}

// attentionRows turns the work list into table rows.
func attentionRows(list []attention.Row) []attentionRow {
	rows := make([]attentionRow, len(list))
	for i, a := range list {
		rows[i] = attentionRow{
			Rank: int32(a.Rank), Level: a.Level.String(), Kind: a.Kind(), Site: a.Site,
			Sites: int32(len(a.Sites)), SiteIDs: strings.Join(a.Sites, ","), Reason: a.Reason, News: a.News(),
		}
		if !a.Time.IsZero() {
			t, from, to, c := micro(a.Time), int32(a.From), int32(a.To), a.Confidence
			rows[i].Time, rows[i].FromRegime, rows[i].ToRegime, rows[i].Confidence = &t, &from, &to, &c
		}
	}
	return rows
}
