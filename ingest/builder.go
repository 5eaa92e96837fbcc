package ingest

import (
	"cmp"
	"slices"
)

// builder collects the positions of one track in the order read.
type builder[T any] struct {
	times []int64
	vals  []T
}

// add appends a reading. One at the time of the reading just before
// replaces it, as the last read wins.
func (b *builder[T]) add(t int64, v T) {
	if n := len(b.times); n > 0 && b.times[n-1] == t {
		b.vals[n-1] = v
		return
	}
	b.times = append(b.times, t)
	b.vals = append(b.vals, v)
}

// order sorts readings held in read order by time, in place, keeping the
// last read of each time, and returns them with the number of readings
// that lost to a later one.
func order[T any](times []int64, vals []T) ([]int64, []T, int) {
	sorted, strict := true, true
	for i := 1; i < len(times); i++ {
		if times[i] <= times[i-1] {
			strict = false
			if times[i] < times[i-1] {
				sorted = false
				break
			}
		}
	}
	if strict {
		return times, vals, 0
	}
	if !sorted {
		type entry struct {
			t int64
			v T
		}
		es := make([]entry, len(times))
		for i, t := range times {
			es[i] = entry{t, vals[i]}
		}
		// Stable, so that equal times stay in read order.
		slices.SortStableFunc(es, func(x, y entry) int { return cmp.Compare(x.t, y.t) })
		for i, e := range es {
			times[i], vals[i] = e.t, e.v
		}
	}
	n := 0
	for i, t := range times {
		if n > 0 && times[n-1] == t {
			vals[n-1] = vals[i]
			continue
		}
		times[n], vals[n] = t, vals[i]
		n++
	}
	return times[:n:n], vals[:n:n], len(times) - n
}
