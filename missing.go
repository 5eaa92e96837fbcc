package kinmap

import (
	"fmt"
	"maps"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/mat"

	"github.com/kinmap/kinmap/features"
)

// absentChannels returns, by site, the channels of the features names
// that no window of the site in t has a value of: channels missing from
// the whole dump (NaN columns, see conform) and channels a site never
// reported. A window that lacks a channel the site reports fails the
// coverage rule, so a channel without a value in any kept window of a site
// is one the site did not send. The count stat, 0 without readings, does
// not count.
func absentChannels(t *features.Table, names []string) map[string][]string {
	index := make(map[string]int, len(t.Names))
	for j, n := range t.Names {
		index[n] = j
	}
	cols := map[string][]int{} // by channel, the columns of its features
	for _, n := range names {
		j, ok := index[n]
		if !ok || strings.HasSuffix(n, ".count") {
			continue
		}
		for _, ch := range features.Channels([]string{n}) {
			cols[ch] = append(cols[ch], j)
		}
	}
	out := map[string][]string{}
	for _, seq := range t.Sequences() {
		site := t.Windows[seq[0]].Site
		for _, ch := range slices.Sorted(maps.Keys(cols)) {
			seen := false
			for _, i := range seq {
				for _, j := range cols[ch] {
					if !math.IsNaN(t.Windows[i].Values[j]) {
						seen = true
						break
					}
				}
				if seen {
					break
				}
			}
			if !seen {
				out[site] = append(out[site], ch)
			}
		}
	}
	return out
}

// conform gives the table t the columns names, in that order: the features
// t lacks, those of channels absent from the whole dump, become NaN
// columns. Features of t that names lacks are kept out of reach, so that
// the model's schema check still refuses them.
func conform(t *features.Table, names []string) {
	if slices.Equal(t.Names, names) {
		return
	}
	index := make(map[string]int, len(t.Names))
	for j, n := range t.Names {
		index[n] = j
	}
	for _, n := range t.Names {
		if !slices.Contains(names, n) {
			return // an extra feature: CheckSchema words it
		}
	}
	for i := range t.Windows {
		w := &t.Windows[i]
		vals := make([]float64, len(names))
		for k, n := range names {
			vals[k] = math.NaN()
			if j, ok := index[n]; ok {
				vals[k] = w.Values[j]
			}
		}
		w.Values = vals
	}
	t.Names = slices.Clone(names)
}

// maskAbsent sets to NaN, in the scaled matrix x of table t, the features
// of the channels each site lacks (absent), so that the map places its
// windows by the features they have (mapper.Map.Assign) and the
// decoding leaves them out. It returns the number of windows concerned.
func maskAbsent(t *features.Table, x *mat.Dense, scaled []string, absent map[string][]string) int {
	if len(absent) == 0 {
		return 0
	}
	chans := make([][]string, len(scaled))
	for j, n := range scaled {
		chans[j] = features.Channels([]string{n})
	}
	n := 0
	for i, w := range t.Windows {
		lack := absent[w.Site]
		if len(lack) == 0 {
			continue
		}
		row := x.RawRowView(i)
		for j, cs := range chans {
			for _, c := range cs {
				if slices.Contains(lack, c) {
					row[j] = math.NaN()
					break
				}
			}
		}
		n++
	}
	return n
}

// absentWarning words the channels missing from the dump for run.json.
func absentWarning(absent []string, windows int, unread map[string]int64) string {
	w := fmt.Sprintf("channels %s of the model are missing from the dump: %d windows were placed on the map by their other features (see the data health)",
		strings.Join(absent, ", "), windows)
	if len(unread) > 0 {
		w += "; the dump has channels the model does not know, not read: " + strings.Join(slices.Sorted(maps.Keys(unread)), ", ")
	}
	return w
}
