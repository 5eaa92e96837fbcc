package ingest

import (
	"io"

	"github.com/kinmap/kinmap/internal/parallel"
)

// maxReaders bounds the goroutines that read one file.
const maxReaders = 4

// randomAccess is a source whose batches can be read in any order and at
// the same time (the row groups of a Parquet file).
type randomAccess interface {
	numBatches() int
	batchAt(i int, want []bool) (*batch, error)
}

// pipeline reads the batches of src and runs prepare on them on up to
// workers goroutines (0 means all cores, at most maxReaders), and merge on
// each result in read order. Batches are read in parallel too when src
// allows it. A batch goes back to the source for reuse of its buffers, when
// the source takes it, once merge is done with it, or right after prepare
// when that leaves it out of its result.
func pipeline(src source, want []bool, workers int, prepare func(*batch) (*prepared, error), merge func(*prepared) error) error {
	workers = min(parallel.Workers(workers), maxReaders)
	recycle := func(b *batch) {
		if rc, ok := src.(interface{ recycle(*batch) }); ok {
			rc.recycle(b)
		}
	}
	ra, random := src.(randomAccess)
	type taken struct {
		i   int
		b   *batch // read already (sequential sources)
		err error
	}
	type result struct {
		p   *prepared
		err error
	}
	var failed error
	readErr := false
	parallel.Stream(workers, workers+1, nil,
		// Sequential sources are read here, one batch at a time in order;
		// random-access ones only numbered.
		func(i int) (taken, bool) {
			if random {
				return taken{i: i}, i < ra.numBatches()
			}
			if readErr {
				return taken{}, false
			}
			b, err := src.next(want)
			if err == io.EOF {
				return taken{}, false
			}
			readErr = err != nil
			return taken{i, b, err}, true
		},
		func(_ struct{}, t taken) result {
			b, err := t.b, t.err
			if random {
				b, err = ra.batchAt(t.i, want)
			}
			if err != nil {
				return result{err: err}
			}
			p, err := prepare(b)
			if err == nil && p.b == nil {
				recycle(b)
			}
			return result{p, err}
		},
		func(_ int, r result) bool {
			if r.err == nil {
				r.err = merge(r.p)
			}
			if r.err != nil {
				failed = r.err
				return false
			}
			if r.p.b != nil {
				recycle(r.p.b)
			}
			return true
		})
	return failed
}
