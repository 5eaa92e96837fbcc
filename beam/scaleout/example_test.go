package scaleout_test

import (
	"context"
	"fmt"
	"log"
	"os"
	"path/filepath"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/beam/scaleout"
	"github.com/kinmap/kinmap/scenarios"
)

// A run on Prism in this process: the same options as a local run, plus a
// scratch folder for the pipelines' intermediate files.
func ExampleTrain() {
	dir, err := os.MkdirTemp("", "scaleout-example-")
	if err != nil {
		log.Fatal(err)
	}
	defer os.RemoveAll(dir)
	spec, err := scenarios.DefaultSpec("pumping")
	if err != nil {
		log.Fatal(err)
	}
	spec.Sites, spec.Weeks = 10, 1
	fleet, err := scenarios.Generate(spec)
	if err != nil {
		log.Fatal(err)
	}
	if _, err := fleet.Write(filepath.Join(dir, "fleet")); err != nil {
		log.Fatal(err)
	}

	o := scaleout.Options{Options: kinmap.DefaultOptions(), Work: dir, Shards: 4}
	o.Data = []string{filepath.Join(dir, "fleet", scenarios.FileLongParquet)}
	o.Sites = filepath.Join(dir, "fleet", scenarios.FileSites)
	o.Map.Epochs = 5
	res, err := scaleout.Train(context.Background(), o)
	if err != nil {
		log.Fatal(err)
	}
	c := res.Info.Counts
	fmt.Printf("%d sites, %d windows of %d features, a %dx%d map\n", c.Sites, c.Windows, c.Features,
		res.Model.Map.Lattice.Cols, res.Model.Map.Lattice.Rows)
	if err := res.Write(filepath.Join(dir, "map")); err != nil {
		log.Fatal(err)
	}
	// Output:
	// 10 sites, 69 windows of 45 features, a 7x6 map
}
