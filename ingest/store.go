package ingest

import (
	"slices"

	"github.com/kinmap/kinmap/internal/parallel"
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
// read of each time kept (see order), and the number of readings of each
// series that lost to a later one. The series are sorted on up to workers
// goroutines (0 means all cores, at most maxReaders).
func (st *store) series(workers int) (out []Series, lost []int) {
	out = make([]Series, len(st.times))
	lost = parallel.Map(len(st.times), min(parallel.Workers(workers), maxReaders), nil, func(_ struct{}, id int) int {
		t, v, d := order(st.times[id], st.vals[id])
		if cap(t)-len(t) > len(t)/4 { // room reserved for readings that did not come
			t, v = slices.Clone(t), slices.Clone(v)
		}
		out[id] = Series{Times: slices.Clip(t), Values: slices.Clip(v)}
		return d
	})
	*st = store{}
	return out, lost
}
