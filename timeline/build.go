package timeline

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"time"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/internal/viterbi"
	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/model"
)

// Build decodes each site's windows of ws, in time order, into regime
// segments, and records in every window its Regime and whether it is
// Unfamiliar (its QE above the model's threshold quantile). The windows
// must be on the map (Scaled, Unit and QE set, see mapper.Place). The cost
// of a window in a regime is the Euclidean distance from its scaled vector
// to the regime's centroid, and each change of regime costs cfg.SwitchCost
// (see Viterbi), under the cfg.MinDwell rule. Components that are NaN in a
// window are left out of its distances, the same for every regime.
//
// A regime is judged relative to the fleet: when most sites whose windows
// are mostly in regime a show, at one window time, another regime's windows
// (a storm, a heat wave, a holiday), significantly more often than a's
// sites do at other times, a window at that time is measured in regime a
// against what a's sites show there, a mixture of the regimes in the
// shares of a's sites nearest each, and every regime at that time is
// measured where the windows nearest it lie then rather than at its
// centroid (see shared.go). At other times a regime is measured where its
// own sites' windows nearest it lie then. A change that most of
// a regime's sites make at once is then read as a shared condition, not as
// switches, and Result.Shared lists it with its sites; one site's change
// is still a switch.
//
// Sites that run to a weekly calendar are decoded with it: when most weeks
// of a regime's sites show, at some time of the week (local to the zone
// m.FeatureConfig.TZ the windows were cut in), the windows of another
// regime, and significantly more often than at the other times of the
// week, a window at that time is measured in that regime against the other
// regime's centroid (see calendar.go). An office's weekend then stays in
// the office's regime instead of making two switches. The calendar is
// learnt from the windows of ws alone, so a dump shorter than two weeks has
// none.
//
// Gaps between windows (windows skipped for low coverage, or a unit that was
// off) do not reset the decoding: the switch cost is the evidence a change
// needs, and a gap brings none. A change across a gap is a switch at the
// first window after it.
//
// It returns the switches sorted by site and time, and the shared
// conditions sorted by start. The confidence of a
// switch is Δ / (Δ + c), c the switch cost and Δ ≥ 0 how much more the
// decoded sequence would cost without that switch: the cheaper of
// extending the old regime over the new segment and extending the new
// regime back over the old one. It is 0 when removing the switch costs
// nothing, ½ when it costs one more switch penalty, and tends to 1 as the
// evidence grows.
func Build(m *model.Model, ws []features.Window, cfg Config) (Result, error) {
	return BuildFrom(m, ws, cfg, nil)
}

// BuildFrom is Build continuing each site's decoding from its Prior, the
// state the history of earlier dumps left it in: staying in the prior
// regime costs nothing, leaving it one switch cost, and the prior windows
// count towards the dwell. A change from the prior regime at the first
// window is a switch at that window, with Before the prior's windows; its
// confidence compares with keeping the prior regime over the new segment.
// A prior whose regime the model does not have is ignored.
func BuildFrom(m *model.Model, ws []features.Window, cfg Config, priors map[string]Prior) (Result, error) {
	if m == nil {
		return Result{}, fmt.Errorf("timeline: Build needs a model")
	}
	if len(m.Regimes) == 0 {
		return Result{}, fmt.Errorf("timeline: the model has no regimes")
	}
	// A phase (model.Phase) is a state of its own in the decoding and
	// reports as its regime.
	states, report := m.States()
	dim := m.Map.Dim
	for _, r := range states {
		if len(r.Centroid) != dim {
			return Result{}, fmt.Errorf("timeline: regime %d: centroid has %d components, the map %d", r.ID, len(r.Centroid), dim)
		}
	}
	cfg, err := resolve(cfg, m)
	if err != nil {
		return Result{}, err
	}
	threshold := m.QEThreshold(cfg.UnfamiliarQ)
	units := m.Map.Lattice.Units()

	bySite := map[string][]int{}
	var sites []string
	for i := range ws {
		w := &ws[i]
		switch {
		case len(w.Scaled) != dim:
			return Result{}, fmt.Errorf("timeline: site %q, window %s: %d scaled features for a map of dimension %d", w.Site, w.Start.Format(time.RFC3339), len(w.Scaled), dim)
		case w.Unit < 0 || w.Unit >= units:
			return Result{}, fmt.Errorf("timeline: site %q, window %s: unit %d outside the map's %d units", w.Site, w.Start.Format(time.RFC3339), w.Unit, units)
		}
		w.Unfamiliar = w.QE > threshold
		if _, ok := bySite[w.Site]; !ok {
			sites = append(sites, w.Site)
		}
		bySite[w.Site] = append(bySite[w.Site], i)
	}
	slices.Sort(sites)

	loc, err := time.LoadLocation(m.FeatureConfig.TZ)
	if err != nil {
		return Result{}, fmt.Errorf("timeline: time zone %q: %w", m.FeatureConfig.TZ, err)
	}
	seqs := make([]siteSeq, len(sites))
	for s, site := range sites {
		idx := bySite[site]
		slices.SortStableFunc(idx, func(a, b int) int { return ws[a].Start.Compare(ws[b].Start) })
		q := siteSeq{idx: idx, costs: make([][]float64, len(idx)), weeks: make([]int64, len(idx)), phases: make([]int64, len(idx))}
		for j, i := range idx {
			q.costs[j] = make([]float64, len(states))
			for k, r := range states {
				q.costs[j][k] = distance(ws[i].Scaled, r.Centroid)
				if math.IsInf(q.costs[j][k], 0) {
					return Result{}, fmt.Errorf("timeline: site %q, window %s: scaled features are not finite", site, ws[i].Start.Format(time.RFC3339))
				}
			}
			q.weeks[j], q.phases[j] = weekPhase(ws[i].Start, loc)
		}
		q.from, q.initial = startOf(states, priors, site, cfg.SwitchCost)
		seqs[s] = q
	}
	// Shared conditions first, so that the calendar is learnt from windows
	// already relative to the fleet.
	ids := make([]int, len(states))
	centroids := make([][]float64, len(states))
	for k, r := range states {
		ids[k], centroids[k] = r.ID, r.Centroid
	}
	days := daysOf(seqs, ws, len(ids))
	shared := learnShared(days, ws, sites, ids, report)
	for s := range seqs {
		shared.apply(days, s, ws, centroids, cfg.SwitchCost)
	}
	cal := learnCalendar(seqs, len(states))
	var means []int
	if m.Scaler != nil {
		means = meanFeatures(m.Scaler.Names)
	}
	xs, odd := [][]float64{}, []bool{}
	for s := range seqs {
		q := &seqs[s]
		for j, row := range q.costs {
			q.costs[j] = substitute(row, cal[q.phases[j]])
		}
		q.path, _ = viterbi.Decode(q.costs, cfg.SwitchCost, q.initial, cfg.MinDwell, q.from)
		xs, odd = xs[:0], odd[:0]
		for _, i := range q.idx {
			xs = append(xs, ws[i].Scaled)
			odd = append(odd, ws[i].Unfamiliar)
		}
		refineBoundaries(q.path, xs, centroids, odd, means, cfg.MinDwell, q.from)
		for j, k := range q.path {
			q.path[j] = report[k]
		}
		q.total = viterbi.Cost(q.costs, cfg.SwitchCost, q.initial, q.path)
	}

	var switches []Switch
	for s, site := range sites {
		q := seqs[s]
		for j, i := range q.idx {
			ws[i].Regime = states[q.path[j]].ID
		}
		for _, sw := range segmentSwitches(q.costs, cfg.SwitchCost, q.initial, q.from, q.path, q.total) {
			before, onset := q.from.State, sw.at
			if sw.at > 0 {
				before = q.path[sw.at-1]
				lo := sw.at - 1
				for lo > 0 && q.path[lo-1] == before {
					lo--
				}
				onset = lo + onsetOf(days.relative(ws, q, lo, sw.at-1, centroids[before], centroids[q.path[sw.at]], before))
				if onset == sw.at-1 {
					onset = sw.at
				}
			}
			switches = append(switches, Switch{
				Site:       site,
				Time:       ws[q.idx[sw.at]].Start,
				Onset:      ws[q.idx[onset]].Start,
				From:       states[before].ID,
				To:         states[q.path[sw.at]].ID,
				Before:     sw.before,
				After:      sw.after,
				Confidence: sw.confidence,
			})
		}
	}
	slices.SortStableFunc(switches, func(a, b Switch) int {
		return cmp.Or(cmp.Compare(a.Site, b.Site), a.Time.Compare(b.Time))
	})
	return Result{Switches: switches, Shared: shared.changes}, nil
}

// startOf returns the decoding start of a site from its prior, and the
// initial costs that go with it; none when it has no usable prior.
func startOf(states []mapper.Regime, priors map[string]Prior, site string, switchCost float64) (viterbi.Start, []float64) {
	p, ok := priors[site]
	if !ok || p.Windows < 1 {
		return viterbi.NoStart, nil
	}
	k := slices.IndexFunc(states, func(r mapper.Regime) bool { return r.ID == p.Regime })
	if k < 0 {
		return viterbi.NoStart, nil
	}
	initial := make([]float64, len(states))
	for j := range initial {
		if j != k {
			initial[j] = switchCost
		}
	}
	return viterbi.Start{State: k, Dwell: p.Windows}, initial
}

// resolve fills the defaults of cfg and checks it.
func resolve(cfg Config, m *model.Model) (Config, error) {
	def := DefaultConfig()
	if cfg.MinDwell == 0 {
		cfg.MinDwell = def.MinDwell
	}
	if cfg.UnfamiliarQ == 0 {
		cfg.UnfamiliarQ = def.UnfamiliarQ
	}
	if err := cfg.Validate(); err != nil {
		return cfg, err
	}
	if len(m.QEQuantiles) == 0 {
		return cfg, fmt.Errorf("timeline: the model holds no quantiles of its training quantization errors")
	}
	if cfg.SwitchCost == 0 {
		median := m.QEThreshold(0.5)
		if !(median > 0) || math.IsInf(median, 0) {
			return cfg, fmt.Errorf("timeline: median training quantization error %g: cannot set the switch cost from it; set it explicitly", median)
		}
		cfg.SwitchCost = mapper.SwitchCostPerQE * median
	}
	return cfg, nil
}

// distance is the Euclidean distance between a and b over the components
// where a is not NaN.
func distance(a, b []float64) float64 {
	var s float64
	for i, v := range a {
		if !math.IsNaN(v) {
			d := v - b[i]
			s += d * d
		}
	}
	return math.Sqrt(s)
}

// boundary is a switch within one site's decoded path.
type boundary struct {
	at            int // index of the first step in the new state
	before, after int // lengths of the segments either side
	confidence    float64
}

// segmentSwitches lists the changes of state of path, whose cost is total,
// with their confidence (see Build and BuildFrom).
func segmentSwitches(costs [][]float64, switchCost float64, initial []float64, from viterbi.Start, path []int, total float64) []boundary {
	var starts []int // start of each segment, then len(path)
	for t := range path {
		if t == 0 || path[t] != path[t-1] {
			starts = append(starts, t)
		}
	}
	starts = append(starts, len(path))
	var out []boundary
	alt := make([]int, len(path))
	if from.State >= 0 && path[0] != from.State {
		// A switch from the prior state at the first window: the history
		// cannot be changed, so the only alternative keeps the prior.
		fill(alt, from.State)
		copy(alt[starts[1]:], path[starts[1]:])
		delta := max(viterbi.Cost(costs, switchCost, initial, alt)-total, 0)
		out = append(out, boundary{at: 0, before: from.Dwell, after: starts[1], confidence: delta / (delta + switchCost)})
	}
	for i := 1; i+1 < len(starts); i++ {
		prev, at, next := starts[i-1], starts[i], starts[i+1]
		before := at - prev
		if prev == 0 && path[0] == from.State {
			before += from.Dwell
		}
		copy(alt, path)
		fill(alt[at:next], path[at-1])
		keepOld := viterbi.Cost(costs, switchCost, initial, alt)
		copy(alt, path)
		fill(alt[prev:at], path[at])
		keepNew := viterbi.Cost(costs, switchCost, initial, alt)
		delta := max(min(keepOld, keepNew)-total, 0)
		out = append(out, boundary{at: at, before: before, after: next - at, confidence: delta / (delta + switchCost)})
	}
	return out
}

func fill(s []int, v int) {
	for i := range s {
		s[i] = v
	}
}
