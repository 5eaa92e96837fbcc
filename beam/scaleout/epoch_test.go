package scaleout

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/lattice"
	"github.com/kinmap/kinmap/mapper"
)

// One epoch's combine gives the per-unit counts and sums of the plain
// nearest-centre rule, each row going to the codebook vector at the least
// squared Euclidean distance, ties to the lower unit, as the assignment
// step of Lloyd's k-means (S. P. Lloyd, "Least squares quantization in
// PCM", IEEE Trans. Inf. Theory 28(2), 1982) computes it, here by a direct
// loop over every row and unit.
func TestEpochCombine(t *testing.T) {
	const dim, shards, sites, perSite = 3, 5, 23, 11
	rng := rand.New(rand.NewPCG(1, 2))
	ctx := context.Background()
	dir := t.TempDir()
	r := &run{dir: dir} // on Prism
	var rows [][]float64
	for sh := range shards {
		var rs []siteResult
		for s := sh; s < sites; s += shards {
			res := siteResult{Site: fmt.Sprintf("s%03d", s)}
			for w := range perSite {
				v := []float64{rng.NormFloat64(), rng.NormFloat64() * 2, rng.Float64()}
				res.Windows = append(res.Windows, windowRec{Start: int64(w), End: int64(w + 1), Values: v})
				rows = append(rows, v)
			}
			rs = append(rs, res)
		}
		path := join(dir, windowsDir, fmt.Sprintf(shardName, sh))
		if err := writeGob(ctx, path, rs); err != nil {
			t.Fatal(err)
		}
		r.shards = append(r.shards, shard{path: path})
	}
	names := []string{"a", "b", "c"}
	identity := &features.Scaler{Method: "zscore", Names: names, Center: make([]float64, dim), Scale: []float64{1, 1, 1}, Weight: []float64{1, 1, 1}}
	m := &mapper.Map{Lattice: lattice.Lattice{Cols: 4, Rows: 3}, Dim: dim, Codebook: make([]float64, 12*dim)}
	for i := range m.Codebook {
		m.Codebook[i] = rng.NormFloat64()
	}

	acc, qe, err := r.epoch(ctx, m, scaledShard{Names: names, Scaler: identity}, 0)
	if err != nil {
		t.Fatal(err)
	}
	counts := make([]float64, m.Units())
	sums := make([]float64, m.Units()*dim)
	var qeSum float64
	for _, x := range rows {
		best, bestD := -1, math.Inf(1)
		for u := range m.Units() {
			d := 0.0
			for j, v := range x {
				d += (v - m.Codebook[u*dim+j]) * (v - m.Codebook[u*dim+j])
			}
			if d < bestD {
				best, bestD = u, d
			}
		}
		counts[best]++
		for j, v := range x {
			sums[best*dim+j] += v
		}
		qeSum += math.Sqrt(bestD)
	}
	if fmt.Sprint(acc.Counts) != fmt.Sprint(counts) {
		t.Errorf("counts %v, want %v", acc.Counts, counts)
	}
	if d := maxDiff(acc.Sums, sums); d > tol {
		t.Errorf("sums differ by %g", d)
	}
	if math.Abs(qe-qeSum) > tol {
		t.Errorf("quantization errors sum to %v, want %v", qe, qeSum)
	}
}

// A distributed runner adds inputs to partial accumulators on several
// workers and merges those in any order: every order gives the counts of a
// single accumulator, and its sums up to reassociation.
func TestAccumulateFnMergeOrder(t *testing.T) {
	const units, dim, parts = 6, 4, 7
	rng := rand.New(rand.NewPCG(3, 4))
	fn := &accumulateFn{Units: units, Dim: dim}
	whole := fn.CreateAccumulator()
	partial := make([]*mapper.Accumulator, parts)
	for p := range partial {
		partial[p] = fn.CreateAccumulator()
		for range 3 {
			in := mapper.NewAccumulator(units, dim)
			for range 5 {
				x := []float64{rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64()}
				u := rng.IntN(units)
				in.Add(x, u)
				whole.Add(x, u)
			}
			partial[p] = fn.AddInput(partial[p], in)
		}
	}
	for trial := range 5 {
		order := rng.Perm(parts)
		acc := fn.CreateAccumulator()
		for _, p := range order {
			c := &mapper.Accumulator{Units: units, Dim: dim, Counts: append([]float64(nil), partial[p].Counts...), Sums: append([]float64(nil), partial[p].Sums...)}
			acc = fn.MergeAccumulators(acc, c)
		}
		out := fn.ExtractOutput(acc)
		if fmt.Sprint(out.Counts) != fmt.Sprint(whole.Counts) {
			t.Errorf("order %v (trial %d): counts %v, want %v", order, trial, out.Counts, whole.Counts)
		}
		if d := maxDiff(out.Sums, whole.Sums); d > tol {
			t.Errorf("order %v (trial %d): sums differ by %g", order, trial, d)
		}
	}
}
