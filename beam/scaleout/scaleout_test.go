package scaleout

import (
	"context"
	"math"
	"reflect"
	"strconv"
	"testing"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/model"
	"github.com/kinmap/kinmap/timeline"
)

// tol is how far the Beam path's floating-point results may stray from the
// local path's: they differ only by the order of the sums of the combine.
const tol = 1e-9

// bothPaths runs the same options locally and on Prism.
func bothPaths(t *testing.T, o kinmap.Options, shards int) (local, beam *kinmap.Result) {
	t.Helper()
	local, err := kinmap.Train(o)
	if err != nil {
		t.Fatalf("local run: %v", err)
	}
	beam, err = Train(context.Background(), Options{Options: o, Work: t.TempDir(), Shards: shards})
	if err != nil {
		t.Fatalf("Beam run: %v", err)
	}
	return local, beam
}

// The promise of the Beam path: on the same data, seed and settings, the Beam run
// gives the codebook of the local batch map to 1e-9 and the same regimes
// and timelines; everything before training is the same bit for bit.
func TestTrainMatchesLocal(t *testing.T) {
	f := fixture(t)
	for _, tc := range []struct {
		name   string
		shards int
		edit   func(*kinmap.Options)
	}{
		{"pca init, hexagonal torus, chosen regimes", 3, func(*kinmap.Options) {}},
		{"random init, square cells on a plane, 4 regimes, robust scaling", 1, func(o *kinmap.Options) {
			o.Map.Init, o.Map.Hex, o.Map.Flat, o.Map.Regimes = mapper.InitRandom, false, true, 4
			o.Map.Cols, o.Map.Rows = 9, 7
			o.Scaling = "robust"
		}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			o := options(f)
			tc.edit(&o)
			local, beam := bothPaths(t, o, tc.shards)

			if !reflect.DeepEqual(beam.Ingest, local.Ingest) {
				t.Errorf("ingest summary:\n got %+v\nwant %+v", beam.Ingest, local.Ingest)
			}
			if local.Ingest.Duplicates == 0 || len(local.Ingest.Unregistered) != 1 {
				t.Errorf("the fixture should have duplicates between the dumps and one unregistered site: %d, %v",
					local.Ingest.Duplicates, local.Ingest.Unregistered)
			}
			compareTables(t, beam, local)
			if !reflect.DeepEqual(beam.Model.Scaler, local.Model.Scaler) {
				t.Errorf("normalisation:\n got %+v\nwant %+v", beam.Model.Scaler, local.Model.Scaler)
			}
			if err := sameBits(beam.X.RawMatrix().Data, local.X.RawMatrix().Data); err != nil {
				t.Errorf("scaled matrix: %v", err)
			}

			bm, lm := beam.Model, local.Model
			if bm.Map.Lattice != lm.Map.Lattice || bm.Map.Dim != lm.Map.Dim {
				t.Fatalf("map %+v of dimension %d, want %+v of dimension %d", bm.Map.Lattice, bm.Map.Dim, lm.Map.Lattice, lm.Map.Dim)
			}
			d := maxDiff(bm.Map.Codebook, lm.Map.Codebook)
			t.Logf("%d windows, %v map, largest codebook difference %.3g", len(local.Table.Windows), lm.Map.Lattice, d)
			if d > tol {
				t.Errorf("codebooks differ by up to %g, want at most %g", d, tol)
			}
			if !reflect.DeepEqual(bm.Training, lm.Training) {
				t.Errorf("training settings:\n got %+v\nwant %+v", bm.Training, lm.Training)
			}
			compareModels(t, bm, lm)
			compareTimelines(t, beam, local)

			bi, li := beam.Info, local.Info
			if !reflect.DeepEqual(bi.Counts, li.Counts) || !reflect.DeepEqual(bi.Inputs, li.Inputs) ||
				!reflect.DeepEqual(bi.Warnings, li.Warnings) || !reflect.DeepEqual(bi.Options, li.Options) {
				t.Errorf("run summary:\n got %+v\nwant %+v", bi, li)
			}
			if bi.Command != "beam" || li.Command != "run" {
				t.Errorf("commands %q and %q", bi.Command, li.Command)
			}
		})
	}
}

func compareTables(t *testing.T, beam, local *kinmap.Result) {
	t.Helper()
	bt, lt := beam.Table, local.Table
	if !reflect.DeepEqual(bt.Names, lt.Names) || !reflect.DeepEqual(bt.Config, lt.Config) || !reflect.DeepEqual(bt.Skipped, lt.Skipped) {
		t.Errorf("feature table: names %v, config %+v, skipped %v; want %v, %+v, %v", bt.Names, bt.Config, bt.Skipped, lt.Names, lt.Config, lt.Skipped)
	}
	if !reflect.DeepEqual(bt.Paths, lt.Paths) {
		t.Errorf("paths of %d sites, want %d, or they differ", len(bt.Paths), len(lt.Paths))
	}
	// The sampling step and the readings in no window, which the data
	// health reports, are the local run's.
	if lt.Step <= 0 || bt.Step != lt.Step || !reflect.DeepEqual(bt.Steps, lt.Steps) || !reflect.DeepEqual(bt.Unused, lt.Unused) {
		t.Errorf("step %v of %d series, unused %v; want %v of %d, %v", bt.Step, len(bt.Steps), bt.Unused, lt.Step, len(lt.Steps), lt.Unused)
	}
	if len(bt.Windows) != len(lt.Windows) {
		t.Fatalf("%d windows, want %d", len(bt.Windows), len(lt.Windows))
	}
	for i, w := range bt.Windows {
		l := lt.Windows[i]
		if w.Site != l.Site || !w.Start.Equal(l.Start) || !w.End.Equal(l.End) || w.Lat != l.Lat || w.Lon != l.Lon || w.Located != l.Located {
			t.Fatalf("window %d: %s %v %v %v,%v %v; want %s %v %v %v,%v %v", i,
				w.Site, w.Start, w.End, w.Lat, w.Lon, w.Located, l.Site, l.Start, l.End, l.Lat, l.Lon, l.Located)
		}
		if err := sameBits(w.Values, l.Values); err != nil {
			t.Fatalf("window %d (%s %v): %v", i, w.Site, w.Start, err)
		}
	}
}

func compareModels(t *testing.T, bm, lm *model.Model) {
	t.Helper()
	if !reflect.DeepEqual(bm.UnitRegime, lm.UnitRegime) {
		t.Errorf("unit regimes:\n got %v\nwant %v", bm.UnitRegime, lm.UnitRegime)
	}
	// The codebooks agree to rounding, not bits, so the choice is compared
	// by its decisions: how many regimes, the fleet's common directions
	// left out, the splits made and the runner-up.
	if (bm.Choice == nil) != (lm.Choice == nil) {
		t.Errorf("regime choice %v, want %v", bm.Choice, lm.Choice)
	} else if b, l := bm.Choice, lm.Choice; b != nil && (b.K != l.K || b.Given != l.Given || b.Common != l.Common ||
		len(b.Splits) != len(l.Splits) || b.RunnerUp != l.RunnerUp || b.Marginal != l.Marginal) {
		t.Errorf("regime choice:\n got %+v\nwant %+v", *b, *l)
	}
	if len(bm.Regimes) != len(lm.Regimes) {
		t.Fatalf("%d regimes, want %d", len(bm.Regimes), len(lm.Regimes))
	}
	for i, r := range bm.Regimes {
		l := lm.Regimes[i]
		if r.ID != l.ID || !reflect.DeepEqual(r.Units, l.Units) || r.Description != l.Description {
			t.Errorf("regime %d: %d %v %q, want %d %v %q", i, r.ID, r.Units, r.Description, l.ID, l.Units, l.Description)
		}
		if d := maxDiff(r.Centroid, l.Centroid); d > tol {
			t.Errorf("regime %d: centroids differ by %g", r.ID, d)
		}
	}
	if d := maxDiff(bm.QEQuantiles, lm.QEQuantiles); d > tol {
		t.Errorf("quantization error quantiles differ by %g", d)
	}
	bq, lq := bm.Quality, lm.Quality
	if math.Abs(bq.QE-lq.QE) > tol || bq.TE != lq.TE || bq.Unused != lq.Unused || !reflect.DeepEqual(bq.Warnings, lq.Warnings) {
		t.Errorf("quality %+v, want %+v", bq, lq)
	}
	if bm.Version != lm.Version || bm.Windows != lm.Windows || !reflect.DeepEqual(bm.FeatureNames, lm.FeatureNames) || bm.FeatureConfig != lm.FeatureConfig {
		t.Errorf("model header: %d %d %v %+v, want %d %d %v %+v", bm.Version, bm.Windows, bm.FeatureNames, bm.FeatureConfig,
			lm.Version, lm.Windows, lm.FeatureNames, lm.FeatureConfig)
	}
}

// compareTimelines compares where each window landed, its decoded regime
// and the switches.
func compareTimelines(t *testing.T, beam, local *kinmap.Result) {
	t.Helper()
	got, want := beam.Table.Windows, local.Table.Windows
	if len(got) != len(want) {
		t.Fatalf("%d windows, want %d", len(got), len(want))
	}
	for i, g := range got {
		w := want[i]
		if g.Unit != w.Unit || g.Second != w.Second || math.Abs(g.QE-w.QE) > tol || g.Regime != w.Regime || g.Unfamiliar != w.Unfamiliar {
			t.Fatalf("window %d: unit %d, second %d, QE %g, regime %d, unfamiliar %v; want %d, %d, %g, %d, %v",
				i, g.Unit, g.Second, g.QE, g.Regime, g.Unfamiliar, w.Unit, w.Second, w.QE, w.Regime, w.Unfamiliar)
		}
	}
	nearlySame(t, "switch", beam.Switches, local.Switches, func(s *timeline.Switch) *float64 { return &s.Confidence })
}

// nearlySame compares two lists element by element: the float field that
// field points at to tol, everything else exactly.
func nearlySame[T comparable](t *testing.T, what string, got, want []T, field func(*T) *float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%d of %s, want %d", len(got), what, len(want))
	}
	for i := range got {
		g, w := got[i], want[i]
		d := math.Abs(*field(&g) - *field(&w))
		*field(&g), *field(&w) = 0, 0
		if g != w || d > tol {
			t.Fatalf("%s %d: %+v, want %+v (float off by %g)", what, i, got[i], want[i], d)
		}
	}
}

// With a history folder the Beam path decodes from the same earlier state
// as a local run: the switches are the same.
func TestTrainWithHistory(t *testing.T) {
	f := fixture(t)
	o := options(f)
	first, err := kinmap.Train(o)
	if err != nil {
		t.Fatal(err)
	}
	// An earlier period in which every site was in regime 1, so that the
	// history changes where switches are found.
	earlier := make([]features.Window, 0, len(first.Table.Windows))
	for _, e := range first.Table.Windows {
		e.Start, e.End = e.Start.AddDate(0, 0, -30), e.End.AddDate(0, 0, -30)
		e.Regime, e.Scaled = 1, nil
		earlier = append(earlier, e)
	}
	o.History = t.TempDir()
	// Numbered by the first map, whose regimes both paths make again, so
	// both continue from it.
	h := &kinmap.Result{Table: &features.Table{Windows: earlier}, Model: first.Model}
	if err := h.AppendHistory(o.History); err != nil {
		t.Fatal(err)
	}
	local, beam := bothPaths(t, o, 2)
	if !reflect.DeepEqual(sites(beam.Switches), sites(local.Switches)) {
		t.Errorf("switches with history: Beam %v, local %v", sites(beam.Switches), sites(local.Switches))
	}
	if reflect.DeepEqual(sites(local.Switches), sites(first.Switches)) {
		t.Errorf("the history changed no switch (%d of them); the check would not tell", len(local.Switches))
	}
	if len(local.Info.Warnings) != len(beam.Info.Warnings) {
		t.Errorf("warnings: Beam %q, local %q", beam.Info.Warnings, local.Info.Warnings)
	}
}

// sites lists switches as site, time and regimes, without the confidence.
func sites(sw []timeline.Switch) []string {
	var out []string
	for _, s := range sw {
		out = append(out, s.Site+" "+s.Time.String()+" "+strconv.Itoa(s.From)+"→"+strconv.Itoa(s.To))
	}
	return out
}
