package scaleout

import (
	"context"
	"os"
	"path/filepath"
	"reflect"
	"testing"

	"github.com/apache/beam/sdks/v2/go/pkg/beam/io/filesystem/memfs"

	"github.com/kinmap/kinmap"
)

// Dumps, register and scratch folder on a Beam file system other than the
// local disk (Beam's in-memory one here, standing for gs:// or s3://): the
// dumps are listed by pattern, copied for the project's reader, named by
// their own paths in the summary, and the scratch files are removed after
// the run.
func TestRemoteStorage(t *testing.T) {
	f := fixture(t)
	o := options(f)
	o.Map.Epochs = 4
	local, err := kinmap.Train(o)
	if err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	var remoteDumps []string
	for _, p := range append(f.dumps, f.register) {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		name := "memfs://fleet/" + filepath.Base(p)
		memfs.Write(name, b)
		if p != f.register {
			remoteDumps = append(remoteDumps, name)
		}
	}
	o.Data = []string{"memfs://fleet/week-*.parquet"}
	o.Sites = "memfs://fleet/" + filepath.Base(f.register)
	beam, err := Train(ctx, Options{Options: o, Work: "memfs://scratch", Shards: 2})
	if err != nil {
		t.Fatal(err)
	}

	var paths []string
	for _, fs := range beam.Ingest.Files {
		paths = append(paths, fs.Path)
	}
	if !reflect.DeepEqual(paths, remoteDumps) {
		t.Errorf("dumps read %v, want %v", paths, remoteDumps)
	}
	got, want := beam.Ingest, local.Ingest
	got.Files, want.Files = nil, nil
	if !reflect.DeepEqual(got, want) {
		t.Errorf("ingest summary:\n got %+v\nwant %+v", got, want)
	}
	compareTables(t, beam, local)
	if d := maxDiff(beam.Model.Map.Codebook, local.Model.Map.Codebook); d > tol {
		t.Errorf("codebooks differ by %g", d)
	}
	compareTimelines(t, beam, local)
	for _, pattern := range []string{"memfs://scratch/*/*", "memfs://scratch/*/*/*"} {
		if left, err := list(ctx, pattern); err != nil || len(left) > 0 {
			t.Errorf("scratch files left: %v (%v)", left, err)
		}
	}
}
