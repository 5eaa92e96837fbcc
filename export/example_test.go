package export_test

import (
	"fmt"
	"log"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/kinmap/kinmap/export"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/lattice"
	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/model"
)

func ExampleWrite() {
	// A map of two units, one regime each, and one site seen for three days.
	m := &model.Model{
		FeatureNames: []string{"flow.mean"},
		Map:          mapper.Map{Lattice: lattice.Lattice{Cols: 2, Rows: 1, Flat: true}, Dim: 1, Codebook: []float64{-1, 1}},
		Regimes: []mapper.Regime{
			{ID: 1, Units: []int{0}, Centroid: []float64{-1}, Description: "flow.mean −1.0σ"},
			{ID: 2, Units: []int{1}, Centroid: []float64{1}, Description: "flow.mean +1.0σ"},
		},
		UnitRegime:  []int{1, 2},
		QEQuantiles: []float64{0, 0.2, 0.5},
	}
	run := &export.Run{Model: m, Table: &features.Table{Names: m.FeatureNames}, Info: map[string]string{"note": "example"}}
	day := time.Date(2025, 3, 1, 0, 0, 0, 0, time.UTC)
	for d := range 3 {
		start := day.AddDate(0, 0, d)
		run.Table.Windows = append(run.Table.Windows, features.Window{Site: "PS-01", Start: start, End: start.AddDate(0, 0, 1),
			Lat: 46.95, Lon: 7.45, Located: true, Values: []float64{-1}, Unit: 0, Regime: 1, QE: 0.1})
	}

	dir, err := os.MkdirTemp("", "kinmap-example-")
	if err != nil {
		log.Fatal(err)
	}
	defer os.RemoveAll(dir)
	if err := export.Write(filepath.Join(dir, "out"), run); err != nil {
		log.Fatal(err)
	}
	files, err := os.ReadDir(filepath.Join(dir, "out"))
	if err != nil {
		log.Fatal(err)
	}
	for _, f := range files {
		if !strings.HasSuffix(f.Name(), ".png") { // pictures are named by package picture
			fmt.Println(f.Name())
		}
	}
	// Output:
	// attention.csv
	// attention.parquet
	// features.parquet
	// health.csv
	// kinmap.gpkg
	// model
	// regimes.geojson
	// report.html
	// run.json
	// shared.csv
	// shared.parquet
	// sites.geojson
	// switches.csv
	// switches.parquet
	// timeline.csv
	// timeline.parquet
}
