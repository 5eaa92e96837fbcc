package export

import (
	"math"
	"time"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/lattice"
	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/model"
	"github.com/kinmap/kinmap/timeline"
)

var day0 = time.Date(2025, 3, 1, 0, 0, 0, 0, time.UTC)

// fixtureSite describes one site of the test fleet: the regime of each
// daily window, and its window positions (nil when not located).
type fixtureSite struct {
	id        string
	regimes   []int
	positions [][2]float64 // lon, lat per window; nil for none
}

// fixture is a small fleet written by hand: a registered pumping station
// that switches from regime 1 to 2, a registered one that stays in 3, a
// vehicle that moves and switches, and an unregistered site with no
// position.
var fixture = []fixtureSite{
	{id: "PS-01", regimes: []int{1, 1, 1, 2, 2, 2}},
	{id: "PS-02", regimes: []int{3, 3, 3, 3}},
	{id: "T-7", regimes: []int{1, 1, 3, 3, 3}, positions: [][2]float64{{8.5, 47.3}, {8.6, 47.35}, {8.7, 47.4}, {8.8, 47.38}, {8.9, 47.36}}},
	{id: "X-9", regimes: []int{2, 2, 2}},
}

// fixtureSwitches are the switches of the fixture, as the timeline would
// report them: PS-01's after a drift from day 1, T-7's without one.
var fixtureSwitches = []timeline.Switch{
	{Site: "PS-01", Time: day0.AddDate(0, 0, 3), Onset: day0.AddDate(0, 0, 1), From: 1, To: 2, Before: 3, After: 3, Confidence: 0.9},
	{Site: "T-7", Time: day0.AddDate(0, 0, 2), Onset: day0.AddDate(0, 0, 2), From: 1, To: 3, Before: 2, After: 3, Confidence: 0.75},
}

// fixtureShared are the shared conditions of the fixture: one that ended
// (regime 3 looking like the labelled regime 2 for two days) and one that
// lasts to the last window.
var fixtureShared = []timeline.Shared{
	{Start: day0.AddDate(0, 0, 1), End: day0.AddDate(0, 0, 3), Regime: 3, Like: 2, Sites: []string{"PS-02", "T-7"}, Of: 2, P: 0.0042},
	{Start: day0.AddDate(0, 0, 4), Regime: 1, Like: 3, Sites: []string{"PS-01"}, Of: 1, P: 1.5e-5},
}

func fixtureModel() *model.Model {
	const cols, rows = 4, 4
	m := &model.Model{
		Version:      1,
		FeatureNames: []string{"flow.mean", "vibration.p95"},
		Scaler: &features.Scaler{Method: "zscore", Names: []string{"flow.mean", "vibration.p95"},
			Center: []float64{10, 1}, Scale: []float64{2, 0.5}, Weight: []float64{1, 1}},
		Map:         mapper.Map{Lattice: lattice.Lattice{Cols: cols, Rows: rows}, Dim: 2},
		UnitRegime:  make([]int, cols*rows),
		Quality:     mapper.Quality{QE: 0.31, TE: 0.04, Unused: 0.125},
		QEQuantiles: []float64{0, 0.5, 1},
		Windows:     120,
	}
	m.Regimes = []mapper.Regime{
		{ID: 1, Description: "flow.mean +1.2σ"},
		{ID: 2, Description: "vibration.p95 +2.1σ, flow.mean −1.4σ", Name: "worn bearing, \"B\"", Status: model.StatusFault},
		{ID: 3, Description: "low load <idle> & quiet"},
	}
	for u := range cols * rows {
		c, r := m.Map.Lattice.Cell(u)
		m.Map.Codebook = append(m.Map.Codebook, float64(c), float64(r))
		g := 1 + c/2 + r/2*(c/2) // columns 0–1: regime 1; columns 2–3: 2 in rows 0–1, 3 in rows 2–3
		m.UnitRegime[u] = g
		m.Regimes[g-1].Units = append(m.Regimes[g-1].Units, u)
	}
	for i := range m.Regimes {
		m.Regimes[i].Centroid = []float64{float64(i), 0}
	}
	return m
}

func fixtureRegister() *ingest.Register {
	return &ingest.Register{
		Key:       "site",
		AttrNames: []string{"name", "capacity_kw", "elevation_m", "active", "regime"},
		Sites: []*ingest.Site{
			{ID: "PS-01", Lat: 46.948, Lon: 7.4474, Located: true, Attrs: attrs("Aare North", int64(450), 540.5, true, "summer")},
			{ID: "PS-02", Lat: -33.8688, Lon: 151.2093, Located: true, Attrs: attrs("Harbour \"B\"", nil, 3.0, false, "none")},
		},
	}
}

// attrs pairs values with the fixture register's attribute names.
func attrs(values ...any) []ingest.Attr {
	names := []string{"name", "capacity_kw", "elevation_m", "active", "regime"}
	a := make([]ingest.Attr, len(values))
	for i, v := range values {
		a[i] = ingest.Attr{Name: names[i], Value: v}
	}
	return a
}

// fixtureRun builds the run. Windows of unit BMU (regime r's first unit),
// QE rising by 0.1 a window; the last window of X-9 is unfamiliar.
func fixtureRun() *Run {
	m := fixtureModel()
	reg := fixtureRegister()
	r := &Run{
		Model:    m,
		Table:    &features.Table{Names: m.FeatureNames, Skipped: map[string]features.Skips{"PS-02": {"coverage": 2}}},
		Switches: fixtureSwitches,
		Shared:   fixtureShared,
		Register: reg,
		Summary: &ingest.Summary{
			Files:  []ingest.FileSummary{{Path: "week10.parquet", Format: "parquet", Rows: 5000}},
			Layout: "long", Rows: 5000, Readings: 4980, Sites: 4, Channels: []string{"flow", "vibration"},
			Start: day0, End: day0.AddDate(0, 0, 6), Dropped: map[string]int64{"nan": 20},
		},
		Info:     map[string]any{"command": "kinmap train", "windows": 18},
		Warnings: []string{"3 readings out of order were sorted"},
		Title:    "Week 10 <test>",
	}
	for _, s := range fixture {
		for d, g := range s.regimes {
			start := day0.AddDate(0, 0, d)
			w := features.Window{Site: s.id, Start: start, End: start.AddDate(0, 0, 1), Values: []float64{float64(g), math.NaN()}}
			if s.positions != nil {
				w.Lon, w.Lat, w.Located = s.positions[d][0], s.positions[d][1], true
			} else if s.id != "X-9" {
				info := reg.Sites[map[string]int{"PS-01": 0, "PS-02": 1}[s.id]]
				w.Lon, w.Lat, w.Located = info.Lon, info.Lat, true
			}
			w.Unit, w.Regime, w.QE = m.Regimes[g-1].Units[0], g, 0.1*float64(d+1)
			w.Unfamiliar = s.id == "X-9" && d == len(s.regimes)-1
			r.Table.Windows = append(r.Table.Windows, w)
		}
	}
	return r
}
