package scenarios_test

import (
	"fmt"
	"log"
	"os"
	"path/filepath"
	"strings"

	"github.com/kinmap/kinmap/scenarios"
)

func ExampleGenerate() {
	spec, err := scenarios.DefaultSpec("pumping")
	if err != nil {
		log.Fatal(err)
	}
	spec.Sites, spec.Weeks = 20, 1
	fleet, err := scenarios.Generate(spec)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(len(fleet.Sites), "sites,", fleet.Windows(), "windows from", fleet.WindowStart(0).Format("Mon 2 Jan 2006"))
	for _, c := range fleet.Channels {
		fmt.Printf("%s (%s) every %v\n", c.Name, c.Unit, fleet.Step)
	}
	fmt.Println(strings.Join(fleet.Regimes, ", "))
	// Output:
	// 20 sites, 7 windows from Mon 1 Jun 2026
	// flow (m³/h) every 10m0s
	// pressure (bar) every 10m0s
	// current (A) every 10m0s
	// vibration (mm/s) every 10m0s
	// bearing_temp (°C) every 10m0s
	// steady, cycling, standby, degrading, stuck-sensor, high-load
}

func ExampleFleet_Write() {
	spec, err := scenarios.DefaultSpec("reefers")
	if err != nil {
		log.Fatal(err)
	}
	spec.Sites, spec.Weeks = 3, 1
	fleet, err := scenarios.Generate(spec)
	if err != nil {
		log.Fatal(err)
	}
	dir, err := os.MkdirTemp("", "fleet")
	if err != nil {
		log.Fatal(err)
	}
	defer os.RemoveAll(dir)
	paths, err := fleet.Write(dir)
	if err != nil {
		log.Fatal(err)
	}
	for _, p := range paths {
		fmt.Println(filepath.Base(p))
	}
	// Output:
	// readings-long.parquet
	// readings-wide.parquet
	// readings.arrow
	// readings.csv
	// sites.csv
	// truth-windows.csv
	// truth-switches.csv
}
