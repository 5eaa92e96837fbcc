package features

import (
	"fmt"
	"slices"
	"strings"
	"time"
)

// The stats of one channel, in the order their features are listed.
const (
	statMean = iota
	statStd
	statMin
	statMax
	statP05
	statP50
	statP95
	statTrend
	statAcf1
	statDayAmp
	statDayPhase
	statPeriod
	statPeriodShare
	statFlat
	statCount
	numStats
)

var statNames = [numStats]string{
	"mean", "std", "min", "max", "p05", "p50", "p95", "trend", "acf1",
	"day_amp", "day_phase", "period", "period_share", "flat", "count",
}

// statSet is a set of stats, one bit per stat.
type statSet uint32

func (s statSet) has(stat int) bool { return s&(1<<stat) != 0 }

// Sets of stats.
const (
	fullSet     statSet = 1<<numStats - 1
	basicSet    statSet = 1<<statMean | 1<<statStd | 1<<statMin | 1<<statMax | 1<<statP05 | 1<<statP50 | 1<<statP95 | 1<<statTrend | 1<<statFlat
	quantileSet statSet = 1<<statP05 | 1<<statP50 | 1<<statP95
	harmonicSet statSet = 1<<statDayAmp | 1<<statDayPhase
	spectrumSet statSet = 1<<statPeriod | 1<<statPeriodShare
)

const (
	corrStat = "corr"
	pairSep  = "~"
)

// featureHelp lists the valid names for error messages.
func featureHelp() string {
	return "sets basic, full; stats " + strings.Join(statNames[:], ", ") + "; or names such as flow.mean, flow~pressure.corr"
}

const (
	reasonEmpty    = "empty"
	reasonCoverage = "coverage"
)

// request is a parsed Config.Features: stats wanted on every channel,
// stats wanted on named channels, and named pairs.
type request struct {
	all     statSet
	channel map[string]statSet
	pairs   map[[2]string]bool
}

func parseRequest(spec string) (request, error) {
	r := request{channel: map[string]statSet{}, pairs: map[[2]string]bool{}}
	if strings.TrimSpace(spec) == "" {
		return r, fmt.Errorf("features: empty feature list (%s)", featureHelp())
	}
	for item := range strings.SplitSeq(spec, ",") {
		item = strings.TrimSpace(item)
		switch item {
		case "basic":
			r.all |= basicSet
			continue
		case "full":
			r.all |= fullSet
			continue
		}
		if st := slices.Index(statNames[:], item); st >= 0 {
			r.all |= 1 << st
			continue
		}
		dot := strings.LastIndex(item, ".")
		if dot <= 0 {
			return r, fmt.Errorf("features: unknown feature %q (%s)", item, featureHelp())
		}
		ch, stat := item[:dot], item[dot+1:]
		if stat == corrStat {
			a, b, ok := strings.Cut(ch, pairSep)
			if !ok || a == "" || b == "" || a == b {
				return r, fmt.Errorf("features: feature %q: a correlation is named <a>%s<b>.corr with two different channels", item, pairSep)
			}
			if b < a {
				a, b = b, a
			}
			r.pairs[[2]string{a, b}] = true
			continue
		}
		st := slices.Index(statNames[:], stat)
		if st < 0 {
			return r, fmt.Errorf("features: feature %q: unknown stat %q (%s)", item, stat, featureHelp())
		}
		r.channel[ch] |= 1 << st
	}
	return r, nil
}

// plan is what Extract computes: the stats of each channel, the pairs, and
// the feature names in output order.
type plan struct {
	channels []string
	stats    []statSet // by channel
	pairs    [][2]int  // channel indexes, a < b
	used     []bool    // by channel: some feature needs it
	names    []string
}

// unknownChannel is the error for a feature list naming a channel the data
// lacks.
func unknownChannel(ch string, channels []string) error {
	return unknownNameError{fmt.Errorf("features: unknown channel %q in the feature list (channels: %s)", ch, strings.Join(channels, ", "))}
}

func newPlan(channels []string, cfg Config) (*plan, error) {
	r, err := parseRequest(cfg.Features)
	if err != nil {
		return nil, err
	}
	p := &plan{channels: channels, stats: make([]statSet, len(channels)), used: make([]bool, len(channels))}
	for ch := range r.channel {
		if !slices.Contains(channels, ch) {
			return nil, unknownChannel(ch, channels)
		}
	}
	for i, ch := range channels {
		p.stats[i] = r.all | r.channel[ch]
		p.used[i] = p.stats[i] != 0
		for st := range numStats {
			if p.stats[i].has(st) {
				p.names = append(p.names, ch+"."+statNames[st])
			}
		}
	}
	for pr := range r.pairs {
		for _, ch := range pr {
			if !slices.Contains(channels, ch) {
				return nil, unknownChannel(ch, channels)
			}
		}
	}
	for a := range channels {
		for b := a + 1; b < len(channels); b++ {
			if cfg.Pairs || r.pairs[[2]string{channels[a], channels[b]}] {
				p.pairs = append(p.pairs, [2]int{a, b})
				p.used[a], p.used[b] = true, true
				p.names = append(p.names, channels[a]+pairSep+channels[b]+"."+corrStat)
			}
		}
	}
	if len(p.names) == 0 {
		return nil, fmt.Errorf("features: the feature list %q selects no feature of channels %s", cfg.Features, strings.Join(channels, ", "))
	}
	return p, nil
}

// Validate reports the first problem of the configuration, without looking
// at any data: a non-positive window, a negative stride, an unknown zone, a
// coverage outside [0, 1], a negative worker count or an unknown feature
// name. Channel names in the feature list are checked by Extract.
func (c Config) Validate() error {
	_, err := c.location()
	return err
}

// location validates the configuration and returns its zone.
func (c Config) location() (*time.Location, error) {
	switch {
	case c.Window <= 0:
		return nil, fmt.Errorf("features: window %v: must be positive", c.Window)
	case c.Stride < 0:
		return nil, fmt.Errorf("features: stride %v: must not be negative", c.Stride)
	case !(c.MinCoverage >= 0 && c.MinCoverage <= 1):
		return nil, fmt.Errorf("features: minimum coverage %v: must lie in [0, 1]", c.MinCoverage)
	case c.Workers < 0:
		return nil, fmt.Errorf("features: workers %d: must not be negative", c.Workers)
	}
	if _, err := parseRequest(c.Features); err != nil {
		return nil, err
	}
	if c.TZ == "Local" {
		return nil, fmt.Errorf("features: time zone %q: name an IANA zone such as Europe/Berlin, not the machine's zone", c.TZ)
	}
	loc, err := time.LoadLocation(c.TZ)
	if err != nil {
		return nil, fmt.Errorf("features: time zone %q: %w", c.TZ, err)
	}
	return loc, nil
}
