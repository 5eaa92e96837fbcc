package scaleout

import (
	"context"
	"fmt"
	"path"

	"gonum.org/v1/gonum/mat"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/mapper"
)

// scaledShard reads a window shard and scales its windows, in shard order.
type scaledShard struct {
	Names  []string // feature names of the table
	Scaler *features.Scaler
}

func (s *scaledShard) load(ctx context.Context, shard string) (*mat.Dense, error) {
	var rs []siteResult
	if err := readGob(ctx, shard, &rs); err != nil {
		return nil, err
	}
	return s.Scaler.Transform(table(s.Names, features.Config{}, rs))
}

// bmuFn finds the best-matching unit of every window of a shard on the
// codebook of the side input and emits the shard's per-unit counts and
// sums, and the sum of its quantization errors.
type bmuFn struct {
	Shard   scaledShard
	Workers int // goroutines per shard; 0 means all cores of the worker
}

func (f *bmuFn) ProcessElement(ctx context.Context, shard string, m mapper.Map, emit func(*mapper.Accumulator), emitQE func(float64)) error {
	x, err := f.Shard.load(ctx, shard)
	if err != nil {
		return err
	}
	if _, d := x.Dims(); d != m.Dim {
		return fmt.Errorf("scaleout: %s: %d features for a map of dimension %d", shard, d, m.Dim)
	}
	acc, qe := m.Accumulate(x, f.Workers)
	emit(acc)
	emitQE(qe)
	return nil
}

// accumulateFn is the batch epoch as a combine: it merges the per-unit
// counts and sums of the shards. Merging is associative, so the runner may
// merge in any order and on any worker; the sums then differ from a local
// epoch's only by floating-point reassociation.
type accumulateFn struct {
	Units, Dim int
}

func (f *accumulateFn) CreateAccumulator() *mapper.Accumulator {
	return mapper.NewAccumulator(f.Units, f.Dim)
}

func (f *accumulateFn) AddInput(acc, shard *mapper.Accumulator) *mapper.Accumulator {
	acc.Merge(shard)
	return acc
}

func (f *accumulateFn) MergeAccumulators(a, b *mapper.Accumulator) *mapper.Accumulator {
	a.Merge(b)
	return a
}

func (f *accumulateFn) ExtractOutput(acc *mapper.Accumulator) *mapper.Accumulator { return acc }

// epochResult is what an epoch's pipeline hands back to the driver.
type epochResult struct {
	Acc mapper.Accumulator
	QE  float64 // sum of the quantization errors
}

// epochOutFn writes the combined statistics of an epoch, with the sum of
// the quantization errors as a side input.
type epochOutFn struct {
	Path string
}

func (f *epochOutFn) ProcessElement(ctx context.Context, acc *mapper.Accumulator, qe float64) error {
	return writeGob(ctx, f.Path, epochResult{Acc: *acc, QE: qe})
}

// assignFn maps every window of a shard onto the final codebook of the side
// input and writes the assignments, in shard order, beside the shard.
type assignFn struct {
	Shard   scaledShard
	Workers int
	Dir     string
}

func (f *assignFn) ProcessElement(ctx context.Context, shard string, m mapper.Map) error {
	x, err := f.Shard.load(ctx, shard)
	if err != nil {
		return err
	}
	return writeGob(ctx, join(f.Dir, assignDir, path.Base(shard)), m.Assign(x, f.Workers))
}
