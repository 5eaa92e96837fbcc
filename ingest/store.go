package ingest

import (
	"runtime"
	"sync"
)

// store keeps the readings of a Read grouped by series: each series has
// a list of runs of readings, in read order, in arenas that prepare fills.
type store struct {
	arenas []arena
	runs   [][]run // by series
}

// arena holds readings grouped by series.
type arena struct {
	times []int64
	vals  []float64
}

// run is readings of one series in an arena.
type run struct {
	arena, off, n int32
}

// series returns the readings of every series sorted by time, the last
// read of each time kept (see order), and the number of readings that lost
// to a later one. The series are put together on several cores.
func (st *store) series() (out []Series, dups int64) {
	out = make([]Series, len(st.runs))
	starts := make([]int, len(st.runs)+1)
	for id, runs := range st.runs {
		starts[id+1] = starts[id]
		for _, r := range runs {
			starts[id+1] += int(r.n)
		}
	}
	total := starts[len(st.runs)]
	times, vals := make([]int64, total), make([]float64, total)
	workers := min(runtime.GOMAXPROCS(0), 4)
	lost := make([]int64, workers)
	var wg sync.WaitGroup
	first := 0
	for w := range workers {
		// Split at equal shares of the readings.
		last := first
		for last < len(st.runs) && starts[last] < total*(w+1)/workers {
			last++
		}
		if w == workers-1 {
			last = len(st.runs)
		}
		wg.Add(1)
		go func(lo, hi int) {
			defer wg.Done()
			for id := lo; id < hi; id++ {
				t, v := times[starts[id]:starts[id+1]], vals[starts[id]:starts[id+1]]
				p := 0
				for _, r := range st.runs[id] {
					ar := st.arenas[r.arena]
					copy(t[p:], ar.times[r.off:r.off+r.n])
					copy(v[p:], ar.vals[r.off:r.off+r.n])
					p += int(r.n)
				}
				var d int
				t, v, d = order(t, v)
				out[id] = Series{Times: t, Values: v}
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
