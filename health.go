package kinmap

import (
	"cmp"
	"fmt"
	"maps"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/history"
	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/mapper"
)

// timeWarnings warns of a dump whose times carry no zone. It is called
// when the run concludes, not where the dump is read, so that the Beam
// path, which merges the summaries of its dumps, warns the same.
func timeWarnings(sum *ingest.Summary) []string {
	if !sum.NaiveTime {
		return nil
	}
	return []string{"some times carry no time zone and were read as UTC: if the dump was written in local time, every window is shifted by the zone's offset; write the times with their offset or in UTC"}
}

// largeShare is the share of a site's readings resolved as duplicates, or
// of a dump's rows dropped, above which the data health warns. A logger
// sends each reading once; a few per cent of repeats come from
// retransmission, more points at a clock or a pipeline fault (common
// practice, no source; a round figure).
const largeShare = 0.05

// minReadings is the fewest readings per channel that a window should
// hold. With fewer than 20 readings, p05 and p95 (quantile definition 7 of
// Hyndman & Fan) interpolate between the two most extreme readings, so the
// basic set's quantiles say little more than min and max.
const minReadings = 20

// healthOf finds what is wrong with the data of a run from what the
// stages counted (the ingest summary and the feature table), so that the
// Beam path finds the same: sites of the register that sent nothing, sites
// whose every window was skipped, channels of the features names missing
// at sites, duplicates and drops per site and reason, readings in no window
// used, drops without a site, the
// window against the sampling step and the epoch unit. The history's
// silent sites are added when it is read (silentIn).
func healthOf(res *Result, names []string) []export.Finding {
	var out []export.Finding
	sum := &res.Ingest
	readings := sum.SiteReadings
	if reg := res.Register; reg != nil {
		for _, s := range reg.Sites {
			if _, ok := readings[s.ID]; !ok {
				out = append(out, export.Finding{Kind: export.HealthSilent, Site: s.ID, Warning: true,
					Detail: "in the site register, no reading in this dump"})
			}
		}
	}
	t := res.Table
	windows := map[string]int{}
	for _, w := range t.Windows {
		windows[w.Site]++
	}
	for _, site := range slices.Sorted(maps.Keys(t.Skipped)) {
		if windows[site] > 0 {
			continue
		}
		n, reasons := byReason(t.Skipped[site])
		out = append(out, export.Finding{Kind: export.HealthNoWindows, Site: site, Count: int64(n), Warning: true,
			Detail: "every window skipped: " + reasons + "; lower the minimum coverage or lengthen the window if its readings are sparse"})
	}
	for _, ch := range sum.Absent {
		out = append(out, export.Finding{Kind: export.HealthMissingChannel, Channel: ch, Count: int64(len(t.Windows)), Warning: true,
			Detail: "missing from the whole dump; its features are missing and each window was placed by the others"})
	}
	absent := absentChannels(t, names)
	for _, site := range slices.Sorted(maps.Keys(absent)) {
		for _, ch := range absent[site] {
			if slices.Contains(sum.Absent, ch) {
				continue
			}
			out = append(out, export.Finding{Kind: export.HealthMissingChannel, Site: site, Channel: ch, Count: int64(windows[site]),
				Detail: "no reading of this channel in the site's windows; its features are missing there"})
		}
	}
	out = append(out, unreadFindings(sum, absent)...)
	for _, site := range slices.Sorted(maps.Keys(sum.SiteDuplicates)) {
		d := sum.SiteDuplicates[site]
		share := float64(d) / float64(d+readings[site])
		out = append(out, export.Finding{Kind: export.HealthDuplicates, Site: site, Count: d, Share: share, Warning: share > largeShare,
			Detail: "readings of the same channel and time; the one read last was kept"})
	}
	out = append(out, dropFindings(sum)...)
	for _, site := range slices.Sorted(maps.Keys(t.Unused)) {
		if windows[site] == 0 {
			continue // listed with its skipped windows
		}
		n := t.Unused[site]
		share := float64(n) / float64(max(n, readings[site]))
		out = append(out, export.Finding{Kind: export.HealthUnused, Site: site, Count: n, Share: share, Warning: share > largeShare,
			Detail: unusedDetail(t, site)})
	}
	if f, ok := stepFinding(t); ok {
		out = append(out, f)
	}
	if u := sum.EpochUnit; u != nil {
		out = append(out, export.Finding{Kind: export.HealthEpochUnit, Warning: true, Detail: u.Error()})
	}
	return out
}

// unreadFindings lists the channels of the dump that the run did not read
// (ingest.Summary.Unselected), with their readings as a share of the rows
// read. Beside a channel of the model missing from the dump, or from some
// sites (absent, by site), each is a warning: a channel renamed at every
// site or at some looks like that, and its readings would otherwise vanish
// without a word.
func unreadFindings(sum *ingest.Summary, absent map[string][]string) []export.Finding {
	missing := slices.Clone(sum.Absent)
	for _, chs := range absent {
		for _, ch := range chs {
			if !slices.Contains(missing, ch) {
				missing = append(missing, ch)
			}
		}
	}
	slices.Sort(missing)
	var out []export.Finding
	for _, ch := range slices.Sorted(maps.Keys(sum.Unselected)) {
		n := sum.Unselected[ch]
		f := export.Finding{Kind: export.HealthUnselected, Channel: ch, Count: n, Warning: len(missing) > 0,
			Detail: "in the dump but not among the channels read (the model's, or those chosen); its readings were not used"}
		if sum.Rows > 0 {
			f.Share = float64(n) / float64(sum.Rows)
		}
		if f.Warning {
			f.Detail += "; the model's " + strings.Join(missing, ", ") + " missing from the dump or from some sites (see missing_channel): if this is one of them renamed, rename it back in the dump"
		}
		out = append(out, f)
	}
	return out
}

// dropFindings lists the rows and readings ingest dropped: by site and
// reason, as a share of what the site sent (kept, resolved as duplicates
// or dropped), then, for the whole dump, those that have no site, as a
// share of its rows.
func dropFindings(sum *ingest.Summary) []export.Finding {
	var out []export.Finding
	bySite := map[string]int64{}
	for _, site := range slices.Sorted(maps.Keys(sum.SiteDropped)) {
		dropped, sent, _ := siteLoss(sum, site)
		// Every reason of a site that lost much is a warning: it is the
		// site's results that are in doubt.
		large := float64(dropped) > largeShare*float64(sent)
		for _, reason := range slices.Sorted(maps.Keys(sum.SiteDropped[site])) {
			n := sum.SiteDropped[site][reason]
			bySite[reason] += n
			out = append(out, export.Finding{Kind: export.HealthDropped, Site: site, Reason: reason, Count: n, Share: float64(n) / float64(sent),
				Warning: large, Detail: dropDetail(reason)})
		}
	}
	for _, reason := range slices.Sorted(maps.Keys(sum.Dropped)) {
		n := sum.Dropped[reason] - bySite[reason]
		if n <= 0 {
			continue
		}
		share := 0.0
		if sum.Rows > 0 {
			share = float64(n) / float64(sum.Rows)
		}
		out = append(out, export.Finding{Kind: export.HealthDropped, Reason: reason, Count: n, Share: share, Warning: share > largeShare,
			Detail: dropDetail(reason) + " (no site to count them against)"})
	}
	return out
}

// dropWarnings warns of each site that had sentinel values, a sensor's
// bad-quality markers, or a large share of what it sent dropped.
func dropWarnings(sum *ingest.Summary) []string {
	var out []string
	for _, site := range slices.Sorted(maps.Keys(sum.SiteDropped)) {
		n, sent, reasons := siteLoss(sum, site)
		share := float64(n) / float64(sent)
		if share <= largeShare && sum.SiteDropped[site][ingest.DropSentinel] == 0 {
			continue
		}
		w := fmt.Sprintf("site %s: %d of %d rows and readings dropped (%.1f %%): %s", site, n, sent, 100*share, reasons)
		if sum.SiteDropped[site][ingest.DropSentinel] > 0 {
			w += fmt.Sprintf("; a sentinel value is a reading of magnitude %g or more, a bad-quality marker", ingest.SentinelMagnitude)
		}
		out = append(out, w)
	}
	return out
}

// siteLoss returns what ingest dropped of a site, what the site sent
// (kept, resolved as duplicates or dropped) and the drops by reason in
// words.
func siteLoss(sum *ingest.Summary, site string) (dropped, sent int64, reasons string) {
	dropped, reasons = byReason(sum.SiteDropped[site])
	return dropped, dropped + sum.SiteReadings[site] + sum.SiteDuplicates[site], reasons
}

// byReason totals counts by reason and words them, "3 for coverage, 1 for
// empty", reasons in order.
func byReason[N int | int64](counts map[string]N) (total N, words string) {
	var parts []string
	for _, r := range slices.Sorted(maps.Keys(counts)) {
		total += counts[r]
		parts = append(parts, fmt.Sprintf("%d for %s", counts[r], r))
	}
	return total, strings.Join(parts, ", ")
}

// dropDetail words a reason for dropping.
func dropDetail(reason string) string {
	switch reason {
	case ingest.DropSentinel:
		return fmt.Sprintf("readings of magnitude %g or more dropped as bad-quality markers (sentinel values)", ingest.SentinelMagnitude)
	case ingest.DropNullSite, ingest.DropNullTime, ingest.DropTimeRange, ingest.DropNullChannel:
		return "rows dropped: " + reason
	}
	return "readings dropped: " + reason
}

// unusedDetail words why a site's readings fell in no window kept.
func unusedDetail(t *features.Table, site string) string {
	d := "readings in no window used"
	if skips := t.Skipped[site]; len(skips) > 0 {
		_, reasons := byReason(skips)
		d += ": in windows skipped (" + reasons + ")"
	}
	if t.Config.Stride > t.Config.Window {
		d += fmt.Sprintf("; the stride of %s leaves the readings between windows of %s unused", t.Config.Stride, t.Config.Window)
	}
	return d
}

// stepFinding says when the window is short for the sampling step (fewer
// than minReadings readings per channel) or long for the data (fewer
// windows per site than a switch needs: the dwell on each side).
func stepFinding(t *features.Table) (export.Finding, bool) {
	if t.Step <= 0 {
		return export.Finding{}, false
	}
	if per := int64(t.Config.Window / t.Step); per < minReadings {
		return export.Finding{Kind: export.HealthWindowStep, Count: per, Warning: true,
			Detail: fmt.Sprintf("a window of %s holds about %d readings at the sampling step of %s; quantiles need %d or more, so lengthen the window",
				t.Config.Window, per, t.Step, minReadings)}, true
	}
	sites, windows := 0, len(t.Windows)
	for i, w := range t.Windows {
		if i == 0 || w.Site != t.Windows[i-1].Site {
			sites++
		}
	}
	// A switch needs the default dwell of windows on each side.
	if need := 2 * mapper.DefaultMinDwell; sites > 0 && windows < need*sites {
		return export.Finding{Kind: export.HealthWindowStep, Count: int64(windows / sites), Warning: true,
			Detail: fmt.Sprintf("sites have %.1f windows on average; a switch needs %d (the dwell on each side), so shorten the window",
				float64(windows)/float64(sites), need)}, true
	}
	return export.Finding{}, false
}

// silentIn lists the sites of the history that sent no data in this dump
// and are not already listed (from the register), each with its last
// window.
func silentIn(h *history.History, t *features.Table, have []export.Finding) []export.Finding {
	now := map[string]bool{}
	for _, w := range t.Windows {
		now[w.Site] = true
	}
	for s := range t.Skipped {
		now[s] = true
	}
	listed := map[string]bool{}
	for _, f := range have {
		if f.Kind == export.HealthSilent {
			listed[f.Site] = true
		}
	}
	last := map[string]time.Time{}
	first, end := features.Span(t.Windows)
	during := map[string]bool{} // the history holds windows of the dump's span
	for _, w := range h.Windows {
		if !now[w.Site] && w.End.After(last[w.Site]) {
			last[w.Site] = w.End
		}
		if !now[w.Site] && len(t.Windows) > 0 && w.End.After(first) && w.Start.Before(end) {
			during[w.Site] = true
		}
	}
	var out []export.Finding
	for _, site := range slices.Sorted(maps.Keys(last)) {
		d := "in the history, last window ending " + last[site].UTC().Format(time.RFC3339) + ", no reading in this dump"
		if during[site] {
			// Another dump of the same span, such as another region's,
			// brought its readings: no sign of a silent site.
			d += ", but the history holds its windows of this dump's span, from another dump"
		}
		if listed[site] {
			for i := range have {
				if have[i].Kind == export.HealthSilent && have[i].Site == site {
					have[i].Detail, have[i].Warning = "in the site register and "+d, !during[site]
				}
			}
			continue
		}
		out = append(out, export.Finding{Kind: export.HealthSilent, Site: site, Warning: !during[site], Detail: d})
	}
	return out
}

// historySpan places the run's windows against the history's, over the
// whole fleet: a span without any window between the history's last
// window and the dump's first (a dump not delivered, or a window cut in
// two by where two dumps end and begin, neither part passing the coverage
// rule), and windows the history already holds after the dump, which
// were decoded without it and keep their regimes. It also names a span
// without windows between the dump's end and those later windows.
func historySpan(h *history.History, t *features.Table) []export.Finding {
	if len(t.Windows) == 0 || len(h.Windows) == 0 {
		return nil
	}
	first, last := features.Span(t.Windows)
	step := cmp.Or(t.Config.Stride, t.Config.Window)
	var before, after time.Time
	later := 0
	for _, w := range h.Windows {
		if !w.End.After(first) && w.End.After(before) {
			before = w.End
		}
		if !w.Start.Before(last) {
			later++
			if after.IsZero() || w.Start.Before(after) {
				after = w.Start
			}
		}
	}
	var out []export.Finding
	gap := func(from, to time.Time, where string) {
		if n := int64(to.Sub(from) / step); n > 0 && !from.IsZero() {
			out = append(out, export.Finding{Kind: export.HealthGap, Count: n, Warning: true,
				Detail: fmt.Sprintf("no site has a window from %s to %s, %s (room for %d): a dump of that span was not delivered, no site had enough readings in it for the coverage rule, or a window was cut in two where two dumps end and begin and neither part passed that rule (dumps that overlap by a window lose none); decoding continues across it as if nothing were missing",
					from.UTC().Format(time.RFC3339), to.UTC().Format(time.RFC3339), where, n)})
		}
	}
	gap(before, first, "between the history and this dump")
	if later > 0 {
		out = append(out, export.Finding{Kind: export.HealthLate, Count: int64(later),
			Detail: fmt.Sprintf("the history already holds %d windows from %s on, after this dump: they were decoded without it and keep their regimes",
				later, after.UTC().Format(time.RFC3339))})
		gap(last, after, "between this dump and the history's later windows")
	}
	return out
}

// revisedFindings names, by site, the windows of earlier dumps whose
// regime the run's decoding changed: tail holds them as decoded again
// (history.Continuation.Prepend, then the decoding), h as stored. The
// history is rewritten with the new regimes (Continuation.Settle), while
// the earlier run's own tables keep the old.
func revisedFindings(h *history.History, tail []features.Window) []export.Finding {
	sites := map[string]bool{}
	for _, w := range tail {
		sites[w.Site] = true
	}
	stored := map[windowKey]int{}
	for _, w := range h.Windows {
		if sites[w.Site] {
			stored[keyOf(w.Site, w.Start)] = w.Regime
		}
	}
	var out []export.Finding
	for i := 0; i < len(tail); {
		j, n := i, 0
		var first, last time.Time
		var from, to []string
		for ; j < len(tail) && tail[j].Site == tail[i].Site; j++ {
			w := &tail[j]
			old, ok := stored[keyOf(w.Site, w.Start)]
			if !ok || old == w.Regime {
				continue
			}
			if n == 0 {
				first = w.Start
			}
			n, last = n+1, w.Start
			if s := strconv.Itoa(old); !slices.Contains(from, s) {
				from = append(from, s)
			}
			if s := strconv.Itoa(w.Regime); !slices.Contains(to, s) {
				to = append(to, s)
			}
		}
		if n > 0 {
			span := first.UTC().Format(time.DateOnly)
			if last.After(first) {
				span += " to " + last.UTC().Format(time.DateOnly)
			}
			out = append(out, export.Finding{Kind: export.HealthRevised, Site: tail[i].Site, Count: int64(n),
				Detail: fmt.Sprintf("windows of earlier dumps starting %s, decoded again with this dump, are now in regime %s, not %s as reported then: the history holds the new regimes, the earlier run's tables the old",
					span, strings.Join(to, ", "), strings.Join(from, ", "))})
		}
		i = j
	}
	return out
}
