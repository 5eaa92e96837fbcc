package export

// The kinds of a data health finding, in the order the report shows them.
const (
	HealthSilent         = "silent"          // a site of the register or the history sent no data
	HealthNoWindows      = "no_windows"      // every window of the site was skipped
	HealthMissingChannel = "missing_channel" // a channel the model or the fleet uses is absent at the site
	HealthUnselected     = "unread_channel"  // a channel of the dump that the run does not read
	HealthDuplicates     = "duplicates"      // readings of the site resolved as duplicates
	HealthDropped        = "dropped"         // rows or readings of the site (or of no site) dropped, one reason a finding
	HealthUnused         = "unused"          // readings of the site in no window used
	HealthWindowStep     = "window_step"     // the window is short or long for the sampling step
	HealthEpochUnit      = "epoch_unit"      // integer times look like another epoch unit
	HealthGap            = "history_gap"     // the history holds no window in a span next to the dump
	HealthLate           = "late"            // the history already holds windows after the dump
	HealthCut            = "cut_window"      // windows the dump holds part of, left to the history's
	HealthRevised        = "revised"         // windows of earlier dumps whose regime this run changed
)

// healthKinds lists the kinds of finding in the report's order.
func healthKinds() []string {
	return []string{HealthSilent, HealthNoWindows, HealthMissingChannel, HealthUnselected, HealthDuplicates, HealthDropped,
		HealthUnused, HealthWindowStep, HealthEpochUnit, HealthGap, HealthLate, HealthCut, HealthRevised}
}

// Finding is one line of the data health of a run: a site (or the whole
// dump, Site ""), what is wrong, and how much.
type Finding struct {
	Kind    string  `json:"kind"`
	Site    string  `json:"site,omitempty"`
	Channel string  `json:"channel,omitempty"`
	Reason  string  `json:"reason,omitempty"` // why rows or readings were dropped (kind dropped), as ingest names it
	Count   int64   `json:"count"`            // readings, windows or sites concerned
	Share   float64 `json:"share,omitempty"`  // of the site's (or the dump's) readings, when a share applies
	Warning bool    `json:"warning"`          // large enough to distrust the site's results
	Detail  string  `json:"detail"`           // in words
}

// healthRow is one row of health.csv.
type healthRow struct{ Finding }

// healthColumns are the columns of health.csv.
var healthColumns = []gpkgColumn{{"kind", "TEXT"}, {"site", "TEXT"}, {"channel", "TEXT"}, {"reason", "TEXT"}, {"count", "INTEGER"},
	{"share", "REAL"}, {"warning", "BOOLEAN"}, {"detail", "TEXT"}}

func (r healthRow) values() []any {
	return []any{r.Kind, r.Site, r.Channel, r.Reason, r.Count, r.Share, r.Warning, r.Detail}
}

func healthRows(fs []Finding) []healthRow {
	rows := make([]healthRow, len(fs))
	for i, f := range fs {
		rows[i] = healthRow{f}
	}
	return rows
}
