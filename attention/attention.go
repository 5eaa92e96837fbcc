// Package attention turns a run's timelines into a week's work list: one
// row per site that needs a look, ranked by urgency, with the reason in
// words, and one row per fleet-wide event in place of the many sites it
// moved.
//
// # Urgency
//
// Each site gets the most urgent of these levels that applies, and a row
// lists every reason that applies to it:
//
//	fault       it switched into a regime marked "fault"
//	watch       it switched into a regime marked "watch"
//	stay        it spent at least Config.LongStay windows in a row, up to
//	            its last window, in a regime marked "fault" or "watch"
//	nearing     it switched into a regime, and more of its windows since
//	            lie towards a regime marked "fault" or "watch" than
//	            chance allows (see Nearing)
//	resembles   its recent windows resemble windows that carried a label of
//	            the user's events (see Resemblance)
//	unfamiliar  more of its windows were unfamiliar than chance allows
//	switch      it switched between other regimes with confidence at
//	            least Config.MinConfidence
//	still       one row per regime, not per site: the sites whose long stay
//	            in it an earlier run already reported and that have not
//	            left it since (Input.Standing)
//	weak        its only switches have a lower confidence
//
// A long stay counts the windows of the history before the run's windows
// when the site has not left the regime since (Input.Standing), and it is
// news once: when the site ended the previous period in the same regime
// for at least Config.LongStay windows, an earlier run reported it, and
// the site folds into its regime's still row; a site with other reasons
// keeps its own row for them.
//
// Within a level, new events come before revisions of events an earlier run
// reported, then fleet-wide events by their number of sites, then higher
// confidence, then site. A switch is a revision when
// an earlier run reported a switch of the same site less than
// Config.Nearby before or after it (Input.Earlier); the history keeps
// those, so that re-decoding the end of last week does not make the same
// event news twice.
//
// # Thresholds
//
// MinConfidence defaults to ½. A switch's confidence is Δ/(Δ+c), c the
// switch cost and Δ what the decoding would lose without it (package
// timeline); ½ means Δ = c, so a switch below it would disappear if the
// switch cost, itself a rule of thumb (twice the median quantization
// error), were doubled. Such a switch stays in switches.csv but ranks
// last, unless it enters a regime marked fault or watch: a possible move
// into such a regime keeps that level, where it ranks after the more
// confident ones and its reason gives its confidence, since burying it
// below ordinary switches would hide what the marks exist to show.
//
// A site is flagged for unfamiliar windows when, of its n windows, k are
// unfamiliar and P(X ≥ k) < Config.UnfamiliarAlpha for X binomial with n
// trials and the chance rate 1 − q of the unfamiliar quantile q: a training
// window is above that quantile with probability 1 − q, so one unfamiliar
// window in a month is expected somewhere in any fleet, three at one site
// are not.
//
// # Nearing
//
// The first days of wear can lie nearer a healthy regime than the worn
// one, whose centroid sits among windows of every stage of the wear, so
// that the decoding puts a pump that has begun to degrade in its steady
// regime. Such a pump still stands out from the steady pumps: its windows
// lie towards the fault regime, where theirs do not. This is the
// "potential failure" of the P-F interval, the condition that can be seen
// before the function is lost and that maintenance acts on (J. Moubray,
// Reliability-centred Maintenance, 2nd ed., 1997; cited from
// memory).
//
// A window's share of the way from its regime R towards a regime F marked
// fault or watch is where it projects on the line between their centroids
// (Input.Centroids): 0 at R's, 1 at F's. Less the median share of R's
// windows of the same time, so that weather that moves R's sites together
// cancels (peer groups, R. J. Bolton and D. J. Hand, "Unsupervised
// profiling methods for fraud detection", 2001), it is compared with the
// 1 − Config.UnfamiliarRate quantile of the same for the settled windows
// of R: those of sites in the stay that began their record in the run,
// the site's own left out. A site whose last stay began with a switch in
// the run (it is the newcomers that are in question, so none of them sets
// the bar) is listed when, of its n windows since, k lie beyond and
// P(X ≥ k) < Config.UnfamiliarAlpha for X binomial with n trials and the
// chance rate Config.UnfamiliarRate: the rule of unfamiliar windows, in
// one direction. A site in a regime marked fault is not tested; one in a
// watch regime is tested towards the fault regimes. Nor is a site whose
// stay began by leaving a regime marked fault or watch: coming out of
// one (repaired, or at the end of a transition), it lies towards it, or
// towards a regime like it, for a while as a matter of course, and its
// switch out is reported as a switch.
//
// The level ranks below the user's own verdicts (fault, watch, stay),
// which name the regime a site is in, and above resemblance, unfamiliar
// windows and switches between other regimes: it says which marked regime
// a site is heading for, from the user's own marks.
//
// # Resemblance
//
// When the run has label knowledge (Input.Labels, from an events file or
// the model), each window carries its likely condition (package events).
// A site resembles a label when, over its windows that end within
// Config.Recent of its last window's end, the mean confidence of those
// classified as the label, the others counting 0, is at least
// Config.MinResemblance (events.Resemble). Every label counts except
// events.Unlabelled and events.Unknown: kinmap does not guess which of the
// user's words mean a failure, so a site that resembles "normal after
// overhaul" is listed too, with the label in its reason, and the user
// reads it. Recent defaults to events.DefaultBefore, the span a failure
// record marks before it, so a week that looks like the week before a
// failure is what flags a site; MinResemblance defaults to ½, the
// classifier's own minimum confidence (events.DefaultConfig): the week as
// a whole leans to the label as one window must to be classified as it.
//
// The level ranks below the user's own verdicts (fault, watch, stay),
// which name the regime a site is in, and above unfamiliar windows, which
// only say that a site is unlike training: resembling what came before a
// recorded event is the more specific news, drawn from the user's own
// records, but it is a vote of neighbours on the map, not a verdict.
//
// # Fleet-wide events
//
// Switches from the same regime to the same regime whose windows start on
// the same UTC day are one fleet-wide event when there are at least
// MinFleetSites of them and their number is improbable for sites switching
// independently: with n such switches (same from and to) over a run of D
// days, the count on one day is taken as Poisson with mean n/D, and the
// day is an event when P(X ≥ k) < Config.FleetAlpha. Its level is that
// of a switch into its regime, with the mean confidence of its switches. Weather, a season or a
// change in the data pipeline moves many sites at once; one row names
// them, and their switch leaves their own rows. This is a scan for an
// excess of events in one cell of time, as in J. Naus, "Approximations for
// distributions of scan statistics", JASA 77, 1982, in its simplest,
// one-cell form.
//
// The decoding itself reads a change that most sites of a regime show on
// the same days as a condition of the fleet, not as switches (package
// timeline, Shared): a storm, a holiday, or a firmware update that most of
// the regime's sites got at once. Each such condition is a fleet-wide row
// too, naming the sites that showed it, from when and until when, at the
// level of a switch into the regime they looked like, with confidence
// 1 − the chance level of the test that found it.
package attention

import (
	"cmp"
	"fmt"
	"maps"
	"math"
	"slices"
	"strings"
	"time"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/kinmap/kinmap/events"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/internal/binomial"
	"github.com/kinmap/kinmap/timeline"
)

// Level is how urgent a row is; a lower level is more urgent.
type Level int

// The levels, most urgent first (see the package documentation).
const (
	Fault Level = iota
	Watch
	Stay
	Nearing
	Resembles
	Unfamiliar
	Switch
	Still
	Weak
)

var levelNames = [...]string{"fault", "watch", "stay", "nearing", "resembles", "unfamiliar", "switch", "still", "weak"}

// String is the level's name in attention.csv.
func (l Level) String() string {
	if l < 0 || int(l) >= len(levelNames) {
		return fmt.Sprintf("level(%d)", int(l))
	}
	return levelNames[l]
}

// The statuses of a regime (mapper.Regime.Status); "" is unlabelled.
const (
	StatusNormal = "normal"
	StatusWatch  = "watch"
	StatusFault  = "fault"
)

// Config holds the thresholds of the list. Zero fields take the defaults
// of DefaultConfig.
type Config struct {
	MinConfidence   float64       `json:"min_confidence"`   // switches below it rank last (Weak)
	LongStay        int           `json:"long_stay"`        // windows in a row in a watch or fault regime that make a long stay
	Nearby          time.Duration `json:"nearby_ns"`        // an earlier switch of the site this close makes a switch a revision
	UnfamiliarRate  float64       `json:"unfamiliar_rate"`  // chance rate of an unfamiliar window, 1 − the unfamiliar quantile
	UnfamiliarAlpha float64       `json:"unfamiliar_alpha"` // binomial tail below which a site's unfamiliar windows are flagged
	FleetAlpha      float64       `json:"fleet_alpha"`      // Poisson tail below which same-day switches are one event
	MinFleetSites   int           `json:"min_fleet_sites"`  // fewest sites of a fleet-wide event
	Recent          time.Duration `json:"recent_ns"`        // span before a site's last window end whose windows are scored for resemblance
	MinResemblance  float64       `json:"min_resemblance"`  // score from which a site resembles a label
}

// DefaultConfig returns the defaults: confidence ½, a long stay of 7
// windows, nearby within 2 days, a chance rate of 0.01, both tails 0.001,
// at least 3 sites to a fleet-wide event, and resemblance scored over
// events.DefaultBefore from ½.
func DefaultConfig() Config {
	return Config{MinConfidence: 0.5, LongStay: 7, Nearby: 48 * time.Hour, UnfamiliarRate: 0.01,
		UnfamiliarAlpha: 0.001, FleetAlpha: 0.001, MinFleetSites: 3,
		Recent: events.DefaultBefore, MinResemblance: 0.5}
}

func (c Config) withDefaults() Config {
	d := DefaultConfig()
	c.MinConfidence = cmp.Or(c.MinConfidence, d.MinConfidence)
	c.LongStay = cmp.Or(c.LongStay, d.LongStay)
	c.Nearby = cmp.Or(c.Nearby, d.Nearby)
	c.UnfamiliarRate = cmp.Or(c.UnfamiliarRate, d.UnfamiliarRate)
	c.UnfamiliarAlpha = cmp.Or(c.UnfamiliarAlpha, d.UnfamiliarAlpha)
	c.FleetAlpha = cmp.Or(c.FleetAlpha, d.FleetAlpha)
	c.MinFleetSites = cmp.Or(c.MinFleetSites, d.MinFleetSites)
	c.Recent = cmp.Or(c.Recent, d.Recent)
	c.MinResemblance = cmp.Or(c.MinResemblance, d.MinResemblance)
	return c
}

// Earlier is a switch an earlier run reported.
type Earlier struct {
	Site     string
	Time     time.Time
	From, To int
}

// Standing is a site's last run of windows in one regime.
type Standing struct {
	Regime  int
	Windows int
}

// Input is what the list is made from.
type Input struct {
	Windows  []features.Window // the run's decoded windows, by site, then time
	Switches []timeline.Switch // the run's switches
	Shared   []timeline.Shared // conditions most sites of a regime showed together (timeline.Result.Shared)
	Status   map[int]string    // regime ID → status; a missing ID is unlabelled
	Names    map[int]string    // regime ID → the user's name; optional
	Earlier  []Earlier         // switches earlier runs reported
	// Standing is, by site, the run of windows in one regime that ended
	// the site's record in the history before the run's windows; nil
	// without a history.
	Standing map[string]Standing
	// Labels are the labels of the run's knowledge; nil without one. The
	// windows' Condition and ConditionConfidence say which they resemble.
	Labels []string
	// Centroids are the regimes' centroids by ID, in the space of the
	// windows' Scaled features (mapper.Regime.Centroid); without them no
	// site is tested for a move towards a fault or watch regime (Nearing).
	Centroids map[int][]float64
}

// Row is one line of the list: a site, a fleet-wide event, or the sites
// still in a regime (level Still, the regime in To).
type Row struct {
	Rank   int
	Level  Level
	Site   string   // "" for a fleet-wide event
	Sites  []string // the sites of a fleet-wide event; the site of a site row
	Reason string   // every reason, in words
	// The switch that set the level, if a switch did: its time, regimes
	// and confidence; Time is zero otherwise.
	Time       time.Time
	From, To   int
	Confidence float64
	Revision   bool // the switch revises one an earlier run reported
}

// Kind is "site", "fleet" for a fleet-wide event, or "regime" for the
// sites still in a regime.
func (r *Row) Kind() string {
	switch {
	case r.Site != "":
		return "site"
	case r.Level == Still:
		return "regime"
	}
	return "fleet"
}

// News is "new" or "revision" for a row set by a switch, "" otherwise.
func (r *Row) News() string {
	switch {
	case r.Time.IsZero():
		return ""
	case r.Revision:
		return "revision"
	}
	return "new"
}

// Rank makes the list.
func Rank(in Input, cfg Config) []Row {
	cfg = cfg.withDefaults()
	label := func(id int) string {
		if n := in.Names[id]; n != "" {
			return fmt.Sprintf("%d (%s)", id, n)
		}
		return fmt.Sprint(id)
	}
	fleet, inEvent := fleetEvents(in, cfg, label)
	resembling := resemblance(in, cfg)
	near := nearing(in, cfg)
	var rows []Row
	for _, e := range fleet {
		if e.Reason == "" {
			e.Reason = fmt.Sprintf("%d sites switched from regime %s to %s on %s: a fleet-wide change (weather, season or the data pipeline?)",
				len(e.Sites), label(e.From), label(e.To), e.Time.UTC().Format(time.DateOnly))
		}
		if lv := statusLevel(in.Status[e.To]); lv < e.Level {
			e.Level = lv
		} else if e.Confidence < cfg.MinConfidence {
			e.Level = Weak
		}
		rows = append(rows, e)
	}
	bySite := map[string][]timeline.Switch{}
	for _, s := range in.Switches {
		if !inEvent[eventKey(s)+"|"+s.Site] {
			bySite[s.Site] = append(bySite[s.Site], s)
		}
	}
	earlier := map[string][]time.Time{}
	for _, e := range in.Earlier {
		earlier[e.Site] = append(earlier[e.Site], e.Time)
	}
	revision := func(s timeline.Switch) bool {
		for _, t := range earlier[s.Site] {
			if d := s.Time.Sub(t); d < cfg.Nearby && d > -cfg.Nearby {
				return true
			}
		}
		return false
	}
	still := map[int][]string{} // regime → sites whose reported stay goes on
	for _, seq := range sites(in.Windows) {
		site := seq[0].Site
		r := Row{Site: site, Sites: []string{site}, Level: Weak + 1}
		var reasons []string
		held := "" // the stay of a site in still, in words
		set := func(lv Level, s *timeline.Switch) {
			better := lv < r.Level
			if s != nil && lv == r.Level && !r.Time.IsZero() {
				rev := revision(*s)
				better = !rev && r.Revision || rev == r.Revision && s.Confidence > r.Confidence
			}
			if !better {
				return
			}
			r.Level, r.Time, r.From, r.To, r.Confidence, r.Revision = lv, time.Time{}, 0, 0, 0, false
			if s != nil {
				r.Time, r.From, r.To, r.Confidence, r.Revision = s.Time, s.From, s.To, s.Confidence, revision(*s)
			}
		}
		for _, s := range bySite[site] {
			lv := statusLevel(in.Status[s.To])
			if lv > Watch {
				lv = Switch
				if s.Confidence < cfg.MinConfidence {
					lv = Weak
				}
			}
			news := "new"
			if revision(s) {
				news = "revises an earlier report"
			}
			what := "switched"
			if lv <= Watch {
				what = "switched into " + in.Status[s.To] + " regime"
			}
			reasons = append(reasons, fmt.Sprintf("%s %s → %s on %s (confidence %.2f, %s)", what, label(s.From), label(s.To),
				s.Time.UTC().Format(time.DateOnly), s.Confidence, news))
			set(lv, &s)
		}
		last := seq[len(seq)-1].Regime
		if st := in.Status[last]; marked(st) {
			n := 0
			for i := len(seq) - 1; i >= 0 && seq[i].Regime == last; i-- {
				n++
			}
			// A stay that began before the run's windows counts the
			// history's windows too, so that runs of a few windows each
			// still see it.
			earlier := 0
			if before, ok := in.Standing[site]; ok && n == len(seq) && before.Regime == last {
				earlier = before.Windows
			}
			switch {
			case n+earlier < cfg.LongStay:
			case earlier >= cfg.LongStay:
				still[last] = append(still[last], site)
				held = fmt.Sprintf("still in %s regime %s, as an earlier run reported (%d windows then, %d more now)", st, label(last), earlier, n)
			case earlier > 0:
				reasons = append(reasons, fmt.Sprintf("%d windows in a row in %s regime %s, up to its last window (%d of them before this dump)", n+earlier, st, label(last), earlier))
				set(Stay, nil)
			default:
				reasons = append(reasons, fmt.Sprintf("%d windows in a row in %s regime %s, up to its last window", n, st, label(last)))
				set(Stay, nil)
			}
		}
		for _, a := range near[site] {
			reasons = append(reasons, fmt.Sprintf("in regime %s since %s, but %d of its %d windows since lie further towards %s regime %s than %g %% of regime %s's windows (chance p = %.1g)",
				label(seq[len(seq)-1].Regime), a.since.UTC().Format(time.DateOnly), a.beyond, a.windows, in.Status[a.towards], label(a.towards),
				100*(1-cfg.UnfamiliarRate), label(seq[len(seq)-1].Regime), a.p))
			set(Nearing, nil)
			if r.Level == Nearing {
				r.Confidence = max(r.Confidence, 1-a.p)
			}
		}
		for _, m := range resembling[site] {
			reasons = append(reasons, fmt.Sprintf("%d of %d recent windows resemble windows labelled %q (confidence %.2f)",
				m.Matching, m.Windows, m.label, m.Score))
			set(Resembles, nil)
			if r.Level == Resembles {
				r.Confidence = max(r.Confidence, m.Score)
			}
		}
		k := 0
		for _, e := range seq {
			if e.Unfamiliar {
				k++
			}
		}
		if k > 0 {
			if p := binomial.Tail(len(seq), k, cfg.UnfamiliarRate); p < cfg.UnfamiliarAlpha {
				reasons = append(reasons, fmt.Sprintf("%d of %d windows unfamiliar (chance p = %.1g)", k, len(seq), p))
				set(Unfamiliar, nil)
			}
		}
		if len(reasons) == 0 {
			continue
		}
		if held != "" {
			reasons = append(reasons, held)
		}
		r.Reason = strings.Join(reasons, "; ")
		rows = append(rows, r)
	}
	for _, id := range slices.Sorted(maps.Keys(still)) {
		ss := still[id]
		slices.Sort(ss)
		rows = append(rows, Row{Level: Still, Sites: ss, To: id,
			Reason: fmt.Sprintf("%d site(s) still in %s regime %s, unchanged since an earlier run reported their stay: %s",
				len(ss), in.Status[id], label(id), strings.Join(ss, ", "))})
	}
	// Still rows of fault regimes come before those of watch regimes.
	stillRank := func(r Row) Level {
		if r.Level == Still {
			return statusLevel(in.Status[r.To])
		}
		return 0
	}
	slices.SortStableFunc(rows, func(a, b Row) int {
		return cmp.Or(cmp.Compare(a.Level, b.Level), cmp.Compare(stillRank(a), stillRank(b)), compareBool(a.Revision, b.Revision),
			cmp.Compare(len(b.Sites), len(a.Sites)), cmp.Compare(b.Confidence, a.Confidence),
			cmp.Compare(a.Site, b.Site), a.Time.Compare(b.Time))
	})
	for i := range rows {
		rows[i].Rank = i + 1
	}
	return rows
}

// match is a site's resemblance to one label.
type match struct {
	events.SiteScore
	label string
}

// resemblance returns, by site, the labels of in.Labels its recent windows
// resemble (see the package documentation), the closest first.
func resemblance(in Input, cfg Config) map[string][]match {
	out := map[string][]match{}
	for _, label := range in.Labels {
		if label == events.Unlabelled || label == events.Unknown || label == "" {
			continue
		}
		for _, s := range events.Resemble(in.Windows, label, cfg.Recent) {
			if s.Score >= cfg.MinResemblance {
				out[s.Site] = append(out[s.Site], match{s, label})
			}
		}
	}
	for _, ms := range out {
		slices.SortStableFunc(ms, func(a, b match) int { return cmp.Compare(b.Score, a.Score) })
	}
	return out
}

// marked reports whether a regime of status st is marked fault or watch.
func marked(st string) bool { return st == StatusFault || st == StatusWatch }

// statusLevel is the level of a switch into a regime of status st, or
// Switch for a regime neither fault nor watch.
func statusLevel(st string) Level {
	switch st {
	case StatusFault:
		return Fault
	case StatusWatch:
		return Watch
	}
	return Switch
}

func compareBool(a, b bool) int {
	switch {
	case a == b:
		return 0
	case a:
		return 1
	}
	return -1
}

// sites splits ws, sorted by site, into each site's windows.
func sites(ws []features.Window) [][]features.Window {
	var out [][]features.Window
	for i := 0; i < len(ws); {
		j := i + 1
		for j < len(ws) && ws[j].Site == ws[i].Site {
			j++
		}
		out = append(out, ws[i:j])
		i = j
	}
	return out
}

// eventKey groups switches of the same regimes on the same UTC day.
func eventKey(s timeline.Switch) string {
	return fmt.Sprintf("%d>%d@%s", s.From, s.To, s.Time.UTC().Format(time.DateOnly))
}

// fleetEvents finds the fleet-wide events of in (see the package
// documentation) and the switches they hold, keyed by eventKey|site, and
// adds a row, with its reason, for each shared condition the decoding
// read (in.Shared); label names a regime.
func fleetEvents(in Input, cfg Config, label func(int) string) ([]Row, map[string]bool) {
	if len(in.Windows) == 0 {
		return nil, nil
	}
	var rows []Row
	held := map[string]bool{}
	// Shared conditions first: the switches they hold are part of them.
	for _, sh := range in.Shared {
		if len(sh.Sites) == 0 {
			continue
		}
		for _, s := range in.Switches {
			if sh.Holds(s) {
				held[eventKey(s)+"|"+s.Site] = true
			}
		}
		until := "to the last window"
		if !sh.End.IsZero() {
			until = "until " + sh.End.UTC().Format(time.DateOnly)
		}
		// Its confidence is that of the test that found it: 1 − its
		// chance level.
		rows = append(rows, Row{Level: Switch, From: sh.Regime, To: sh.Like, Time: sh.Start, Sites: sh.Sites, Confidence: 1 - sh.P,
			Reason: fmt.Sprintf("%d of %d sites of regime %s looked like regime %s from %s %s, together: read as a condition of the fleet, not as switches (weather, a holiday, a firmware or set-point change, the data pipeline?)",
				len(sh.Sites), sh.Of, label(sh.Regime), label(sh.Like), sh.Start.UTC().Format(time.DateOnly), until)})
	}
	first, last := features.Span(in.Windows)
	days := math.Max(1, last.Sub(first).Hours()/24)
	pairs := map[[2]int]int{}
	groups := map[string][]timeline.Switch{}
	for _, s := range in.Switches {
		pairs[[2]int{s.From, s.To}]++
		if k := eventKey(s); !held[k+"|"+s.Site] {
			groups[k] = append(groups[k], s)
		}
	}
	for _, k := range slices.Sorted(maps.Keys(groups)) {
		g := groups[k]
		s := g[0]
		n := pairs[[2]int{s.From, s.To}]
		if len(g) < cfg.MinFleetSites {
			continue
		}
		p := 1 - distuv.Poisson{Lambda: float64(n) / days}.CDF(float64(len(g)-1))
		if p >= cfg.FleetAlpha {
			continue
		}
		r := Row{Level: Switch, From: s.From, To: s.To, Time: s.Time.UTC().Truncate(24 * time.Hour)}
		conf := 0.0
		for _, x := range g {
			r.Sites = append(r.Sites, x.Site)
			conf += x.Confidence
			held[k+"|"+x.Site] = true
		}
		r.Confidence = conf / float64(len(g))
		slices.Sort(r.Sites)
		rows = append(rows, r)
	}
	return rows, held
}
