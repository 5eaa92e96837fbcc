package export

import (
	"cmp"
	"encoding/base64"
	"encoding/binary"
	"encoding/json"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/paulmach/orb"

	"github.com/kinmap/kinmap/export/picture"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/model"
)

// The explorer of the report is drawn in the browser from one JSON object
// (explorerData) embedded in the page. Its keys are short because a fleet
// of a thousand sites repeats them thousands of times.

// maxDailyValues bounds the daily summaries the page carries (sites ×
// channels × days × 3 values, two bytes each before base64): about 2.4 MB.
// Above it the sites with switches come first, then those with unfamiliar
// windows, then the rest by ID, and the page says how many were left out.
const maxDailyValues = 1_200_000

// profileLength is the number of features shown for a unit: those farthest
// from the fleet mean.
const profileLength = 6

// dailyMissing marks a day without readings in the quantised summaries.
const dailyMissing = math.MaxUint16

type explorerData struct {
	Cells    string    `json:"cells"` // "hex" or "square"
	Torus    bool      `json:"torus"`
	Cols     int       `json:"cols"`
	Rows     int       `json:"rows"`
	Features []string  `json:"features"`
	Units    []exUnit  `json:"units"`
	Regimes  []exGroup `json:"regimes"`
	Attrs    []string  `json:"attrs"`   // register attribute names
	Start    int64     `json:"start"`   // Unix seconds; times below are minutes after it
	End      int64     `json:"end"`     // minutes: the end of the last window
	Sites    []exSite  `json:"sites"`   // by ID
	Daily    *exDaily  `json:"daily"`   // nil without readings
	Omitted  []string  `json:"omitted"` // what the page leaves out, in sentences
}

type exUnit struct {
	Regime  int      `json:"g"`
	Hits    int      `json:"h"`
	Profile [][3]any `json:"p"` // feature index, σ from the fleet mean, value in the feature's unit (null when unknown)
}

type exGroup struct {
	ID          int    `json:"id"`
	Colour      string `json:"colour"`
	Description string `json:"desc"`
	Name        string `json:"name,omitempty"`   // the user's label (kinmap label)
	Status      string `json:"status,omitempty"` // normal, watch, fault or none
}

type exSite struct {
	ID         string    `json:"id"`
	Attrs      []any     `json:"a"`
	Regime     int       `json:"g"` // the last window's, as sites.geojson
	Windows    int       `json:"w"`
	Switches   int       `json:"sw"`
	LastSwitch string    `json:"ls"` // "" when none
	Unfamiliar int       `json:"u"`
	Unit       int       `json:"unit"` // the last window's BMU
	At         []float64 `json:"at"`   // lon, lat as in sites.geojson; nil when not located
	Mobile     bool      `json:"m"`
	Strip      []int64   `json:"st"`             // start, end, regime of each run of contiguous windows in one regime
	Odd        []int64   `json:"odd"`            // starts of unfamiliar windows
	Changes    []int64   `json:"ch"`             // time, from, to, confidence in % of each switch
	Track      [][]any   `json:"tr"`             // per track segment: regime, then lon, lat pairs
	Rank       int       `json:"rank,omitempty"` // the work list's most urgent row naming the site (attentionRanks); 0 for none
	Events     []exEvent `json:"ev,omitempty"`   // the run's events at the site (Run.Conditions), by start
	Onsets     []int64   `json:"on,omitempty"`   // onset, time and new regime of each switch after a drift (timeline.Switch.Onset)
	Shared     []int64   `json:"sh,omitempty"`   // start, end, regime, looked-like regime of each shared condition the site showed (Run.Shared); end D.End while it lasts
}

// exEvent is one event of a site: start and end in minutes (end equal to
// start for a point event), its label, and its note only when the run
// shows notes (Event.Note is empty otherwise).
type exEvent struct {
	Start int64  `json:"s"`
	End   int64  `json:"e"`
	Label string `json:"l"`
	Note  string `json:"n,omitempty"`
}

// exDaily describes the quantised daily summaries: for each site, channel
// by channel, day by day, p05, median and p95 as little-endian uint16, q
// standing for Lo + q·(Hi−Lo)/65534 of the channel, 65535 for a day
// without readings.
type exDaily struct {
	Channels []string  `json:"channels"`
	Day0     int64     `json:"day0"` // Unix seconds of the first day
	Days     int       `json:"days"`
	Lo       []float64 `json:"lo"`
	Hi       []float64 `json:"hi"`
	Sites    int       `json:"sites"` // sites whose summaries the page carries
}

// explorerJSON builds the explorer's data of a run and encodes it, and
// the sites' daily summaries apart, a JSON object of base64 strings by
// site ID (see exDaily), which the page places after everything else so
// that the explorer need not wait for the browser to read it.
func explorerJSON(r *Run, ss []*site, tracks []*feature) (data, daily []byte, err error) {
	m := r.Model
	l := m.Map.Lattice
	// Attrs is a list even without a register: the page reads it.
	d := explorerData{Cells: l.Cells(), Torus: !l.Flat, Cols: l.Cols, Rows: l.Rows, Features: featureNames(m), Attrs: []string{}}
	hits := m.Map.Hits(r.Table.Windows)
	for u := range l.Units() {
		d.Units = append(d.Units, exUnit{Regime: m.UnitRegime[u], Hits: hits[u], Profile: profile(m, u)})
	}
	for _, id := range regimeIDs(r) {
		g := exGroup{ID: id, Colour: hex(picture.RegimeColour(id))}
		for _, rg := range m.Regimes {
			if rg.ID == id {
				g.Description, g.Name, g.Status = rg.Description, rg.Name, rg.Status
			}
		}
		d.Regimes = append(d.Regimes, g)
	}
	if r.Register != nil {
		d.Attrs = explorerAttrs(r.Register.AttrNames)
	}
	ws := r.Table.Windows
	t0, t1 := features.Span(ws)
	d.Start = t0.Unix()
	minutes := func(t time.Time) int64 { return int64(t.Sub(t0) / time.Minute) }
	d.End = minutes(t1)

	bySite := map[string]*exSite{}
	ranks := attentionRanks(r.Attention)
	for _, s := range ss {
		x := exSite{ID: s.id, Regime: s.last.Regime, Windows: len(s.windows), Switches: s.switches,
			Unfamiliar: s.unfamiliar, Unit: s.last.Unit, Mobile: s.mobile, Rank: ranks[s.id]}
		if !s.lastSw.IsZero() {
			x.LastSwitch = readable(s.lastSw)
		}
		if s.located {
			p := roundPosition(s.lon, s.lat)
			x.At = p[:]
		}
		if r.Register != nil {
			for _, v := range s.attrValues(r.Register.AttrNames) {
				x.Attrs = append(x.Attrs, jsonValue(v))
			}
		}
		for k, i := range s.windows {
			e := &ws[i]
			if n := len(x.Strip); k > 0 && x.Strip[n-1] == int64(e.Regime) && x.Strip[n-2] == minutes(e.Start) {
				x.Strip[n-2] = minutes(e.End)
			} else {
				x.Strip = append(x.Strip, minutes(e.Start), minutes(e.End), int64(e.Regime))
			}
			if e.Unfamiliar {
				x.Odd = append(x.Odd, minutes(e.Start))
			}
		}
		d.Sites = append(d.Sites, x)
	}
	for i := range d.Sites {
		bySite[d.Sites[i].ID] = &d.Sites[i]
	}
	for _, sw := range r.Switches {
		if x := bySite[sw.Site]; x != nil {
			x.Changes = append(x.Changes, minutes(sw.Time), int64(sw.From), int64(sw.To), int64(math.Round(100*sw.Confidence)))
			if sw.Onset.Before(sw.Time) {
				x.Onsets = append(x.Onsets, minutes(sw.Onset), minutes(sw.Time), int64(sw.To))
			}
		}
	}
	for id, shs := range sharedDays(r.Shared) {
		if x := bySite[id]; x != nil {
			for _, sh := range shs {
				end := d.End
				if !sh.End.IsZero() {
					end = minutes(sh.End)
				}
				x.Shared = append(x.Shared, minutes(sh.Start), end, int64(sh.Regime), int64(sh.Like))
			}
		}
	}
	if c := r.Conditions; c != nil {
		for _, e := range c.Events {
			if x := bySite[e.Site]; x != nil {
				x.Events = append(x.Events, exEvent{Start: minutes(e.Start), End: minutes(maxTime(e.Start, e.End)), Label: e.Label, Note: e.Note})
			}
		}
		for _, x := range bySite {
			slices.SortStableFunc(x.Events, func(a, b exEvent) int { return cmp.Compare(a.Start, b.Start) })
		}
	}
	for _, f := range tracks {
		site, _ := f.Properties.get("site").(string)
		regime, _ := f.Properties.get("regime").(int)
		line, ok := f.Geometry.(orb.LineString)
		if x := bySite[site]; x != nil && ok {
			seg := []any{regime}
			for _, p := range line {
				seg = append(seg, p[0], p[1])
			}
			x.Track = append(x.Track, seg)
		}
	}
	var days map[string]string
	d.Daily, days, d.Omitted = dailyData(r, d.Sites, maxDailyValues)
	if data, err = json.Marshal(d); err != nil {
		return nil, nil, err
	}
	if days == nil {
		days = map[string]string{}
	}
	daily, err = json.Marshal(days)
	return data, daily, err
}

// get returns the value of a property, nil when absent.
func (p props) get(key string) any {
	for _, kv := range p {
		if kv.key == key {
			return kv.value
		}
	}
	return nil
}

// featureNames returns the names of the codebook's dimensions.
func featureNames(m *model.Model) []string {
	if m.Scaler != nil && len(m.Scaler.Names) == m.Map.Dim {
		return m.Scaler.Names
	}
	if len(m.FeatureNames) == m.Map.Dim {
		return m.FeatureNames
	}
	names := make([]string, m.Map.Dim)
	for i := range names {
		names[i] = "feature " + strconv.Itoa(i+1)
	}
	return names
}

// profile returns the features of unit u farthest from the fleet mean: the
// index, the codebook value in σ (the scaled unit, weight removed) and in
// the feature's own unit when the model's scaler can undo the scaling (NaN
// otherwise).
func profile(m *model.Model, u int) [][3]any {
	v := m.Map.Vector(u)
	sc := m.Scaler
	scaled := sc != nil && len(sc.Center) == len(v) && len(sc.Scale) == len(v) && len(sc.Weight) == len(v)
	order := make([]int, len(v))
	z := make([]float64, len(v))
	for i, x := range v {
		order[i], z[i] = i, x
		if scaled && sc.Weight[i] != 0 {
			z[i] = x / sc.Weight[i]
		}
	}
	slices.SortStableFunc(order, func(a, b int) int { return cmp.Compare(math.Abs(z[b]), math.Abs(z[a])) })
	var out [][3]any
	for _, i := range order[:min(profileLength, len(order))] {
		var raw any
		if scaled && sc.Weight[i] != 0 {
			raw = significant(sc.Center[i]+z[i]*sc.Scale[i], 4)
		}
		out = append(out, [3]any{i, significant(z[i], 3), raw})
	}
	return out
}

// jsonValue returns a register value that JSON can hold: a float that is
// not finite becomes nil.
func jsonValue(v any) any {
	if f, ok := v.(float64); ok && (math.IsNaN(f) || math.IsInf(f, 0)) {
		return nil
	}
	return v
}

// dailyData quantises the daily summaries of r, at most limit values,
// into base64 strings by site ID, and says what it left out.
func dailyData(r *Run, sites []exSite, limit int) (*exDaily, map[string]string, []string) {
	if len(r.Daily) == 0 {
		return nil, nil, []string{"Daily summaries of the readings are not part of this run, so site pages show no readings."}
	}
	chIndex := map[string]int{}
	var d exDaily
	day0, day1 := r.Daily[0].Day, r.Daily[0].Day
	for _, s := range r.Daily {
		if _, ok := chIndex[s.Channel]; !ok {
			chIndex[s.Channel] = len(d.Channels)
			d.Channels = append(d.Channels, s.Channel)
			d.Lo, d.Hi = append(d.Lo, math.Inf(1)), append(d.Hi, math.Inf(-1))
		}
		c := chIndex[s.Channel]
		d.Lo[c], d.Hi[c] = math.Min(d.Lo[c], s.P05), math.Max(d.Hi[c], s.P95)
		day0, day1 = minTime(day0, s.Day), maxTime(day1, s.Day)
	}
	d.Day0 = day0.Unix()
	d.Days = int(day1.Sub(day0)/(24*time.Hour)) + 1

	// Which sites keep their summaries: switched first, then unfamiliar.
	order := make([]int, len(sites))
	for i := range order {
		order[i] = i
	}
	rank := func(s *exSite) int {
		switch {
		case s.Switches > 0:
			return 0
		case s.Unfamiliar > 0:
			return 1
		}
		return 2
	}
	slices.SortStableFunc(order, func(a, b int) int { return cmp.Compare(rank(&sites[a]), rank(&sites[b])) })
	perSite := len(d.Channels) * d.Days * 3
	keep := len(sites)
	if perSite*keep > limit {
		keep = limit / perSite
	}
	kept := map[string][]byte{}
	for _, i := range order[:keep] {
		b := make([]byte, 2*perSite)
		for k := range perSite {
			binary.LittleEndian.PutUint16(b[2*k:], dailyMissing)
		}
		kept[sites[i].ID] = b
	}
	for _, s := range r.Daily {
		b, ok := kept[s.Site]
		if !ok {
			continue
		}
		c := chIndex[s.Channel]
		day := int(s.Day.Sub(day0) / (24 * time.Hour))
		for k, v := range []float64{s.P05, s.Median, s.P95} {
			q := 32767.0
			if d.Hi[c] > d.Lo[c] {
				q = math.Round((v - d.Lo[c]) / (d.Hi[c] - d.Lo[c]) * (dailyMissing - 1))
			}
			binary.LittleEndian.PutUint16(b[2*((c*d.Days+day)*3+k):], uint16(q))
		}
	}
	days := make(map[string]string, len(kept))
	for id, b := range kept {
		days[id] = base64.StdEncoding.EncodeToString(b)
	}
	d.Sites = keep
	var omitted []string
	if keep < len(sites) {
		omitted = append(omitted, fmt.Sprintf("Daily readings are shown for %d of %d sites (sites with switches first, then those with unfamiliar windows): the page keeps at most %d daily values.",
			keep, len(sites), limit))
	}
	return &d, days, omitted
}

func minTime(a, b time.Time) time.Time {
	if b.Before(a) {
		return b
	}
	return a
}

func maxTime(a, b time.Time) time.Time {
	if b.After(a) {
		return b
	}
	return a
}

// explorerColumns are the headings of the explorer's sites table that
// kinmap sets itself, in lower case (explorer.js).
var explorerColumns = []string{"site", "rank", "regime", "switches", "last switch", "unfamiliar windows"}

// explorerAttrs names the register attributes for the explorer's table and
// site pages: as in sites.geojson (attrName), and prefixed by "register_"
// as well when a name reads, in any case, as a heading of kinmap's own,
// so that a register column "Regime" is not taken for the regime kinmap
// found.
func explorerAttrs(names []string) []string {
	taken := reserved()
	out := make([]string, len(names))
	for i, n := range names {
		out[i] = attrName(n, taken)
		if out[i] == n && slices.Contains(explorerColumns, strings.ToLower(n)) {
			out[i] = "register_" + n
		}
	}
	return out
}
