package mapper

import (
	"math"
	"slices"
	"sync"
	"testing"
	"time"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/internal/parallel"
	"github.com/kinmap/kinmap/scenarios"
)

// The shapes of the performance targets: 100,000 windows of 64 features on
// a 40 × 30 lattice.
const (
	benchN, benchD       = 100_000, 64
	benchCols, benchRows = 40, 30
)

// BenchmarkBatchEpoch times one batch epoch (winner search, accumulation
// and smoothing) against the bare matrix product of the same shapes, an
// N × D by D × units Dgemm in one call, in the same run, and reports their
// ratio (target: at most 1.3). It also times the same product in blocks of
// blockRows rows, as the epoch computes it, which isolates the epoch's
// own overhead from the cache effects of one 960 MB product. Ratios are
// given of wall time and of processor time, which other loads on a shared
// machine disturb less.
func BenchmarkBatchEpoch(b *testing.B) {
	x := noiseData(benchN, benchD, 1)
	m, cfg, err := InitMap(x, Config{Cols: benchCols, Rows: benchRows})
	if err != nil {
		b.Fatal(err)
	}
	units := m.Units()
	c := make([]float64, benchN*units)
	for i := range c {
		c[i] = 1 // fault the pages in before timing
	}
	raw := x.RawMatrix()
	w := blas64.General{Rows: units, Cols: benchD, Stride: benchD, Data: m.Codebook}
	var gemm, blocked, epoch, smooth time.Duration
	var cpuGemm, cpuBlocked, cpuEpoch time.Duration
	b.ResetTimer()
	for range b.N {
		t, ct := time.Now(), cpuTime()
		blas64.Gemm(blas.NoTrans, blas.Trans, 1, raw, w, 0, blas64.General{Rows: benchN, Cols: units, Stride: units, Data: c})
		gemm += time.Since(t)
		cpuGemm += cpuTime() - ct

		t, ct = time.Now(), cpuTime()
		scratch := func() []float64 { return make([]float64, blockRows*units) }
		parallel.For((benchN+blockRows-1)/blockRows, 0, scratch, func(cb []float64, blk int) {
			r0, r1 := blk*blockRows, min(benchN, (blk+1)*blockRows)
			xb := blas64.General{Rows: r1 - r0, Cols: benchD, Stride: raw.Stride, Data: raw.Data[r0*raw.Stride:]}
			blas64.Gemm(blas.NoTrans, blas.Trans, 1, xb, w, 0, blas64.General{Rows: r1 - r0, Cols: units, Stride: units, Data: cb})
		})
		blocked += time.Since(t)
		cpuBlocked += cpuTime() - ct

		t, ct = time.Now(), cpuTime()
		acc, _ := m.Accumulate(x, 0)
		t2 := time.Now()
		m.Smooth(acc, Sigma(cfg, 0))
		smooth += time.Since(t2)
		epoch += time.Since(t)
		cpuEpoch += cpuTime() - ct
	}
	b.ReportMetric(gemm.Seconds()/float64(b.N), "dgemm-s/op")
	b.ReportMetric(blocked.Seconds()/float64(b.N), "blocked-dgemm-s/op")
	b.ReportMetric(epoch.Seconds()/float64(b.N), "epoch-s/op")
	b.ReportMetric(smooth.Seconds()/float64(b.N), "smooth-s/op")
	b.ReportMetric(epoch.Seconds()/gemm.Seconds(), "epoch/dgemm")
	b.ReportMetric(epoch.Seconds()/blocked.Seconds(), "epoch/blocked-dgemm")
	if cpuGemm > 0 {
		b.ReportMetric(cpuEpoch.Seconds()/cpuGemm.Seconds(), "cpu-epoch/dgemm")
		b.ReportMetric(cpuEpoch.Seconds()/cpuBlocked.Seconds(), "cpu-epoch/blocked-dgemm")
	}
}

// lateMaps caches, for each kind of data, a map trained far enough for its
// late epochs to be measured.
var lateMaps sync.Map

type lateState struct {
	x     *mat.Dense
	m     *Map
	prev  []int
	sigma float64 // neighbourhood width of the last epoch
}

func lateMap(b *testing.B, kind string) *lateState {
	if v, ok := lateMaps.Load(kind); ok {
		return v.(*lateState)
	}
	var x *mat.Dense
	switch kind {
	case "clusters":
		x, _ = clusterData(benchN, benchD, 24, 10, 0.5, 2)
	case "manifold":
		x = manifoldData(benchN, benchD, 0.02, 3)
	case "noise":
		x = noiseData(benchN, benchD, 4)
	case "pumping":
		x = pumpingFeatures(b)
	}
	// Train all but the last epoch of an 8-epoch schedule.
	cfg := Config{Cols: benchCols, Rows: benchRows, Epochs: 8}
	m, cfg, err := InitMap(x, cfg)
	if err != nil {
		b.Fatal(err)
	}
	last := cfg.Epochs - 1
	sigma := Sigma(cfg, last)
	cfg.Epochs = last
	train(m, x, cfg)
	n, _ := x.Dims()
	st := &lateState{x: x, m: m, prev: make([]int, n), sigma: sigma}
	for i, a := range m.Assign(x, 0) {
		st.prev[i] = a.BMU
	}
	lateMaps.Store(kind, st)
	return st
}

// BenchmarkShortcutEpoch times a whole late epoch (winner search,
// accumulation, smoothing and the refresh of the codebook norms) with the
// shortcut search, including its unit-to-unit table, against the same
// epoch with the full search, from the same map. It checks that both find
// the same winners and the same smoothed codebook, and reports the ratio
// (target: at most 0.5 on structured data; no exact pruning can help on
// pure noise).
func BenchmarkShortcutEpoch(b *testing.B) {
	for _, kind := range []string{"clusters", "manifold", "pumping", "noise"} {
		b.Run(kind, func(b *testing.B) {
			st := lateMap(b, kind)
			n, _ := st.x.Dims()
			full := make([]Assignment, n)
			short := make([]Assignment, n)
			var tf, ts, cf, cs time.Duration
			var fallbacks, evals int
			b.ResetTimer()
			for range b.N {
				mf, ms := cloneMap(st.m), cloneMap(st.m)
				sf, ss := newSearcher(mf), newSearcher(ms)
				prev := slices.Clone(st.prev)

				t, ct := time.Now(), cpuTime()
				r := sf.run(st.x, runOptions{accumulate: true, out: full})
				mf.Smooth(r.acc, st.sigma)
				sf.refreshNorms()
				tf += time.Since(t)
				cf += cpuTime() - ct

				t, ct = time.Now(), cpuTime()
				ss.prepareShortcut(shortcutList(ss.units), 0)
				r = ss.run(st.x, runOptions{accumulate: true, out: short, prev: prev})
				ms.Smooth(r.acc, st.sigma)
				ss.refreshNorms()
				ts += time.Since(t)
				cs += cpuTime() - ct
				fallbacks += r.fallbacks
				evals += r.evals
				if !slices.Equal(full, short) || !slices.Equal(mf.Codebook, ms.Codebook) {
					b.Fatal("shortcut and full search disagree")
				}
			}
			b.ReportMetric(tf.Seconds()/float64(b.N), "full-s/op")
			b.ReportMetric(ts.Seconds()/float64(b.N), "shortcut-s/op")
			b.ReportMetric(ts.Seconds()/tf.Seconds(), "shortcut/full")
			if cf > 0 {
				b.ReportMetric(cs.Seconds()/cf.Seconds(), "cpu-shortcut/full")
			}
			b.ReportMetric(float64(fallbacks)/float64(b.N*n), "fallback-share")
			b.ReportMetric(float64(evals)/float64(b.N*n), "evals/row")
		})
	}
}

// pumpingFeatures returns the scaled default features of the daily windows
// of a pumping-station fleet (1,000 sites, 4 weeks): data with the structure
// kinmap meets, for the shortcut search.
func pumpingFeatures(b *testing.B) *mat.Dense {
	spec, err := scenarios.DefaultSpec("pumping")
	if err != nil {
		b.Fatal(err)
	}
	spec.Sites = 1000
	fleet, err := scenarios.Generate(spec)
	if err != nil {
		b.Fatal(err)
	}
	ds := &ingest.Dataset{}
	for _, ch := range fleet.Channels {
		ds.Channels = append(ds.Channels, ch.Name)
	}
	for _, s := range fleet.Sites {
		sd := &ingest.SiteData{ID: s.ID, Series: map[string]ingest.Series{}}
		for c, ch := range fleet.Channels {
			var ser ingest.Series
			for i, t := range s.Readings.Times {
				v := s.Readings.Values[c][i]
				if math.IsNaN(v) || (ser.Len() > 0 && ser.Times[ser.Len()-1] == t) {
					continue // a missing value, or a duplicated row
				}
				ser.Times = append(ser.Times, t)
				ser.Values = append(ser.Values, v)
			}
			sd.Series[ch.Name] = ser
		}
		ds.Sites = append(ds.Sites, sd)
	}
	t, err := features.Extract(ds, features.DefaultConfig())
	if err != nil {
		b.Fatal(err)
	}
	sc, err := features.FitScaler(t, "zscore", nil)
	if err != nil {
		b.Fatal(err)
	}
	x, err := sc.Transform(t)
	if err != nil {
		b.Fatal(err)
	}
	return x
}
