package kinmap_test

import (
	"fmt"
	"log"
	"os"
	"path/filepath"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/scenarios"
)

// Train maps a dump and its register; Write puts every output in a folder.
func ExampleTrain() {
	dir, err := os.MkdirTemp("", "kinmap-example")
	if err != nil {
		log.Fatal(err)
	}
	defer os.RemoveAll(dir)

	// An invented fleet of 20 pumping stations over one week.
	spec, _ := scenarios.DefaultSpec("pumping")
	spec.Sites, spec.Weeks = 20, 1
	fleet, err := scenarios.Generate(spec)
	if err != nil {
		log.Fatal(err)
	}
	if _, err := fleet.Write(dir, scenarios.FileLongParquet, scenarios.FileSites); err != nil {
		log.Fatal(err)
	}

	o := kinmap.DefaultOptions()
	o.Data = []string{filepath.Join(dir, scenarios.FileLongParquet)}
	o.Sites = filepath.Join(dir, scenarios.FileSites)
	o.Map.Regimes = 3
	res, err := kinmap.Train(o)
	if err != nil {
		log.Fatal(err)
	}
	if err := res.Write(filepath.Join(dir, "out")); err != nil {
		log.Fatal(err)
	}
	c := res.Info.Counts
	fmt.Printf("%d sites, %d windows, %d features, %d regimes\n", c.Sites, c.Windows, c.Features, c.Regimes)
	// Output: 20 sites, 140 windows, 45 features, 3 regimes
}
