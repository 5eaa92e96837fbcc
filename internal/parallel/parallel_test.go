package parallel

import (
	"runtime"
	"slices"
	"sync/atomic"
	"testing"
	"time"
)

// Map returns f(i) at i whatever the number of goroutines, and calls f once
// per i; each goroutine gets its own scratch.
func TestMapKeepsOrder(t *testing.T) {
	for _, n := range []int{0, 1, 7, 1000} {
		for _, workers := range []int{0, 1, 3, 64} {
			var calls, made atomic.Int64
			got := Map(n, workers, func() *[]int { made.Add(1); return new([]int) }, func(s *[]int, i int) int {
				calls.Add(1)
				*s = append(*s, i) // a data race if two goroutines shared s
				return i * i
			})
			if len(got) != n || calls.Load() != int64(n) {
				t.Fatalf("n %d, workers %d: %d results, %d calls", n, workers, len(got), calls.Load())
			}
			for i, v := range got {
				if v != i*i {
					t.Fatalf("n %d, workers %d: result %d is %d", n, workers, i, v)
				}
			}
			if limit := int64(max(1, min(Workers(workers), n))); made.Load() > limit {
				t.Errorf("n %d, workers %d: %d scratches for at most %d goroutines", n, workers, made.Load(), limit)
			}
		}
	}
}

func TestWorkers(t *testing.T) {
	if got := Workers(0); got != runtime.GOMAXPROCS(0) {
		t.Errorf("Workers(0) = %d, want GOMAXPROCS %d", got, runtime.GOMAXPROCS(0))
	}
	if got := Workers(5); got != 5 {
		t.Errorf("Workers(5) = %d", got)
	}
}

// Stream puts every item in order even when later items finish first, takes
// items in order one at a time, and never has more than ahead items out.
func TestStreamOrderAndBound(t *testing.T) {
	const n, ahead = 200, 5
	var out, taking atomic.Int64
	var took []int
	var put []int
	Stream(4, ahead, nil,
		func(i int) (int, bool) {
			if taking.Add(1) != 1 {
				t.Error("take called on two goroutines at once")
			}
			defer taking.Add(-1)
			if i >= n {
				return 0, false
			}
			if o := out.Add(1); o > ahead {
				t.Errorf("%d items out, ahead %d", o, ahead)
			}
			took = append(took, i)
			return i, true
		},
		func(_ struct{}, a int) int {
			if a%3 == 0 {
				time.Sleep(time.Millisecond) // later items overtake
			}
			return 10 * a
		},
		func(i, b int) bool {
			if b != 10*i {
				t.Errorf("put(%d, %d)", i, b)
			}
			put = append(put, i)
			out.Add(-1)
			return true
		})
	want := make([]int, n)
	for i := range want {
		want[i] = i
	}
	if !slices.Equal(took, want) || !slices.Equal(put, want) {
		t.Errorf("took %v\nput %v", took, put)
	}
}

// A put that returns false stops the stream: nothing after it is put, and
// Stream returns although take would go on for ever.
func TestStreamStops(t *testing.T) {
	var last int
	Stream(3, 4, nil,
		func(i int) (int, bool) { return i, true },
		func(_ struct{}, a int) int { return a },
		func(i, b int) bool {
			if i != last {
				t.Errorf("put %d after %d", i, last)
			}
			last = i + 1
			return i < 10
		})
	if last != 11 {
		t.Errorf("%d items put, want 11", last)
	}
}
