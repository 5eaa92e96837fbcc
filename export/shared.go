package export

import (
	"strconv"
	"strings"
	"time"

	"github.com/kinmap/kinmap/timeline"
)

// The files of the shared conditions.
const (
	SharedCSVFile     = "shared.csv"
	SharedParquetFile = "shared.parquet"
)

// sharedRow is one row of shared.csv and shared.parquet and one item of
// run.json's "shared_changes": a condition that most sites of a regime
// showed together (timeline.Shared), such as a storm or a fleet-wide
// firmware update. End is nil while it lasts to the last window.
type sharedRow struct {
	Start        time.Time  `parquet:"start,timestamp(microsecond:utc)" json:"start"`
	End          *time.Time `parquet:"end,optional,timestamp(microsecond:utc)" json:"end"`
	Regime       int32      `parquet:"regime" json:"regime"`
	RegimeName   string     `parquet:"regime_name,dict" json:"regime_name"`
	RegimeStatus string     `parquet:"regime_status,dict" json:"regime_status"`
	Like         int32      `parquet:"like_regime" json:"like_regime"`
	LikeName     string     `parquet:"like_name,dict" json:"like_name"`
	LikeStatus   string     `parquet:"like_status,dict" json:"like_status"`
	Sites        int32      `parquet:"sites" json:"sites"`               // sites that showed it
	RegimeSites  int32      `parquet:"regime_sites" json:"regime_sites"` // sites of the regime with a window in it
	SiteIDs      string     `parquet:"site_ids" json:"site_ids"`         // comma-separated, sorted
	P            float64    `parquet:"p_value" json:"p_value"`
}

// sharedColumns are the columns of shared.csv and of the GeoPackage's
// shared table, in the order of the row's fields.
var sharedColumns = []gpkgColumn{{"start", "DATETIME"}, {"end", "DATETIME"},
	{"regime", "INTEGER"}, {"regime_name", "TEXT"}, {"regime_status", "TEXT"},
	{"like_regime", "INTEGER"}, {"like_name", "TEXT"}, {"like_status", "TEXT"},
	{"sites", "INTEGER"}, {"regime_sites", "INTEGER"}, {"site_ids", "TEXT"}, {"p_value", "REAL"}}

func (r sharedRow) values() []any {
	return []any{r.Start, optionalTime(r.End), r.Regime, r.RegimeName, r.RegimeStatus,
		r.Like, r.LikeName, r.LikeStatus, r.Sites, r.RegimeSites, r.SiteIDs, r.P}
}

// sharedRows lists the shared conditions of r by start, as the decoding
// gives them, with the labels of their regimes; never nil, so that
// run.json holds a list even when there are none.
func sharedRows(r *Run) []sharedRow {
	rows := make([]sharedRow, len(r.Shared))
	for i, sh := range r.Shared {
		rows[i] = sharedRow{
			Start: micro(sh.Start), Regime: int32(sh.Regime), Like: int32(sh.Like),
			Sites: int32(len(sh.Sites)), RegimeSites: int32(sh.Of), SiteIDs: strings.Join(sh.Sites, ","), P: sh.P,
		}
		if !sh.End.IsZero() {
			t := micro(sh.End)
			rows[i].End = &t
		}
		rows[i].RegimeName, rows[i].RegimeStatus = regimeLabel(r.Model, sh.Regime)
		rows[i].LikeName, rows[i].LikeStatus = regimeLabel(r.Model, sh.Like)
	}
	return rows
}

// sharedDays returns, by site, the shared conditions each site showed.
func sharedDays(shared []timeline.Shared) map[string][]timeline.Shared {
	out := map[string][]timeline.Shared{}
	for _, sh := range shared {
		for _, s := range sh.Sites {
			out[s] = append(out[s], sh)
		}
	}
	return out
}

// maxSharedRows caps the report's table of shared conditions, and
// maxSharedSites the sites it names in each; shared.csv has them all.
const (
	maxSharedRows  = 100
	maxSharedSites = 12
)

// reportShared is one row of the report's fleet-wide changes.
type reportShared struct {
	Start, End   string // End "" while it lasts to the last window
	Regime, Like int
	RegimeName   string // the user's labels, "" for none
	LikeName     string
	Sites, Of    int
	Named        []string // the first maxSharedSites of its sites
	More         int      // its sites not named
	P            string
}

// sharedSection is the report's section of fleet-wide changes.
type sharedSection struct {
	Rows  []reportShared
	Total int
}

// pValue writes a p-value for reading: two significant digits, and
// "< 0.001" below that, as the APA Publication Manual (7th ed., 2020,
// section 6.36, from memory) has it; the smallest values are at the floor of the
// floating-point tail, not measured (shared.csv keeps them as computed).
func pValue(p float64) string {
	if p < 0.001 {
		return "< 0.001"
	}
	return strconv.FormatFloat(p, 'g', 2, 64)
}

// sharedReport lists the shared conditions of r for the report.
func sharedReport(r *Run) sharedSection {
	s := sharedSection{Total: len(r.Shared)}
	for _, sh := range r.Shared[:min(len(r.Shared), maxSharedRows)] {
		row := reportShared{Start: readable(sh.Start), Regime: sh.Regime, Like: sh.Like,
			Sites: len(sh.Sites), Of: sh.Of, Named: sh.Sites[:min(len(sh.Sites), maxSharedSites)],
			More: max(0, len(sh.Sites)-maxSharedSites), P: pValue(sh.P)}
		if !sh.End.IsZero() {
			row.End = readable(sh.End)
		}
		row.RegimeName, _ = regimeLabel(r.Model, sh.Regime)
		row.LikeName, _ = regimeLabel(r.Model, sh.Like)
		s.Rows = append(s.Rows, row)
	}
	return s
}
