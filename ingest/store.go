package ingest

import (
	"runtime"
	"slices"
	"sync"
)

// store keeps the readings of a Read by series, in read order. Each series
// has arrays of its own, so that the readings are copied once, from the
// batch that grouped them, and not gathered again at the end.
type store struct {
	times [][]int64 // by series
	vals  [][]float64
	spare int64 // room beyond the readings, over all series
}

func (st *store) newSeries() {
	st.times = append(st.times, nil)
	st.vals = append(st.vals, nil)
}

// reserve makes room for n more readings of series id, and for up to extra
// more when it grows anyway: readings expected from later batches, which
// would otherwise have the series grow, and be copied, batch after batch.
// The room beyond the readings of all series stays within limit, unless the
// readings themselves need it.
func (st *store) reserve(id int32, n, extra int, limit int64) {
	t := st.times[id]
	if len(t)+n <= cap(t) {
		return
	}
	extra = int(max(0, min(int64(extra), limit-st.spare)))
	size := max(len(t)+n+extra, 2*cap(t))
	st.times[id], st.vals[id] = grow(t, size), grow(st.vals[id], size)
	st.spare += int64(size - cap(t))
}

// grow moves s to new memory of capacity size. It uses make, not append:
// fresh memory, already zero, is then written once, by the copy and the
// readings to come, and not cleared first.
func grow[T any](s []T, size int) []T {
	g := make([]T, len(s), size)
	copy(g, s)
	return g
}

// add appends readings to series id.
func (st *store) add(id int32, times []int64, vals []float64) {
	st.times[id] = append(st.times[id], times...)
	st.vals[id] = append(st.vals[id], vals...)
	st.spare -= int64(len(times))
}

// series returns the readings of every series sorted by time, the last
// read of each time kept (see order), and the number of readings that lost
// to a later one. The series are sorted on several cores.
func (st *store) series() (out []Series, dups int64) {
	out = make([]Series, len(st.times))
	total := 0
	for _, t := range st.times {
		total += len(t)
	}
	workers := min(runtime.GOMAXPROCS(0), 4)
	lost := make([]int64, workers)
	var wg sync.WaitGroup
	first, done := 0, 0
	for w := range workers {
		// Split at equal shares of the readings.
		last := first
		for last < len(st.times) && done < total*(w+1)/workers {
			done += len(st.times[last])
			last++
		}
		if w == workers-1 {
			last = len(st.times)
		}
		wg.Add(1)
		go func(lo, hi int) {
			defer wg.Done()
			for id := lo; id < hi; id++ {
				t, v, d := order(st.times[id], st.vals[id])
				if cap(t)-len(t) > len(t)/4 { // room reserved for readings that did not come
					t, v = slices.Clone(t), slices.Clone(v)
				}
				out[id] = Series{Times: slices.Clip(t), Values: slices.Clip(v)}
				lost[w] += int64(d)
			}
		}(first, last)
		first = last
	}
	wg.Wait()
	*st = store{}
	for _, d := range lost {
		dups += d
	}
	return out, dups
}
