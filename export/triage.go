package export

import (
	"cmp"
	"fmt"
	"html/template"
	"maps"
	"slices"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/kinmap/kinmap/attention"
)

// maxAttentionRows caps the work list in the report; attention.csv has it
// all.
const maxAttentionRows = 100

// maxHealthRows caps each kind of data health finding in the report,
// warnings first; health.csv has them all.
const maxHealthRows = 20

// triageData is what the sections of the work list, the data health and
// the comparison with the previous period show.
type triageData struct {
	Attention      []attentionItem
	AttentionTotal int
	// The thresholds of the list, as the report states them.
	MinConfidence, UnfamiliarAlpha, FleetAlpha string
	LongStay                                   int
	Health                                     []healthGroup
	Against                                    *againstData
}

type attentionItem struct {
	Rank        int
	Level, Site string
	Reason      template.HTML // its site ids kept whole (siteText)
	Sites       int
	News        string
	HasSwitch   bool
	Time        string
	From, To    int
	Confidence  string
}

type healthGroup struct {
	Title    string
	Findings []healthItem
	More     int // findings left out of the report
}

type healthItem struct {
	Site, Channel, Detail string
	Count                 int64
	Share                 string
	Warning               bool
}

type againstData struct {
	Period  string
	Windows int
	Shares  []shareItem
	Changed []RegimeMove
	Silent  []string
	Back    []string
	New     []string
}

type shareItem struct {
	ID        int
	Then, Now string
}

// healthTitles heads each kind of finding in the report.
var healthTitles = map[string]string{
	HealthSilent:         "Sites that sent no data",
	HealthNoWindows:      "Sites whose every window was skipped",
	HealthMissingChannel: "Channels missing",
	HealthUnselected:     "Channels not read",
	HealthDuplicates:     "Readings resolved as duplicates",
	HealthDropped:        "Rows and readings dropped",
	HealthUnused:         "Readings in no window used",
	HealthWindowStep:     "Windows and the sampling step",
	HealthEpochUnit:      "Epoch unit of the times",
	HealthGap:            "Spans the history lacks",
	HealthLate:           "A dump delivered late",
	HealthCut:            "Windows the dump holds part of",
	HealthRevised:        "Earlier windows decoded anew",
}

// triageOf builds the sections' data of r.
func triageOf(r *Run) triageData {
	def := attention.DefaultConfig()
	c := r.WorkList
	d := triageData{AttentionTotal: len(r.Attention), LongStay: cmp.Or(c.LongStay, def.LongStay),
		MinConfidence:   strconv.FormatFloat(cmp.Or(c.MinConfidence, def.MinConfidence), 'f', -1, 64),
		UnfamiliarAlpha: strconv.FormatFloat(cmp.Or(c.UnfamiliarAlpha, def.UnfamiliarAlpha), 'g', -1, 64),
		FleetAlpha:      strconv.FormatFloat(cmp.Or(c.FleetAlpha, def.FleetAlpha), 'g', -1, 64)}
	for _, a := range r.Attention[:min(len(r.Attention), maxAttentionRows)] {
		it := attentionItem{Rank: a.Rank, Level: a.Level.String(), Site: a.Site, Reason: siteText(a.Reason, a.Sites),
			Sites: len(a.Sites), News: a.News(), HasSwitch: !a.Time.IsZero()}
		switch a.Kind() {
		case "fleet":
			it.Site = "fleet-wide"
		case "regime":
			it.Site = fmt.Sprintf("regime %d", a.To)
		}
		if it.HasSwitch {
			it.Time, it.From, it.To, it.Confidence = readable(a.Time), a.From, a.To, strconv.FormatFloat(a.Confidence, 'f', 2, 64)
		}
		d.Attention = append(d.Attention, it)
	}
	for _, kind := range healthKinds() {
		var g healthGroup
		for _, f := range r.Health {
			if f.Kind != kind {
				continue
			}
			share := ""
			if f.Share > 0 {
				share = percent1(f.Share)
			}
			g.Findings = append(g.Findings, healthItem{Site: cmp.Or(f.Site, "all"), Channel: f.Channel, Detail: f.Detail,
				Count: f.Count, Share: share, Warning: f.Warning})
		}
		if len(g.Findings) > 0 {
			slices.SortStableFunc(g.Findings, func(a, b healthItem) int { return compareWarning(a.Warning, b.Warning) })
			if len(g.Findings) > maxHealthRows {
				g.More, g.Findings = len(g.Findings)-maxHealthRows, g.Findings[:maxHealthRows]
			}
			g.Title = healthTitles[kind]
			d.Health = append(d.Health, g)
		}
	}
	if c := r.Against; c != nil {
		a := &againstData{Period: c.Period, Windows: c.Windows, Changed: c.Changed, Silent: c.Silent, Back: c.Back, New: c.New}
		ids := slices.Sorted(maps.Keys(c.Now))
		for id := range c.Then {
			if !slices.Contains(ids, id) {
				ids = append(ids, id)
			}
		}
		slices.Sort(ids)
		for _, id := range ids {
			a.Shares = append(a.Shares, shareItem{ID: id, Then: percent1(c.Then[id]), Now: percent1(c.Now[id])})
		}
		d.Against = a
	}
	return d
}

// attentionRanks gives each site of rows the rank of the most urgent row
// that names it: its own row, or a fleet-wide event it is part of.
func attentionRanks(rows []attention.Row) map[string]int {
	out := map[string]int{}
	for _, r := range rows {
		for _, s := range r.Sites {
			if k, ok := out[s]; !ok || r.Rank < k {
				out[s] = r.Rank
			}
		}
	}
	return out
}

// compareWarning orders warnings first.
func compareWarning(a, b bool) int {
	switch {
	case a == b:
		return 0
	case a:
		return -1
	}
	return 1
}

// siteList lists site ids for the report, each kept whole (siteText).
func siteList(ids []string) template.HTML { return siteText(strings.Join(ids, ", "), ids) }

// siteText writes text for the report with each of the site ids ids in it
// on one line: a browser may end a line after a hyphen (CSS Text Level 3,
// section 5.2, from memory), which would show "PS-0042" as "PS-" and
// "0042", the second half looking like an id of its own. An id is a word
// of text between spaces and the punctuation that lists them (, ; : and
// brackets), a full stop after it aside, and is set in a span of class id,
// which the style sheet keeps on one line. Copied from the page, the ids
// are the characters of attention.csv, as a non-breaking hyphen in their
// place would not be.
func siteText(text string, ids []string) template.HTML {
	set := make(map[string]bool, len(ids))
	for _, id := range ids {
		set[id] = true
	}
	var b strings.Builder
	for text != "" {
		end := strings.IndexFunc(text, isListMark)
		if end < 0 {
			end = len(text)
		}
		word := text[:end]
		if end == 0 {
			_, end = utf8.DecodeRuneInString(text)
			word = ""
		}
		id := strings.TrimRight(word, ".")
		if set[id] {
			b.WriteString(`<span class="id">` + template.HTMLEscapeString(id) + "</span>" + template.HTMLEscapeString(word[len(id):]))
		} else {
			b.WriteString(template.HTMLEscapeString(text[:end]))
		}
		text = text[end:]
	}
	return template.HTML(b.String())
}

// isListMark reports whether r ends a word that may be a site id in a
// text: a space or the punctuation that lists ids.
func isListMark(r rune) bool { return unicode.IsSpace(r) || strings.ContainsRune(",;:()[]\"", r) }
