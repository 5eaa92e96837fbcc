package features

import "strings"

// Definition is the plain-words meaning of one statistic, for people who
// read a regime's description rather than this package's documentation.
type Definition struct {
	Stat string // as in feature names: "flow.p95" has the stat "p95"
	Text string
}

// Definitions returns the meaning of every statistic a feature can be
// named by, in the order of the package documentation, the correlation
// of a channel pair last. The package documentation gives the formulas.
func Definitions() []Definition {
	text := [numStats]string{
		statMean:        "average of the window's readings",
		statStd:         "spread of the readings around their average (sample standard deviation); 0 for a steady signal, large for one that swings",
		statMin:         "lowest reading of the window",
		statMax:         "highest reading of the window",
		statP05:         "5th percentile: 5 % of the readings lie below it; a low level that ignores the lowest few spikes",
		statP50:         "median: half the readings lie below it; the typical level, unmoved by spikes",
		statP95:         "95th percentile: 95 % of the readings lie below it; a high level that ignores the highest few spikes",
		statTrend:       "least-squares slope per hour: how fast the readings rise (+) or fall (−) across the window, in the channel's unit per hour",
		statAcf1:        "how much each reading resembles the one before, from −1 to 1: near 1 a smooth signal, near 0 noise",
		statDayAmp:      "size of the daily cycle: the amplitude of a 24-hour sine fitted to the readings, in the channel's unit",
		statDayPhase:    "hour of the day (on the windows' clock) at which that daily cycle peaks",
		statPeriod:      "period in hours of the strongest repeating cycle in the window",
		statPeriodShare: "share of the swings (0 to 1) that the strongest cycle carries",
		statFlat:        "share of readings equal to the one before (0 to 1); near 1 is a stuck sensor's sign, or a machine standing still",
		statCount:       "number of readings in the window; fewer than usual means gaps or a slower logger",
	}
	out := make([]Definition, 0, numStats+1)
	for st, t := range text {
		out = append(out, Definition{Stat: statNames[st], Text: t})
	}
	return append(out, Definition{Stat: corrStat, Text: "correlation of two channels (a~b.corr), from −1 to 1: near 1 they rise and fall together, near −1 one rises as the other falls"})
}

// StatOf returns the stat of a feature name: "p95" for "flow.p95", "corr"
// for "flow~pressure.corr".
func StatOf(feature string) string {
	if i := strings.LastIndex(feature, "."); i >= 0 {
		return feature[i+1:]
	}
	return feature
}
