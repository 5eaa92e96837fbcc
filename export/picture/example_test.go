package picture_test

import (
	"fmt"
	"log"

	"github.com/kinmap/kinmap/export/picture"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/lattice"
	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/model"
)

func ExampleRegimeColour() {
	// Regimes 1–7 take Okabe & Ito's colour-universal-design palette.
	for id := 1; id <= 7; id++ {
		c := picture.RegimeColour(id)
		fmt.Printf("%d #%02X%02X%02X\n", id, c.R, c.G, c.B)
	}
	// Output:
	// 1 #E69F00
	// 2 #56B4E9
	// 3 #009E73
	// 4 #F0E442
	// 5 #0072B2
	// 6 #D55E00
	// 7 #CC79A7
}

func ExampleAll() {
	// A 6 × 4 hexagonal torus with two regimes, its left half and its
	// right half, and one feature rising from left to right.
	l := lattice.Lattice{Cols: 6, Rows: 4, Hex: true}
	m := &model.Model{
		FeatureNames: []string{"flow.mean"},
		Map:          mapper.Map{Lattice: l, Dim: 1, Codebook: make([]float64, l.Units())},
		UnitRegime:   make([]int, l.Units()),
		Regimes:      []mapper.Regime{{ID: 1, Description: "flow.mean −1.0σ"}, {ID: 2, Description: "flow.mean +1.0σ"}},
	}
	for u := range l.Units() {
		col, _ := l.Cell(u)
		m.Map.Codebook[u] = float64(col) - 2.5
		m.UnitRegime[u] = 1 + col/3
	}
	in := picture.Input{
		Model:   m,
		Windows: []features.Window{{Site: "a", Unit: 0}, {Site: "a", Unit: 0}, {Site: "b", Unit: 5}},
		Sites:   []picture.SitePoint{{ID: "a", Lon: 9.1, Lat: 48.2, Located: true, Regime: 1}, {ID: "b", Lon: 9.4, Lat: 48.0, Located: true, Regime: 2}},
	}
	ps, err := picture.All(in)
	if err != nil {
		log.Fatal(err)
	}
	for _, p := range ps {
		fmt.Printf("%-15s %s\n", p.File, p.Title)
	}
	// Output:
	// regimes.png     Regime map
	// sites.png       Site map
	// umatrix.png     U-matrix
	// hits.png        Windows per unit
	// components.png  Feature planes
}
