package export

import "time"

// Comparison sets this dump against the previous period of the history:
// the windows of the same lineage in the span of the same length just
// before this run's first window.
type Comparison struct {
	From, To time.Time       `json:"-"`              // the previous period
	Then     map[int]float64 `json:"shares_then"`    // share of the previous period's windows by regime ID
	Now      map[int]float64 `json:"shares_now"`     // share of this run's windows by regime ID
	Changed  []RegimeMove    `json:"changed_regime"` // sites whose last regime differs from the previous period's
	Silent   []string        `json:"went_silent"`    // sites with windows then and none now
	Back     []string        `json:"came_back"`      // sites with windows now, none then, some earlier in the history
	New      []string        `json:"new_sites"`      // sites with windows now and none in the history before

	Windows int    `json:"windows_then"`    // windows of the previous period
	Period  string `json:"previous_period"` // the previous period in words
}

// RegimeMove is a site whose regime differs from the previous period's.
type RegimeMove struct {
	Site string `json:"site"`
	Then int    `json:"then"`
	Now  int    `json:"now"`
}
