package model

import (
	"bytes"
	"crypto/sha256"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/internal/tooltest"
	"github.com/kinmap/kinmap/mapper"
	"gonum.org/v1/gonum/mat"
)

var day0 = time.Date(2025, 3, 1, 0, 0, 0, 0, time.UTC)

// clusters returns n windows of d features around k centres spread
// sd·spread apart, each window a site of its own, as a scaled matrix.
func clusters(n, d, k int, spread float64, seed uint64) *mat.Dense {
	rng := rand.New(rand.NewPCG(seed, 3))
	centres := make([]float64, k*d)
	for i := range centres {
		centres[i] = spread * rng.NormFloat64()
	}
	x := mat.NewDense(n, d, nil)
	for i := range n {
		c := rng.IntN(k)
		for j := range d {
			x.Set(i, j, centres[c*d+j]+rng.NormFloat64())
		}
	}
	return x
}

// table returns a feature table of the rows of x, each window a site of
// its own, with the feature names names.
func table(x *mat.Dense, names []string, fc features.Config) *features.Table {
	n, _ := x.Dims()
	t := &features.Table{Names: names, Config: fc, Windows: make([]features.Window, n)}
	for i := range t.Windows {
		t.Windows[i] = features.Window{Site: fmt.Sprintf("s%04d", i), Start: day0, End: day0.AddDate(0, 0, 1), Scaled: x.RawRowView(i)}
	}
	return t
}

var testNames = []string{"flow.mean", "flow.p95", "vibration.mean", "vibration.p95"}

// fitted returns a small trained model, its scaled windows and its table.
func fitted(t *testing.T) (*Model, *mat.Dense, *features.Table) {
	t.Helper()
	x := clusters(600, 4, 3, 6, 31)
	tab := table(x, append(slices.Clone(testNames), "pressure.max"),
		features.Config{Window: 24 * time.Hour, Stride: 6 * time.Hour, TZ: "Europe/Oslo", MinCoverage: 0.6, Features: "basic"})
	// Awkward floats must come back bit for bit.
	sc := &features.Scaler{
		Method:  "zscore",
		Names:   testNames,
		Center:  []float64{0.1, math.Copysign(0, -1), 1e-300, math.MaxFloat64},
		Scale:   []float64{math.SmallestNonzeroFloat64, 1.0 / 3, math.Pi, 2.5e-8},
		Weight:  []float64{1, 1, 0.5, 2},
		Dropped: []string{"pressure.max"},
	}
	mdl, err := Train(tab, x, sc, mapper.Config{Cols: 8, Rows: 6, Epochs: 6, Regimes: 3})
	if err != nil {
		t.Fatal(err)
	}
	return mdl, x, tab
}

// Train returns the model complete: the feature schema and settings of
// the table, the normalisation, the regimes, a lineage, and the windows
// placed where the map assigns them.
func TestTrain(t *testing.T) {
	mdl, x, tab := fitted(t)
	u := mdl.Map.Units()
	if len(mdl.Regimes) != 3 || len(mdl.UnitRegime) != u || mdl.Windows != 600 || len(mdl.QEQuantiles) != 1001 {
		t.Fatalf("%d regimes, %d unit regimes, %d windows, %d quantiles", len(mdl.Regimes), len(mdl.UnitRegime), mdl.Windows, len(mdl.QEQuantiles))
	}
	for _, r := range mdl.Regimes {
		for _, un := range r.Units {
			if mdl.UnitRegime[un] != r.ID {
				t.Errorf("unit %d of regime %d is recorded in regime %d", un, r.ID, mdl.UnitRegime[un])
			}
		}
	}
	if mdl.Training.Epochs != 6 || mdl.Training.Rule != mapper.RuleBatch || mdl.Training.Sigma0 == 0 {
		t.Errorf("training settings not complete: %+v", mdl.Training)
	}
	if !slices.Equal(mdl.FeatureNames, tab.Names) || mdl.FeatureConfig != tab.Config || mdl.Scaler == nil || mdl.Lineage == "" {
		t.Errorf("model not complete: names %v, config %+v, scaler %v, lineage %q", mdl.FeatureNames, mdl.FeatureConfig, mdl.Scaler, mdl.Lineage)
	}
	// Assigning the training windows to the model read back gives exactly
	// where training placed them.
	var buf bytes.Buffer
	if err := mdl.Write(&buf); err != nil {
		t.Fatal(err)
	}
	back, err := Read(&buf)
	if err != nil {
		t.Fatal(err)
	}
	for i, a := range back.Map.Assign(x, 1) {
		if w := tab.Windows[i]; a.BMU != w.Unit || a.Second != w.Second || a.QE != w.QE {
			t.Fatalf("window %d placed at %d, %d, %g; the model read back assigns it %+v", i, w.Unit, w.Second, w.QE, a)
		}
	}
	wrong := &features.Scaler{Names: []string{"a"}}
	if _, err := Train(tab, x, wrong, mapper.Config{}); err == nil || !strings.Contains(err.Error(), "1 feature names for 4 columns") {
		t.Errorf("wrong names: %v", err)
	}
}

func TestModelRoundTrip(t *testing.T) {
	mdl, _, _ := fitted(t)
	var buf bytes.Buffer
	if err := mdl.Write(&buf); err != nil {
		t.Fatal(err)
	}
	back, err := Read(bytes.NewReader(buf.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(back, mdl) {
		t.Errorf("read back %+v\nwrote %+v", back, mdl)
	}
	if !math.Signbit(back.Scaler.Center[1]) {
		t.Error("−0 lost its sign")
	}
	path := filepath.Join(t.TempDir(), "fleet.model")
	if err := mdl.WriteFile(path); err != nil {
		t.Fatal(err)
	}
	fromFile, err := ReadFile(path)
	if err != nil || !reflect.DeepEqual(fromFile, mdl) {
		t.Errorf("file round trip: %v", err)
	}
	if _, err := ReadFile(filepath.Join(t.TempDir(), "none")); err == nil {
		t.Error("a missing file read")
	}
	// Readable by others like every other output (common practice, no
	// source): CreateTemp alone would leave it 0600.
	if st, err := os.Stat(path); err != nil || st.Mode().Perm() != 0o644 {
		t.Errorf("model file mode %v, %v; want -rw-r--r--", st.Mode(), err)
	}
}

// fileAs is a model file of the given format version around payload, as
// Write frames one.
func fileAs(version int, payload []byte) []byte {
	return fmt.Appendf(nil, "%s %d\n%d %x\n%s", magic, version, len(payload), sha256.Sum256(payload), payload)
}

// TestModelReadsVersion1 reads a file as version 1 wrote it, before models
// had a lineage: the header and payload say 1 and the payload has no
// Lineage field.
func TestModelReadsVersion1(t *testing.T) {
	mdl, _, _ := fitted(t)
	old := *mdl
	old.Version, old.Lineage = 1, ""
	payload, err := json.Marshal(&old)
	if err != nil {
		t.Fatal(err)
	}
	if bytes.Contains(payload, []byte("Lineage")) {
		t.Fatal("a version 1 payload has no Lineage field")
	}
	file := fileAs(1, payload)
	back, err := Read(bytes.NewReader(file))
	if err != nil {
		t.Fatal(err)
	}
	if back.Version != 1 || back.Lineage != "" || !reflect.DeepEqual(back.Map, mdl.Map) {
		t.Errorf("version 1 file read as version %d, lineage %q", back.Version, back.Lineage)
	}
}

// TestModelReadsVersion3 reads files as versions 1 to 3 wrote the map's
// shape: the booleans Hex and Flat in the lattice and "hex" and "flat" in
// the training settings, where version 4 names cells and surface.
func TestModelReadsVersion3(t *testing.T) {
	mdl, _, _ := fitted(t)
	for _, shape := range []struct{ hex, flat bool }{{false, false}, {true, false}, {false, true}, {true, true}} {
		want := *mdl
		want.Map.Lattice.Hex, want.Map.Lattice.Flat = shape.hex, shape.flat
		want.Training.Hex, want.Training.Flat = shape.hex, shape.flat
		payload, err := json.Marshal(&want)
		if err != nil {
			t.Fatal(err)
		}
		var doc map[string]any
		if err := json.Unmarshal(payload, &doc); err != nil {
			t.Fatal(err)
		}
		doc["Version"] = 3
		lattice := doc["Map"].(map[string]any)["Lattice"].(map[string]any)
		delete(lattice, "Cells")
		delete(lattice, "Surface")
		lattice["Hex"], lattice["Flat"] = shape.hex, shape.flat
		training := doc["Training"].(map[string]any)
		delete(training, "cells")
		delete(training, "surface")
		training["hex"], training["flat"] = shape.hex, shape.flat
		if payload, err = json.Marshal(doc); err != nil {
			t.Fatal(err)
		}
		if bytes.Contains(bytes.ToLower(payload), []byte(`"cells"`)) || bytes.Contains(bytes.ToLower(payload), []byte(`"surface"`)) {
			t.Fatal("a version 3 payload names no cells or surface")
		}
		file := fileAs(3, payload)
		back, err := Read(bytes.NewReader(file))
		if err != nil {
			t.Fatalf("%+v: %v", shape, err)
		}
		if back.Version != 3 || back.Map.Lattice != want.Map.Lattice || back.Training.Hex != shape.hex || back.Training.Flat != shape.flat {
			t.Errorf("version 3 file of %+v read as version %d, lattice %+v, training hex %v flat %v",
				shape, back.Version, back.Map.Lattice, back.Training.Hex, back.Training.Flat)
		}
	}
}

func TestModelRefusesDamage(t *testing.T) {
	mdl, _, _ := fitted(t)
	var buf bytes.Buffer
	if err := mdl.Write(&buf); err != nil {
		t.Fatal(err)
	}
	good := buf.Bytes()
	head := bytes.IndexByte(good, '\n') + 1
	body := head + bytes.IndexByte(good[head:], '\n') + 1
	read := func(b []byte) error { _, err := Read(bytes.NewReader(b)); return err }
	expect := func(name string, b []byte, want string) {
		t.Helper()
		err := read(b)
		if err == nil || !strings.Contains(err.Error(), want) || !strings.HasPrefix(err.Error(), "model: ") {
			t.Errorf("%s: error %v, want one saying %q", name, err, want)
		}
	}
	for _, at := range []int{body, body + 1, (body + len(good)) / 2, len(good) - 1} {
		b := slices.Clone(good)
		b[at] ^= 0x01
		expect(fmt.Sprintf("byte %d flipped", at), b, "checksum mismatch")
	}
	b := slices.Clone(good)
	b[head+3] ^= 0x01 // in the recorded length
	if read(b) == nil {
		t.Error("a damaged length accepted")
	}
	for _, n := range []int{0, 5, head, body - 1, body, body + 10, len(good) - 1} {
		if err := read(good[:n]); err == nil {
			t.Errorf("truncated to %d of %d bytes: accepted", n, len(good))
		}
	}
	expect("truncated payload", good[:len(good)-20], "truncated")
	expect("bytes appended", append(slices.Clone(good), ' '), "after the payload")
	expect("not a model", []byte("hello\nworld\n"), "not a kinmap model")
	newer := bytes.Replace(good, []byte(magic+" "+strconv.Itoa(FormatVersion)), []byte(magic+" "+strconv.Itoa(FormatVersion+1)), 1)
	expect("newer version", newer, fmt.Sprintf("format version %d is newer than this build reads (up to %d)", FormatVersion+1, FormatVersion))

	// Payloads with a valid checksum but parts that do not fit together.
	var bb bytes.Buffer
	for _, tc := range []struct {
		name  string
		spoil func(m *Model)
		want  string
	}{
		{"unit regimes", func(m *Model) { m.UnitRegime = m.UnitRegime[1:] }, "unit regimes"},
		{"no scaler", func(m *Model) { m.Scaler = nil }, "no normalisation"},
		{"narrow scaler", func(m *Model) {
			sc := *m.Scaler
			sc.Center = sc.Center[1:]
			m.Scaler = &sc
		}, "for a map of dimension"},
		{"unit in two regimes", func(m *Model) {
			m.Regimes = slices.Clone(m.Regimes)
			r := m.Regimes[1]
			r.Units = append(slices.Clone(r.Units), m.Regimes[0].Units[0])
			m.Regimes[1] = r
		}, "which is not one of its units"},
		{"unit in no regime", func(m *Model) {
			m.Regimes = slices.Clone(m.Regimes)
			r := m.Regimes[0]
			r.Units = r.Units[1:]
			m.Regimes[0] = r
		}, "the regimes list"},
		{"regime twice", func(m *Model) { m.Regimes = append(slices.Clone(m.Regimes), m.Regimes[0]) }, "appears twice"},
		// Hand edits with a recomputed checksum: a zero scale crashed
		// assign with a division by zero downstream.
		{"zero scale", func(m *Model) { m.Scaler = spoilScaler(m.Scaler, func(sc *features.Scaler) { sc.Scale[0] = 0 }) }, "scale 0 must be"},
		{"negative weight", func(m *Model) { m.Scaler = spoilScaler(m.Scaler, func(sc *features.Scaler) { sc.Weight[1] = -3 }) }, "weight -3 must be"},
		{"feature twice", func(m *Model) {
			m.Scaler = spoilScaler(m.Scaler, func(sc *features.Scaler) { sc.Names[1] = sc.Names[0] })
		}, "appears twice"},
		{"descending quantiles", func(m *Model) {
			m.QEQuantiles = slices.Clone(m.QEQuantiles)
			m.QEQuantiles[5] = m.QEQuantiles[4] - 1
		}, "ascending"},
		{"no window", func(m *Model) { m.FeatureConfig.Window = 0 }, "window settings"},
		{"unknown status", func(m *Model) {
			m.Regimes = slices.Clone(m.Regimes)
			m.Regimes[0].Status = "broken"
		}, `status "broken"`},
	} {
		bad := *mdl
		tc.spoil(&bad)
		bb.Reset()
		if err := bad.Write(&bb); err != nil {
			t.Fatal(err)
		}
		expect("inconsistent: "+tc.name, bb.Bytes(), tc.want)
	}

	nan := *mdl
	nan.QEQuantiles = slices.Clone(mdl.QEQuantiles)
	nan.QEQuantiles[3] = math.NaN()
	if err := nan.Write(&bb); err == nil {
		t.Error("a NaN written")
	}
}

func TestCheckSchema(t *testing.T) {
	m := &Model{FeatureNames: []string{"flow.mean", "flow.p95", "vibration.p95"}}
	for _, tc := range []struct {
		names []string
		want  string // "" for accepted
	}{
		{[]string{"flow.mean", "flow.p95", "vibration.p95"}, ""},
		{[]string{"flow.mean", "vibration.p95", "pressure.max", "temp.mean"}, "missing flow.p95; extra pressure.max, temp.mean"},
		{[]string{"flow.mean", "flow.p95"}, "missing vibration.p95"},
		{[]string{"flow.p95", "flow.mean", "vibration.p95"}, `column 0 is "flow.p95", the model has "flow.mean"`},
		{[]string{"flow.mean", "flow.mean", "vibration.p95"}, `"flow.mean" twice`},
	} {
		err := m.CheckSchema(tc.names)
		switch {
		case tc.want == "" && err != nil:
			t.Errorf("%v: %v", tc.names, err)
		case tc.want != "" && (err == nil || !strings.Contains(err.Error(), tc.want)):
			t.Errorf("%v: error %v, want one saying %q", tc.names, err, tc.want)
		}
	}
}

// Quantiles by definition 7 of Hyndman and Fan (1996): for 1, 2, …, 5 the
// quantile p lies at position 4p of the sorted values, so p = 0.25 is 2 and
// p = 0.1 is 1.4.
func TestQEThreshold(t *testing.T) {
	var asg []mapper.Assignment
	for _, v := range []float64{5, 3, 1, 4, 2} {
		asg = append(asg, mapper.Assignment{QE: v})
	}
	m := &Model{QEQuantiles: qeQuantiles(asg)}
	for q, want := range map[float64]float64{0: 1, 0.1: 1.4, 0.25: 2, 0.5: 3, 0.9: 4.6, 1: 5, 1.5: 5, -1: 1, 0.1005: 1.402} {
		if got := m.QEThreshold(q); math.Abs(got-want) > 1e-12 {
			t.Errorf("QEThreshold(%g) = %g, want %g", q, got, want)
		}
	}
	if !math.IsNaN((&Model{}).QEThreshold(0.5)) {
		t.Error("no quantiles: not NaN")
	}
}

// The stored quantiles agree with numpy.quantile, whose default method is
// the same definition 7.
func TestQEQuantilesAgreeWithNumpy(t *testing.T) {
	py := tooltest.Python(t, "numpy")
	rng := rand.New(rand.NewPCG(32, 7))
	asg := make([]mapper.Assignment, 777)
	vals := make([]string, len(asg))
	for i := range asg {
		asg[i].QE = rng.ExpFloat64()
		vals[i] = strconv.FormatFloat(asg[i].QE, 'g', -1, 64)
	}
	script := "import sys, numpy as np\n" +
		"x = np.array([float(v) for v in sys.stdin.read().split()])\n" +
		"print(' '.join(repr(float(v)) for v in np.quantile(x, np.arange(1001) / 1000)))\n"
	cmd := exec.Command(py, "-c", script)
	cmd.Stdin = strings.NewReader(strings.Join(vals, " "))
	out, err := cmd.Output()
	if err != nil {
		t.Fatal(err)
	}
	want := strings.Fields(string(out))
	got := qeQuantiles(asg)
	if len(want) != len(got) {
		t.Fatalf("numpy gave %d quantiles, we %d", len(want), len(got))
	}
	for k, w := range want {
		v, _ := strconv.ParseFloat(w, 64)
		if math.Abs(got[k]-v) > 1e-12*(1+v) {
			t.Errorf("quantile %d/1000: %g, numpy %g", k, got[k], v)
		}
	}
}

// Week two is week one plus a little noise: after Update every regime
// keeps its number, judged by which previous regime shares most units.
func TestUpdateKeepsNumbers(t *testing.T) {
	mdl, x, tab := fitted(t)
	n, d := x.Dims()
	week2 := mat.NewDense(n, d, nil)
	rng := rand.New(rand.NewPCG(33, 7))
	for i := range n {
		for j := range d {
			week2.Set(i, j, x.At(i, j)+0.05*rng.NormFloat64())
		}
	}
	next, changes, err := Update(mdl, table(week2, tab.Names, tab.Config), week2, mapper.Config{Epochs: 3, Regimes: 3})
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(next.Scaler, mdl.Scaler) || !slices.Equal(next.FeatureNames, mdl.FeatureNames) || next.Lineage != mdl.Lineage {
		t.Error("Update lost the schema or the lineage")
	}
	for _, r := range next.Regimes {
		overlap := map[int]int{}
		for _, u := range r.Units {
			overlap[mdl.UnitRegime[u]]++
		}
		best := 0
		for id, c := range overlap {
			if c > overlap[best] {
				best = id
			}
		}
		if best != r.ID {
			t.Errorf("regime %d mostly covers previous regime %d", r.ID, best)
		}
	}
	for _, c := range changes {
		if c.Kind != ChangeRenumbered {
			t.Errorf("unexpected change %+v", c)
		}
	}
}

// spoilScaler returns a copy of sc changed by spoil.
func spoilScaler(sc *features.Scaler, spoil func(*features.Scaler)) *features.Scaler {
	c := *sc
	c.Names, c.Center, c.Scale, c.Weight = slices.Clone(sc.Names), slices.Clone(sc.Center), slices.Clone(sc.Scale), slices.Clone(sc.Weight)
	spoil(&c)
	return &c
}
