// Package parallel spreads independent pieces of work over goroutines and
// hands their results back in order, so that a parallel run gives the same
// answer as a sequential one.
package parallel

import (
	"runtime"
	"sync"
	"sync/atomic"
)

// Workers returns the number of goroutines the setting n asks for: n when
// positive, else the number of usable cores (runtime.GOMAXPROCS).
func Workers(n int) int {
	if n <= 0 {
		return runtime.GOMAXPROCS(0)
	}
	return n
}

// For calls fn(s, i) for every i in [0, n) on up to Workers(workers)
// goroutines, each taking the next i as it finishes one, and returns when
// all calls have. Each goroutine makes its own s with scratch (memory it
// reuses from one call to the next); scratch may be nil when fn needs none.
func For[S any](n, workers int, scratch func() S, fn func(s S, i int)) {
	workers = max(1, min(Workers(workers), n))
	var next atomic.Int64
	var wg sync.WaitGroup
	for range workers {
		wg.Go(func() {
			s := scratchOf(scratch)
			for {
				i := int(next.Add(1) - 1)
				if i >= n {
					return
				}
				fn(s, i)
			}
		})
	}
	wg.Wait()
}

// Map is For keeping the results of fn, in order of i.
func Map[S, T any](n, workers int, scratch func() S, fn func(s S, i int) T) []T {
	out := make([]T, n)
	For(n, workers, scratch, func(s S, i int) { out[i] = fn(s, i) })
	return out
}

// Stream runs the items i = 0, 1, 2, … through three steps: take(i), on
// one goroutine at a time and in order of i, gives the item, or false when
// there are no more; work(s, a) processes it on up to Workers(workers)
// goroutines, s being the goroutine's scratch as in For; put(i, b) receives
// the results on the calling goroutine in order of i, and returns false to
// stop early. At most ahead items (at least one) are between take and the
// return of their put, which bounds the memory held by results waiting for
// an earlier one. Stream returns once every goroutine it started has; the
// results of items taken after a put returned false are dropped.
func Stream[S, A, B any](workers, ahead int, scratch func() S, take func(i int) (A, bool), work func(s S, a A) B, put func(i int, b B) bool) {
	workers = Workers(workers)
	ahead = max(1, ahead)
	type result struct {
		i int
		b B
	}
	var (
		mu      sync.Mutex
		next    int
		ended   bool
		slots   = make(chan struct{}, ahead)
		results = make(chan result, ahead) // never full: at most ahead items are out
		stop    = make(chan struct{})
		wg      sync.WaitGroup
	)
	// claim takes the next item once a slot is free; false when there is
	// none or the caller stopped.
	claim := func() (int, A, bool) {
		var zero A
		select {
		case slots <- struct{}{}:
		case <-stop:
			return 0, zero, false
		}
		mu.Lock()
		defer mu.Unlock()
		select {
		case <-stop:
			ended = true
		default:
		}
		if !ended {
			a, ok := take(next)
			if ok {
				next++
				return next - 1, a, true
			}
			ended = true
		}
		<-slots
		return 0, zero, false
	}
	for range workers {
		wg.Go(func() {
			s := scratchOf(scratch)
			for {
				i, a, ok := claim()
				if !ok {
					return
				}
				results <- result{i, work(s, a)}
			}
		})
	}
	go func() { wg.Wait(); close(results) }()

	waiting := make(map[int]B)
	want := 0
	for r := range results {
		waiting[r.i] = r.b
		for {
			b, ok := waiting[want]
			if !ok {
				break
			}
			delete(waiting, want)
			if !put(want, b) {
				close(stop)
				for range results { // wait for the goroutines to finish
				}
				return
			}
			want++
			<-slots
		}
	}
}

// scratchOf returns a goroutine's scratch: what scratch makes, or the zero S
// when scratch is nil.
func scratchOf[S any](scratch func() S) S {
	var s S
	if scratch != nil {
		s = scratch()
	}
	return s
}
