package scaleout

import (
	"context"
	"os"
	"path/filepath"
	"testing"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/mapper"
)

// A Beam run refuses what a local run refuses, with the same message and
// the same kind of error (usage or data), in the same order: the dumps
// first, then the feature list.
func TestErrorsMatchLocal(t *testing.T) {
	f := fixture(t)
	junk := filepath.Join(t.TempDir(), "junk.parquet")
	if err := os.WriteFile(junk, []byte("PAR1 this is not a Parquet file at all"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name string
		edit func(*kinmap.Options)
	}{
		{"unknown feature", func(o *kinmap.Options) { o.Features.Features = "pressure.mean,nosuch.p95" }},
		{"weight of an unknown feature", func(o *kinmap.Options) { o.Weights = map[string]float64{"nosuch.p95": 2} }},
		{"missing time column", func(o *kinmap.Options) { o.Ingest.TimeCol = "stamp" }},
		{"corrupt dump after a good one", func(o *kinmap.Options) { o.Data = []string{f.dumps[0], junk} }},
		{"missing dump", func(o *kinmap.Options) { o.Data = []string{filepath.Join(t.TempDir(), "none.parquet")} }},
		{"pattern matching nothing", func(o *kinmap.Options) { o.Data = []string{filepath.Join(t.TempDir(), "*.parquet")} }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			o := options(f)
			tc.edit(&o)
			_, lerr := kinmap.Train(o)
			_, berr := Train(context.Background(), Options{Options: o, Work: t.TempDir(), Shards: 2})
			if lerr == nil || berr == nil {
				t.Fatalf("errors %v (local) and %v (Beam), want both", lerr, berr)
			}
			if berr.Error() != lerr.Error() || kinmap.IsUsage(berr) != kinmap.IsUsage(lerr) {
				t.Errorf("Beam error %q (usage %v), want %q (usage %v)", berr, kinmap.IsUsage(berr), lerr, kinmap.IsUsage(lerr))
			}
		})
	}
}

func TestOptionsRefused(t *testing.T) {
	f := fixture(t)
	for _, tc := range []struct {
		name string
		edit func(*Options)
	}{
		{"no scratch folder", func(o *Options) { o.Work = "" }},
		{"online rule", func(o *Options) { o.Map.Rule = mapper.RuleOnline }},
		{"negative shards", func(o *Options) { o.Shards = -1 }},
		{"no dump", func(o *Options) { o.Data = nil }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			o := Options{Options: options(f), Work: t.TempDir()}
			tc.edit(&o)
			if _, err := Train(context.Background(), o); !kinmap.IsUsage(err) {
				t.Errorf("got %v, want a usage error", err)
			}
		})
	}
}
