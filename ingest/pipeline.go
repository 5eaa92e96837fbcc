package ingest

import (
	"io"
	"runtime"
	"sync"
	"sync/atomic"
)

// randomAccess is a source whose batches can be read in any order and at
// the same time (the row groups of a Parquet file).
type randomAccess interface {
	numBatches() int
	batchAt(i int, want []bool) (*batch, error)
}

// pipeline reads the batches of src and runs prepare on them on several
// cores, and merge on each result in read order. Batches are read in
// parallel too when src allows it. A batch goes back to the source for
// reuse of its buffers, when the source takes it, once merge is done with
// it, or right after prepare when that leaves it out of its result.
func pipeline(src source, want []bool, prepare func(*batch) (*prepared, error), merge func(*prepared) error) error {
	workers := min(runtime.GOMAXPROCS(0), 4)
	var (
		mu   sync.Mutex
		next int
		seq  atomic.Int64
	)
	recycle := func(b *batch) {
		if rc, ok := src.(interface{ recycle(*batch) }); ok {
			rc.recycle(b)
		}
	}
	fetch := func() (int, *batch, error) {
		if ra, ok := src.(randomAccess); ok {
			i := int(seq.Add(1) - 1)
			if i >= ra.numBatches() {
				return i, nil, io.EOF
			}
			b, err := ra.batchAt(i, want)
			return i, b, err
		}
		// Sequential sources: reading and numbering under one lock.
		mu.Lock()
		defer mu.Unlock()
		i := next
		next++
		b, err := src.next(want)
		return i, b, err
	}
	type result struct {
		i   int
		p   *prepared
		err error
	}
	done := make(chan struct{})
	tokens := make(chan struct{}, workers+1) // batches between fetch and merge
	results := make(chan result)
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				select {
				case tokens <- struct{}{}:
				case <-done:
					return
				}
				i, b, err := fetch()
				var p *prepared
				if err == nil {
					p, err = prepare(b)
				}
				if err == nil && p.b == nil {
					recycle(b)
				}
				select {
				case results <- result{i, p, err}:
				case <-done:
					return
				}
				if err != nil {
					return
				}
			}
		}()
	}
	defer func() {
		close(done)
		wg.Wait()
	}()
	waiting := make(map[int]result)
	for i := 0; ; i++ {
		res, ok := waiting[i]
		for !ok {
			got := <-results
			if got.i == i {
				res, ok = got, true
			} else {
				waiting[got.i] = got
			}
		}
		delete(waiting, i)
		if res.err == io.EOF {
			return nil
		}
		if res.err != nil {
			return res.err
		}
		if err := merge(res.p); err != nil {
			return err
		}
		if res.p.b != nil {
			recycle(res.p.b)
		}
		<-tokens
	}
}
