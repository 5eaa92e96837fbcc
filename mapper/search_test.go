package mapper

import (
	"math"
	"slices"
	"testing"

	"github.com/kinmap/kinmap/lattice"
	"gonum.org/v1/gonum/mat"
)

// randomMap returns a map of the lattice with codebook vectors drawn from
// the rows of x.
func randomMap(t testing.TB, x *mat.Dense, l lattice.Lattice, seed int64) *Map {
	t.Helper()
	m, _, err := InitMap(x, Config{Cols: l.Cols, Rows: l.Rows, Hex: l.Hex, Flat: l.Flat, Init: InitRandom, Seed: seed})
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// The matrix-product search agrees with a plain loop over every unit.
func TestAssignMatchesPlainLoop(t *testing.T) {
	for _, tc := range []struct {
		name string
		x    *mat.Dense
		l    lattice.Lattice
	}{
		{"noise", noiseData(700, 13, 1), lattice.Lattice{Cols: 9, Rows: 7}},
		{"offset", offsetData(noiseData(500, 5, 2), 1e4), lattice.Lattice{Cols: 6, Rows: 6, Hex: true}},
		{"one feature", uniformData(300, 1, 3), lattice.Lattice{Cols: 12, Rows: 1, Flat: true}},
		{"two units", uniformData(50, 3, 4), lattice.Lattice{Cols: 2, Rows: 1, Flat: true}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			m := randomMap(t, tc.x, tc.l, 5)
			for _, workers := range []int{1, 3} {
				got := m.Assign(tc.x, workers)
				n, _ := tc.x.Dims()
				for i := range n {
					want := bruteAssign(m, tc.x.RawRowView(i))
					if got[i].BMU != want.BMU || got[i].Second != want.Second || math.Abs(got[i].QE-want.QE) > 1e-9*(1+want.QE) {
						t.Fatalf("row %d: %+v, want %+v", i, got[i], want)
					}
				}
			}
		})
	}
}

// offsetData shifts every value by c, which makes the expanded distance
// lose digits to cancellation.
func offsetData(x *mat.Dense, c float64) *mat.Dense {
	n, d := x.Dims()
	out := mat.NewDense(n, d, nil)
	for i := range n {
		for j := range d {
			out.Set(i, j, x.At(i, j)+c)
		}
	}
	return out
}

// Exact ties go to the lower unit, for both the best and the second best.
func TestAssignTies(t *testing.T) {
	l := lattice.Lattice{Cols: 5, Rows: 1, Flat: true}
	m := &Map{Lattice: l, Dim: 2, Codebook: []float64{
		3, 3, // unit 0
		1, 0, // unit 1
		-1, 0, // unit 2: as far from the origin as unit 1
		1, 0, // unit 3: the same vector as unit 1
		0, 1, // unit 4
	}}
	x := mat.NewDense(2, 2, []float64{0, 0, 1, 0})
	got := m.Assign(x, 1)
	if got[0].BMU != 1 || got[0].Second != 2 || got[0].QE != 1 {
		t.Errorf("origin: %+v, want units 1 then 2 at 1", got[0])
	}
	if got[1].BMU != 1 || got[1].Second != 3 || got[1].QE != 0 {
		t.Errorf("(1, 0): %+v, want units 1 then 3 at 0", got[1])
	}
}

// The shortcut search finds exactly the winners of the full search, from
// good and from arbitrary starting units, on maps early and late in
// training.
func TestShortcutMatchesFullSearch(t *testing.T) {
	clusters, _ := clusterData(3000, 16, 6, 10, 0.4, 1)
	for _, tc := range []struct {
		name   string
		x      *mat.Dense
		epochs int
	}{
		{"clusters early", clusters, 1},
		{"clusters late", clusters, 12},
		{"manifold", manifoldData(3000, 16, 0.01, 2), 12},
		{"noise", noiseData(2000, 16, 3), 12},
	} {
		t.Run(tc.name, func(t *testing.T) {
			m, cfg, err := InitMap(tc.x, Config{Cols: 12, Rows: 10, Epochs: 15})
			if err != nil {
				t.Fatal(err)
			}
			cfg.Epochs = tc.epochs
			train(m, tc.x, cfg)
			full := m.Assign(tc.x, 2)
			n, _ := tc.x.Dims()
			rng := testRand(9)
			s := newSearcher(m)
			for _, list := range []int{2, 8, shortcutList(m.Units()), m.Units()} {
				s.prepareShortcut(list, 2)
				for _, start := range []string{"previous", "random"} {
					prev := make([]int, n)
					for i := range prev {
						prev[i] = full[i].BMU
						if start == "random" {
							prev[i] = rng.IntN(m.Units())
						}
					}
					out := make([]Assignment, n)
					r := s.run(tc.x, runOptions{workers: 2, out: out, prev: prev})
					if !slices.Equal(out, full) {
						t.Fatalf("list %d, %s start: winners differ from the full search", list, start)
					}
					if list == m.Units() && r.fallbacks != 0 {
						t.Errorf("list of every unit: %d fallbacks", r.fallbacks)
					}
				}
			}
		})
	}
}

// Rows exactly halfway between two units are ties that the shortcut and
// the bounded searches must settle as the full search does, towards the
// lower unit, from other units than the winners.
func TestSearchTies(t *testing.T) {
	l := lattice.Lattice{Cols: 4, Rows: 1, Flat: true}
	m := &Map{Lattice: l, Dim: 1, Codebook: []float64{0, 2, 4, 6}}
	x := mat.NewDense(4, 1, []float64{1, 3, 5, 3})
	full := m.Assign(x, 1)
	if full[0].BMU != 0 || full[1].BMU != 1 || full[2].BMU != 2 {
		t.Errorf("ties not to the lower unit: %+v", full)
	}
	s := newSearcher(m)
	s.prepareShortcut(2, 1)
	out := make([]Assignment, 4)
	s.run(x, runOptions{workers: 1, out: out, prev: []int{1, 3, 3, 2}})
	if !slices.Equal(out, full) {
		t.Errorf("shortcut %+v, full %+v", out, full)
	}
	s.nearLen = 0
	bd := newBounds(4, 4, m.Codebook)
	s.run(x, runOptions{workers: 1, bounds: bd, refill: true})
	copy(bd.best, []int32{3, 0, 0, 3})
	copy(bd.again, []int32{2, 3, 1, 0})
	s.run(x, runOptions{workers: 1, out: out, bounds: bd})
	if !slices.Equal(out, full) {
		t.Errorf("bounded %+v, full %+v", out, full)
	}
}

// Training with the bounded search gives the codebook and the errors of
// training with the shortcut and full searches, bit for bit, and the
// bounded passes of late epochs compute few of the distances.
func TestBoundedMatchesFullSearch(t *testing.T) {
	clusters, _ := clusterData(3000, 16, 6, 10, 0.4, 1)
	for _, tc := range []struct {
		name string
		x    *mat.Dense
	}{
		{"clusters", clusters},
		{"manifold", manifoldData(3000, 16, 0.01, 2)},
		{"noise", noiseData(2000, 16, 3)},
		{"offset", offsetData(noiseData(1500, 5, 4), 1e4)},
	} {
		t.Run(tc.name, func(t *testing.T) {
			m, cfg, err := InitMap(tc.x, Config{Cols: 12, Rows: 10, Epochs: 15, Workers: 2})
			if err != nil {
				t.Fatal(err)
			}
			var qes [2][]float64
			maps := [2]*Map{cloneMap(m), cloneMap(m)}
			for k, run := range []func(*Map, *mat.Dense, Config){trainBounded, trainShortcut} {
				c := cfg
				c.Progress = func(_ int, qe float64) { qes[k] = append(qes[k], qe) }
				run(maps[k], tc.x, c)
			}
			if !slices.Equal(maps[0].Codebook, maps[1].Codebook) || !slices.Equal(qes[0], qes[1]) {
				t.Fatalf("bounded and full searches train different maps")
			}

			// One more bounded pass on the trained map, after a refill on
			// the map an epoch before: the winners of the full search.
			n, _ := tc.x.Dims()
			prev := cloneMap(maps[0])
			acc, _ := prev.Accumulate(tc.x, 2)
			s := newSearcher(prev)
			bd := newBounds(n, prev.Units(), prev.Codebook)
			s.run(tc.x, runOptions{workers: 2, bounds: bd, refill: true})
			prev.Smooth(acc, Sigma(cfg, cfg.Epochs-1))
			s.refreshNorms()
			bd.track(prev.Codebook)
			out := make([]Assignment, n)
			r := s.run(tc.x, runOptions{workers: 2, out: out, bounds: bd})
			if !slices.Equal(out, prev.Assign(tc.x, 2)) {
				t.Fatalf("bounded pass: winners differ from the full search")
			}
			share := float64(r.evals) / float64(n*prev.Units())
			t.Logf("%s: a late bounded pass computes %.3f of the distances", tc.name, share)
			if tc.name == "clusters" && share > 0.25 {
				t.Errorf("clusters: a late bounded pass computes %.3f of the distances, want few", share)
			}
		})
	}
}

// Train gives the same codebook, bit for bit, for any number of workers.
func TestTrainDeterministic(t *testing.T) {
	x, _ := clusterData(2000, 6, 4, 8, 0.5, 4)
	var first []float64
	for _, workers := range []int{1, 2, 5} {
		m, _, err := Train(x, Config{Cols: 10, Rows: 8, Epochs: 8, Workers: workers})
		if err != nil {
			t.Fatal(err)
		}
		if first == nil {
			first = m.Codebook
		} else if !slices.Equal(first, m.Codebook) {
			t.Errorf("%d workers give another codebook", workers)
		}
	}
}

// The exported pieces of an epoch reproduce Train exactly, and merging the
// accumulators of shuffled shards in a random order reproduces it to
// rounding.
func TestEpochPiecesReproduceTrain(t *testing.T) {
	x, _ := clusterData(1500, 5, 3, 6, 0.6, 5)
	cfg := Config{Cols: 8, Rows: 6, Hex: true, Epochs: 10}
	want, _, err := Train(x, cfg)
	if err != nil {
		t.Fatal(err)
	}
	m, full, err := InitMap(x, cfg)
	if err != nil {
		t.Fatal(err)
	}
	sharded := cloneMap(m)
	n, _ := x.Dims()
	rng := testRand(3)
	for e := range full.Epochs {
		acc, _ := m.Accumulate(x, 2)
		m.Smooth(acc, Sigma(full, e))

		// Shards of uneven size in a shuffled row order, merged in a
		// random order, as a distributed runner may.
		perm := rng.Perm(n)
		var accs []*Accumulator
		for lo := 0; lo < n; {
			hi := min(n, lo+1+rng.IntN(400))
			part := mat.NewDense(hi-lo, m.Dim, nil)
			for i := lo; i < hi; i++ {
				part.SetRow(i-lo, x.RawRowView(perm[i]))
			}
			a, _ := sharded.Accumulate(part, 1)
			accs = append(accs, a)
			lo = hi
		}
		total := NewAccumulator(sharded.Units(), sharded.Dim)
		for _, i := range rng.Perm(len(accs)) {
			total.Merge(accs[i])
		}
		sharded.Smooth(total, Sigma(full, e))
	}
	if !slices.Equal(m.Codebook, want.Codebook) {
		t.Error("InitMap, Accumulate and Smooth do not reproduce Train")
	}
	for i, v := range sharded.Codebook {
		if math.Abs(v-want.Codebook[i]) > 1e-9 {
			t.Fatalf("sharded epochs: codebook value %d is %g, Train's %g", i, v, want.Codebook[i])
		}
	}
}

// Merging accumulators in any grouping gives the accumulator of all the
// windows: exactly for counts, to rounding for sums.
func TestAccumulatorMerge(t *testing.T) {
	x := noiseData(300, 4, 6)
	rng := testRand(1)
	units := make([]int, 300)
	whole := NewAccumulator(7, 4)
	for i := range units {
		units[i] = rng.IntN(7)
		whole.Add(x.RawRowView(i), units[i])
	}
	parts := []*Accumulator{NewAccumulator(7, 4), NewAccumulator(7, 4), NewAccumulator(7, 4)}
	for i, u := range units {
		parts[i%3].Add(x.RawRowView(i), u)
	}
	left := NewAccumulator(7, 4)
	left.Merge(parts[2])
	left.Merge(parts[0])
	left.Merge(parts[1])
	if !slices.Equal(left.Counts, whole.Counts) {
		t.Errorf("counts %v, want %v", left.Counts, whole.Counts)
	}
	for i, v := range left.Sums {
		if math.Abs(v-whole.Sums[i]) > 1e-12 {
			t.Errorf("sum %d is %g, want %g", i, v, whole.Sums[i])
		}
	}
	defer func() {
		if recover() == nil {
			t.Error("merging mismatched shapes did not panic")
		}
	}()
	left.Merge(NewAccumulator(7, 3))
}

// The neighbourhood weights tabulated by lattice offset equal the weights
// computed pair by pair.
func TestNeighbourhoodTable(t *testing.T) {
	for _, l := range []lattice.Lattice{{Cols: 7, Rows: 5}, {Cols: 6, Rows: 4, Hex: true}, {Cols: 5, Rows: 3, Hex: true, Flat: true}, {Cols: 6, Rows: 1, Flat: true}} {
		for _, sigma := range []float64{0, 0.3, 2} {
			h := neighbourhood(l, sigma)
			row := make([]float64, l.Units())
			for j := range l.Units() {
				neighbourhoodRow(l, sigma, j, row)
				for i, v := range row {
					if want := math.Exp(-l.Dist2(j, i) / (2 * sigma * sigma)); sigma > 0 && math.Abs(v-want) > 1e-15 {
						t.Fatalf("%+v σ %g: weight %d–%d is %g, want %g", l, sigma, j, i, v, want)
					}
					if h[j*l.Units()+i] != v {
						t.Fatalf("%+v σ %g: table gives %g for %d–%d, pair by pair %g", l, sigma, h[j*l.Units()+i], j, i, v)
					}
				}
			}
		}
	}
}
