package mapper

import (
	"fmt"
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/kinmap/kinmap/lattice"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"
)

// monotone reports whether the values strictly increase or strictly
// decrease.
func monotone(v []float64) bool {
	up, down := true, true
	for i := 1; i < len(v); i++ {
		up = up && v[i] > v[i-1]
		down = down && v[i] < v[i-1]
	}
	return up || down
}

// Kohonen's ordering property: a one-dimensional chain trained on uniform
// scalar data ends with its weights in monotone order, from any start
// (T. Kohonen, Self-Organizing Maps, Springer, 3rd ed. 2001, Sect. 3.5.1,
// the one-dimensional case; section number from memory). The random
// initialisation starts the chain out of order.
func TestChainOrders(t *testing.T) {
	x := uniformData(1000, 1, 11)
	for _, rule := range []string{RuleBatch, RuleOnline} {
		for seed := range int64(3) {
			cfg := Config{Cols: 20, Rows: 1, Flat: true, Init: InitRandom, Seed: seed, Rule: rule, Epochs: 30, Sigma0: 5, SigmaEnd: 0.7}
			start, m := initAndTrain(t, x, cfg)
			if monotone(start.Codebook) {
				t.Errorf("%s, seed %d: the initial chain is already ordered; the test shows nothing", rule, seed)
			}
			if !monotone(m.Codebook) {
				t.Errorf("%s, seed %d: chain not ordered: %.3f", rule, seed, m.Codebook)
			}
		}
	}
}

// Data on the surface of a torus fit a toroidal lattice without the seams a
// plane must cut into them, so the topographic error is lower on the
// torus (a fact of the trade, common practice, no source).
func TestTorusDataPreferTorus(t *testing.T) {
	x := torusData(3000, 12)
	te := map[bool]float64{}
	for _, flat := range []bool{false, true} {
		m, _, err := Train(x, Config{Cols: 16, Rows: 16, Flat: flat, Epochs: 20, Sigma0: 4, SigmaEnd: 1})
		if err != nil {
			t.Fatal(err)
		}
		te[flat] = m.Quality(m.Assign(x, 0)).TE
	}
	if !(te[false] < te[true]) {
		t.Errorf("topographic error %.3f on the torus, %.3f on the plane", te[false], te[true])
	}
}

// lloydStep is one step of Lloyd's algorithm (S. P. Lloyd, "Least squares
// quantization in PCM", IEEE Trans. Inf. Theory 28(2), 1982), written
// plainly: every point goes to its nearest centre, every centre moves to
// the mean of its points, a centre without points stays.
func lloydStep(x *mat.Dense, centres [][]float64) [][]float64 {
	n, d := x.Dims()
	sums := make([][]float64, len(centres))
	counts := make([]int, len(centres))
	for c := range sums {
		sums[c] = make([]float64, d)
	}
	for i := range n {
		best, bestD := 0, math.Inf(1)
		for c, ctr := range centres {
			var dd float64
			for j := range d {
				dd += (x.At(i, j) - ctr[j]) * (x.At(i, j) - ctr[j])
			}
			if dd < bestD {
				best, bestD = c, dd
			}
		}
		counts[best]++
		for j := range d {
			sums[best][j] += x.At(i, j)
		}
	}
	out := make([][]float64, len(centres))
	for c := range centres {
		out[c] = slices.Clone(centres[c])
		if counts[c] > 0 {
			for j := range d {
				out[c][j] = sums[c][j] / float64(counts[c])
			}
		}
	}
	return out
}

// As σ → 0 the neighbourhood vanishes and one batch step is one Lloyd
// step.
func TestTinySigmaIsLloydStep(t *testing.T) {
	x, _ := clusterData(800, 3, 5, 5, 0.8, 13)
	for _, sigma := range []float64{1e-3, 0} {
		m := randomMap(t, x, lattice.Lattice{Cols: 4, Rows: 3, Flat: true}, 2)
		copy(m.Vector(5), []float64{1e3, 1e3, 1e3}) // wins nothing: must stay
		var centres [][]float64
		for u := range m.Units() {
			centres = append(centres, slices.Clone(m.Vector(u)))
		}
		want := lloydStep(x, centres)
		acc, _ := m.Accumulate(x, 2)
		m.Smooth(acc, sigma)
		for u := range m.Units() {
			for j, v := range m.Vector(u) {
				if math.Abs(v-want[u][j]) > 1e-12*(1+math.Abs(want[u][j])) {
					t.Fatalf("σ = %g: unit %d feature %d is %g, Lloyd's step gives %g", sigma, u, j, v, want[u][j])
				}
			}
		}
	}
}

// Two well-separated clusters leave a ridge of high U-matrix values on the
// units between their areas (A. Ultsch and H. P. Siemon, "Kohonen's self
// organizing feature maps for exploratory data analysis", INNC 1990; from
// memory).
func TestUMatrixRidge(t *testing.T) {
	n, d := 1000, 5
	x := mat.NewDense(n, d, nil)
	rng := testRand(14)
	for i := range n {
		c := float64(i % 2 * 10)
		for j := range d {
			x.Set(i, j, c+rng.NormFloat64()*0.5)
		}
	}
	m, _, err := Train(x, Config{Cols: 12, Rows: 10, Epochs: 15})
	if err != nil {
		t.Fatal(err)
	}
	// A unit's side is the cluster centre its vector is nearer to; border
	// units have a neighbour on the other side.
	side := make([]bool, m.Units())
	for u := range side {
		var s float64
		for _, v := range m.Vector(u) {
			s += v
		}
		side[u] = s/float64(d) > 5
	}
	um := m.UMatrix()
	var border, inner []float64
	for u := range side {
		isBorder := false
		for _, v := range m.Lattice.Neighbours(u) {
			isBorder = isBorder || side[v] != side[u]
		}
		if isBorder {
			border = append(border, um[u])
		} else {
			inner = append(inner, um[u])
		}
	}
	if len(border) == 0 || len(inner) == 0 {
		t.Fatalf("%d border and %d inner units", len(border), len(inner))
	}
	if mb, mi := stat.Mean(border, nil), stat.Mean(inner, nil); !(mb > 3*mi) {
		t.Errorf("mean U-matrix %.3f on the border, %.3f inside: no ridge", mb, mi)
	}
}

// On a map larger than the data, a small initial neighbourhood leaves the
// winning units in more separate pieces (common practice, no source):
// 400 windows on 500 units, the mean number of connected pieces of winning
// units over three data sets.
func TestSmallSigmaFragments(t *testing.T) {
	pieces := func(sigma0 float64) float64 {
		var total int
		for seed := range uint64(3) {
			x := uniformData(400, 3, 20+seed)
			m, _, err := Train(x, Config{Cols: 25, Rows: 20, Epochs: 20, Sigma0: sigma0, SigmaEnd: 0.5})
			if err != nil {
				t.Fatal(err)
			}
			won := make([]bool, m.Units())
			for u, h := range m.hits(m.Assign(x, 0)) {
				won[u] = h > 0
			}
			total += components(m.Lattice, won)
		}
		return float64(total) / 3
	}
	if wide, narrow := pieces(6), pieces(0.5); !(narrow > wide) {
		t.Errorf("σ0 = 0.5 gives %.1f pieces of winning units, σ0 = 6 gives %.1f", narrow, wide)
	}
}

// More units than windows leave most units unused, and Quality says so.
func TestUnusedWarning(t *testing.T) {
	x := uniformData(150, 2, 15)
	m, _, err := Train(x, Config{Cols: 20, Rows: 20, Epochs: 5})
	if err != nil {
		t.Fatal(err)
	}
	q := m.Quality(m.Assign(x, 0))
	if q.Unused < 1-150.0/400 || len(q.Warnings) != 1 || !strings.Contains(q.Warnings[0], "smaller grid") || !strings.Contains(q.Warnings[0], "Sigma0") {
		t.Errorf("unused share %.2f, warnings %q", q.Unused, q.Warnings)
	}
	small, _, err := Train(x, Config{Cols: 5, Rows: 4, Epochs: 5})
	if err != nil {
		t.Fatal(err)
	}
	if q := small.Quality(small.Assign(x, 0)); len(q.Warnings) != 0 {
		t.Errorf("a small map warns: %q", q.Warnings)
	}
}

func TestQualityHonoursWrap(t *testing.T) {
	asg := []Assignment{
		{BMU: 0, Second: 4, QE: 1},  // across the left–right seam
		{BMU: 0, Second: 20, QE: 3}, // across the top–bottom seam
		{BMU: 0, Second: 6, QE: 2},  // diagonal: not a neighbour
	}
	for _, tc := range []struct {
		flat   bool
		te     float64
		unused float64
	}{
		{false, 1.0 / 3, 24.0 / 25},
		{true, 1, 24.0 / 25},
	} {
		m := &Map{Lattice: lattice.Lattice{Cols: 5, Rows: 5, Flat: tc.flat}, Dim: 1, Codebook: make([]float64, 25)}
		q := m.Quality(asg)
		if q.QE != 2 || math.Abs(q.TE-tc.te) > 1e-15 || math.Abs(q.Unused-tc.unused) > 1e-15 {
			t.Errorf("flat %v: %+v, want QE 2, TE %g, unused %g", tc.flat, q, tc.te, tc.unused)
		}
	}
}

// The PCA initialisation lies on the plane of the first two principal
// axes, reaching ±2 standard deviations; the axes come from gonum's
// stat.PC as an independent reference.
func TestPCAInit(t *testing.T) {
	n := 2000
	x := mat.NewDense(n, 3, nil)
	rng := testRand(16)
	for i := range n {
		a, b, c := 3*rng.NormFloat64(), rng.NormFloat64(), 0.1*rng.NormFloat64()
		x.SetRow(i, []float64{a + b, a - b, c + 5})
	}
	m, cfg, err := InitMap(x, Config{Cols: 9, Rows: 5, Flat: true})
	if err != nil {
		t.Fatal(err)
	}
	var pc stat.PC
	if !pc.PrincipalComponents(x, nil) {
		t.Fatal("stat.PC failed")
	}
	var vecs mat.Dense
	pc.VectorsTo(&vecs)
	vars := pc.VarsTo(nil)
	mean := make([]float64, 3)
	for j := range mean {
		mean[j] = stat.Mean(mat.Col(nil, j, x), nil)
	}
	// The corner units sit at mean ± 2·sd₁·v₁ ± 2·sd₂·v₂, signs up to the
	// orientation of the axes.
	corners := []int{m.Lattice.Unit(0, 0), m.Lattice.Unit(8, 0), m.Lattice.Unit(0, 4), m.Lattice.Unit(8, 4)}
	for _, u := range corners {
		w := m.Vector(u)
		var coef [2]float64
		for k := range coef {
			for j := range w {
				coef[k] += (w[j] - mean[j]) * vecs.At(j, k)
			}
			coef[k] /= 2 * math.Sqrt(vars[k])
		}
		var off float64 // distance off the principal plane
		for j := range w {
			r := w[j] - mean[j] - 2*math.Sqrt(vars[0])*coef[0]*vecs.At(j, 0) - 2*math.Sqrt(vars[1])*coef[1]*vecs.At(j, 1)
			off += r * r
		}
		if math.Abs(math.Abs(coef[0])-1) > 1e-9 || math.Abs(math.Abs(coef[1])-1) > 1e-9 || off > 1e-18 {
			t.Errorf("corner %d at %.6f sd along the axes, %.3g off the plane", u, coef, math.Sqrt(off))
		}
	}
	// The grid follows the spread: sd₁/sd₂ = 3 along the axes.
	if c, r := defaultGrid(n, math.Sqrt(vars[0]), math.Sqrt(vars[1]), false); cfg.Cols != 9 || c <= 2*r {
		t.Errorf("default grid %dx%d for a spread ratio near 3", c, r)
	}
}

// The default grid has about 5·√N units (common practice, no source),
// stretched like the data.
func TestDefaultGrid(t *testing.T) {
	for _, tc := range []struct {
		n        int
		sv1, sv2 float64
		hex      bool
	}{
		{10_000, 2, 1, false},
		{10_000, 2, 1, true},
		{100_000, 1, 1, false},
		{100_000, 5, 1, true},
		{40_000, 1, 3, false},
	} {
		cols, rows := defaultGrid(tc.n, tc.sv1, tc.sv2, tc.hex)
		units := 5 * math.Sqrt(float64(tc.n))
		ratio := math.Max(tc.sv1, tc.sv2) / math.Min(tc.sv1, tc.sv2)
		planar := float64(cols) / float64(rows)
		if tc.hex {
			planar /= lattice.RowPitch
		}
		if math.Abs(float64(cols*rows)/units-1) > 0.1 || math.Abs(planar/ratio-1) > 0.15 {
			t.Errorf("%+v: %dx%d (%d units, planar ratio %.2f), want about %.0f units, ratio %.2f", tc, cols, rows, cols*rows, planar, units, ratio)
		}
		if tc.hex && rows%2 != 0 {
			t.Errorf("%+v: %d rows on a hexagonal lattice", tc, rows)
		}
		if err := (lattice.Lattice{Cols: cols, Rows: rows, Hex: tc.hex}).Validate(); err != nil {
			t.Errorf("%+v: %v", tc, err)
		}
	}
	for _, tc := range [][2]float64{{1, 1}, {1, 0}, {0, 0}} {
		if c, r := defaultGrid(3, tc[0], tc[1], true); c < minSide || r < minSide || r%2 != 0 {
			t.Errorf("3 windows, singular values %v: %dx%d", tc, c, r)
		}
	}
	// The default grid stays within lattice.MaxUnits for any data size.
	for _, n := range []int{1, 1000, 1e6, 1e9} {
		for _, ratio := range []float64{1, 50, 1e6} {
			c, r := defaultGrid(n, ratio, 1, true)
			if c*r > lattice.MaxUnits {
				t.Errorf("defaultGrid(%d, ratio %g) = %dx%d, beyond %d units", n, ratio, c, r, lattice.MaxUnits)
			}
		}
	}
}

func TestConfigRefused(t *testing.T) {
	x := uniformData(50, 2, 1)
	for _, tc := range []struct {
		cfg  Config
		data *mat.Dense
		want string
	}{
		{Config{Eta0: 1.5}, x, "Eta0 must lie in (0, 1]"},
		{Config{Eta0: -0.1}, x, "Eta0 must lie in (0, 1]"},
		{Config{Eta0: 0.1, EtaEnd: 0.2}, x, "EtaEnd"},
		{Config{Sigma0: -1}, x, "Sigma0 must be a positive number"},
		{Config{Sigma0: math.NaN()}, x, "Sigma0 must be a positive number"},
		{Config{Sigma0: 1, SigmaEnd: 2}, x, "must shrink"},
		{Config{Cols: 6, Rows: 5, Hex: true}, x, "even number of rows"},
		{Config{Cols: 6}, x, "at least 1"},
		{Config{Rule: "gradient"}, x, `unknown training rule "gradient"`},
		{Config{Init: "zeros"}, x, `unknown initialisation "zeros"`},
		{Config{Epochs: -2}, x, "epochs must be at least 1"},
		{Config{Cols: 4, Rows: 4, Regimes: 17}, x, "17 regimes"},
		{Config{Workers: -1}, x, "workers"},
		{Config{}, uniformData(1, 2, 1), "at least 2 windows, got 1"},
		{Config{}, mat.NewDense(3, 1, []float64{1, math.NaN(), 2}), "window 1, feature 0: NaN is not a finite number"},
	} {
		_, _, err := Train(tc.data, tc.cfg)
		if err == nil || !strings.Contains(err.Error(), tc.want) || !strings.HasPrefix(err.Error(), "mapper: ") {
			t.Errorf("%+v: error %v, want one saying %q", tc.cfg, err, tc.want)
		}
	}
}

func TestProgressAndSchedule(t *testing.T) {
	x, _ := clusterData(600, 3, 3, 6, 0.5, 17)
	for _, rule := range []string{RuleBatch, RuleOnline} {
		var epochs []int
		var qes []float64
		cfg := Config{Cols: 6, Rows: 6, Rule: rule, Epochs: 6, Progress: func(e int, qe float64) {
			epochs = append(epochs, e)
			qes = append(qes, qe)
		}}
		if _, _, err := Train(x, cfg); err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(epochs, []int{0, 1, 2, 3, 4, 5}) || !(qes[5] < qes[0]) {
			t.Errorf("%s: progress at epochs %v with errors %.3f", rule, epochs, qes)
		}
	}
	cfg := Config{Epochs: 5, Sigma0: 8, SigmaEnd: 0.5}
	for e, want := range []float64{8, 4, 2, 1, 0.5} {
		if got := Sigma(cfg, e); math.Abs(got-want) > 1e-12 {
			t.Errorf("Sigma(epoch %d) = %g, want %g", e, got, want)
		}
	}
}

func TestOnlineSeeded(t *testing.T) {
	x := uniformData(400, 3, 18)
	train := func(seed int64) []float64 {
		m, _, err := Train(x, Config{Cols: 5, Rows: 4, Rule: RuleOnline, Epochs: 3, Seed: seed})
		if err != nil {
			t.Fatal(err)
		}
		return m.Codebook
	}
	if a, b := train(1), train(1); !slices.Equal(a, b) {
		t.Error("the same seed gives another map")
	}
	if a, b := train(1), train(2); slices.Equal(a, b) {
		t.Error("another seed gives the same map")
	}
}

// onlineReference runs the online rule written plainly on a copy of the
// codebook of m: for the t-th sample x (t = 0 … T−1, T = Epochs·N, the
// samples of each epoch in the order of the package's seeded generator,
// which is the implementation's choice), the winner c by a plain loop and
// every unit moving as
//
//	w_j ← w_j + η(t)·exp(−d_cj² / 2σ(t)²)·(x − w_j)
//
// (T. Kohonen, Self-Organizing Maps, Springer, 3rd ed. 2001, the basic SOM
// algorithm with a Gaussian neighbourhood; from memory), with d_cj from
// lattice.Dist2 and the rates decaying exponentially from their start a₀ to
// their end a₁ as a(t) = a₀·(a₁/a₀)^(t/(T−1)) (H. Ritter, T. Martinetz and
// K. Schulten, Neural Computation and Self-Organizing Maps,
// Addison-Wesley 1992, ε(t) = ε_i(ε_f/ε_i)^(t/t_max); from memory).
func onlineReference(m *Map, x *mat.Dense, cfg Config) *Map {
	out := cloneMap(m)
	n, _ := x.Dims()
	total := float64(cfg.Epochs*n - 1)
	rng := newRand(cfg.Seed)
	t := 0
	for range cfg.Epochs {
		for _, i := range rng.Perm(n) {
			xi := x.RawRowView(i)
			eta := cfg.Eta0 * math.Pow(cfg.EtaEnd/cfg.Eta0, float64(t)/total)
			sigma := cfg.Sigma0 * math.Pow(cfg.SigmaEnd/cfg.Sigma0, float64(t)/total)
			t++
			c := bruteAssign(out, xi).BMU
			for j := range out.Units() {
				f := eta * math.Exp(-out.Lattice.Dist2(c, j)/(2*sigma*sigma))
				w := out.Vector(j)
				for k, v := range xi {
					w[k] += f * (v - w[k])
				}
			}
		}
	}
	return out
}

// The online rule, with its per-sample exponential decay of η and σ, is
// the plain loop of onlineReference.
func TestOnlineMatchesReference(t *testing.T) {
	x := uniformData(150, 3, 32)
	for _, cfg := range []Config{
		{Cols: 5, Rows: 4, Hex: true, Epochs: 2, Sigma0: 2, SigmaEnd: 0.5, Eta0: 0.5, EtaEnd: 0.01, Seed: 4},
		{Cols: 6, Rows: 3, Flat: true, Epochs: 3, Sigma0: 1.5, SigmaEnd: 0.3, Eta0: 0.9, EtaEnd: 0.05, Seed: 5},
	} {
		cfg.Rule, cfg.Init = RuleOnline, InitRandom
		start, m := initAndTrain(t, x, cfg)
		want := onlineReference(start, x, cfg)
		if d := maxAbsDiff(m.Codebook, want.Codebook); !(d < 1e-9) {
			t.Errorf("%+v: the codebook is %g from the plain online rule", cfg.Lattice(), d)
		}
		if d := maxAbsDiff(m.Codebook, start.Codebook); !(d > 0.01) {
			t.Errorf("%+v: training moved the codebook by %g only", cfg.Lattice(), d)
		}
	}
}

// maxAbsDiff is the largest absolute difference between two equally long
// vectors.
func maxAbsDiff(a, b []float64) float64 {
	var d float64
	for i := range a {
		d = math.Max(d, math.Abs(a[i]-b[i]))
	}
	return d
}

// The random initialisation draws distinct data rows, the same for the
// same seed and others for another seed.
func TestRandomInitSeeded(t *testing.T) {
	const n = 200
	x := uniformData(n, 3, 33)
	draw := func(seed int64) *Map {
		m, _, err := InitMap(x, Config{Cols: 6, Rows: 5, Init: InitRandom, Seed: seed})
		if err != nil {
			t.Fatal(err)
		}
		return m
	}
	a := draw(1)
	if b := draw(1); !slices.Equal(a.Codebook, b.Codebook) {
		t.Error("the same seed gives another initial map")
	}
	if b := draw(2); slices.Equal(a.Codebook, b.Codebook) {
		t.Error("another seed gives the same initial map")
	}
	seen := map[int]bool{}
	for u := range a.Units() {
		row := -1
		for i := range n {
			if slices.Equal(a.Vector(u), x.RawRowView(i)) {
				row = i
			}
		}
		if row < 0 || seen[row] {
			t.Fatalf("unit %d holds row %d, not a data row drawn once", u, row)
		}
		seen[row] = true
	}
}

// With no grid given, InitMap sizes it from the data's own singular values:
// about 5·√N units (common practice, no source), in the aspect of the two
// leading singular values. The data are built with singular values in the
// ratio 3:1: the rows 3·cos θ_i·v₁ + sin θ_i·v₂ + c, θ_i = 2πi/N, have
// orthogonal centred columns cos θ and sin θ of equal norm √(N/2) along the
// orthonormal v₁ and v₂, so the centred data are [cos θ  sin θ]·diag(3, 1)·
// [v₁ v₂]ᵀ, an SVD with singular values 3√(N/2) and √(N/2). The sides are
// whole numbers: rows within half a unit of the ideal (a unit and a half on
// a hexagonal lattice, which needs an even number) and cols within half a
// unit of the units over rows.
func TestInitMapDefaultGrid(t *testing.T) {
	const n = 20_000
	v1, v2, c := []float64{2. / 3, 2. / 3, 1. / 3}, []float64{2. / 3, -1. / 3, -2. / 3}, []float64{5, -1, 2}
	x := mat.NewDense(n, 3, nil)
	for i := range n {
		th := 2 * math.Pi * float64(i) / n
		for j := range 3 {
			x.Set(i, j, 3*math.Cos(th)*v1[j]+math.Sin(th)*v2[j]+c[j])
		}
	}
	units := 5 * math.Sqrt(n)
	for _, tc := range []struct {
		hex  bool
		init string
	}{{false, InitPCA}, {true, InitPCA}, {false, InitRandom}} {
		m, cfg, err := InitMap(x, Config{Hex: tc.hex, Init: tc.init})
		if err != nil {
			t.Fatal(err)
		}
		pitch, slack := 1.0, 0.5
		if tc.hex {
			pitch, slack = math.Sqrt(3)/2, 1.5 // rows √3/2 apart
		}
		ideal := math.Sqrt(units / (3 * pitch)) // rows·pitch·3 = cols and cols·rows = units
		cols, rows := float64(cfg.Cols), float64(cfg.Rows)
		if math.Abs(rows-ideal) > slack || math.Abs(cols-units/rows) > 0.5 || m.Lattice != cfg.Lattice() {
			t.Errorf("%+v: grid %dx%d (%d units, planar ratio %.2f), want about %.0f units in ratio 3 (%.2f rows)",
				tc, cfg.Cols, cfg.Rows, cfg.Cols*cfg.Rows, cols/(rows*pitch), units, ideal)
		}
	}
}

func TestTrainFrom(t *testing.T) {
	x, _ := clusterData(1000, 4, 3, 6, 0.5, 19)
	m, _, err := Train(x, Config{Cols: 8, Rows: 6, Epochs: 10})
	if err != nil {
		t.Fatal(err)
	}
	before := slices.Clone(m.Codebook)
	next, _, err := TrainFrom(m, offsetData(x, 0.01), Config{Epochs: 3})
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(m.Codebook, before) {
		t.Error("TrainFrom changed its input map")
	}
	if next.Lattice != m.Lattice || slices.Equal(next.Codebook, m.Codebook) {
		t.Error("TrainFrom did not train on the same lattice")
	}
	// A small neighbourhood keeps the layout: the units stay where they were.
	var moved, spread float64
	for u := range m.Units() {
		moved += math.Sqrt(sqdist(m.Vector(u), next.Vector(u)))
	}
	for _, u := range []int{0, 10, 20} {
		spread += math.Sqrt(sqdist(m.Vector(u), m.Vector(u+20)))
	}
	if moved/float64(m.Units()) > spread/3/4 {
		t.Errorf("units moved %.3f on average; units 20 apart are %.3f apart", moved/float64(m.Units()), spread/3)
	}
	if _, _, err := TrainFrom(m, x, Config{Cols: 9, Rows: 6}); err == nil || !strings.Contains(err.Error(), "grid 9x6 asked of a 8x6 map") {
		t.Errorf("grid mismatch: %v", err)
	}
	if _, _, err := TrainFrom(m, uniformData(10, 3, 1), Config{}); err == nil || !strings.Contains(err.Error(), "3 features") {
		t.Errorf("feature mismatch: %v", err)
	}
}

func ExampleTrain() {
	// A chain of 10 units trained on 500 evenly spread values in [0, 1]
	// orders itself, so the two ends of the data land on the two ends of
	// the chain.
	x := mat.NewDense(500, 1, nil)
	for i := range 500 {
		x.Set(i, 0, float64(i)/499)
	}
	m, _, err := Train(x, Config{Cols: 10, Rows: 1, Flat: true, Epochs: 20, Sigma0: 3, SigmaEnd: 0.5})
	if err != nil {
		panic(err)
	}
	asg := m.Assign(mat.NewDense(3, 1, []float64{0, 0.5, 1}), 0)
	fmt.Println("units:", m.Units())
	fmt.Println("0 lands on unit", asg[0].BMU, "and 1 on unit", asg[2].BMU)
	// Output:
	// units: 10
	// 0 lands on unit 0 and 1 on unit 9
}

// 10,000 windows call for about 5·√10,000 = 500 units; a spread twice as
// wide along the first axis gives rows = √(500/2) ≈ 16 and cols = 500/16 ≈ 31.
func Example_defaultGrid() {
	cols, rows := defaultGrid(10_000, 2, 1, false)
	fmt.Println(cols, rows)
	// Output: 31 16
}
