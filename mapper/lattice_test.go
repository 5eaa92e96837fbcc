package mapper

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"
)

// Neighbour counts follow from the geometry of the tilings (common
// practice, no source): 4 on a square lattice and 6 on a hexagonal one
// everywhere on a torus; on a plane the square lattice has
// C(R−1) + R(C−1) edges and the hexagonal one, rows offset by half a unit,
// R(C−1) + (R−1)(2C−1).
func TestNeighbourCounts(t *testing.T) {
	for _, tc := range []struct {
		l     Lattice
		edges int
		each  int // every unit's count, 0 when it varies
	}{
		{Lattice{Cols: 5, Rows: 4}, 5 * 4 * 2, 4},
		{Lattice{Cols: 3, Rows: 3}, 3 * 3 * 2, 4},
		{Lattice{Cols: 6, Rows: 4, Hex: true}, 6 * 4 * 3, 6},
		{Lattice{Cols: 3, Rows: 4, Hex: true}, 3 * 4 * 3, 6},
		{Lattice{Cols: 5, Rows: 4, Flat: true}, 5*3 + 4*4, 0},
		{Lattice{Cols: 5, Rows: 1, Flat: true}, 4, 0},
		{Lattice{Cols: 5, Rows: 3, Hex: true, Flat: true}, 3*4 + 2*9, 0},
		{Lattice{Cols: 4, Rows: 4, Hex: true, Flat: true}, 4*3 + 3*7, 0},
	} {
		t.Run(fmt.Sprintf("%+v", tc.l), func(t *testing.T) {
			var degrees int
			for u := range tc.l.Units() {
				nb := tc.l.Neighbours(u)
				degrees += len(nb)
				if tc.each > 0 && len(nb) != tc.each {
					t.Errorf("unit %d has %d neighbours, want %d", u, len(nb), tc.each)
				}
				for _, v := range nb {
					if !tc.l.adjacent(v, u) {
						t.Errorf("unit %d lists %d, which does not list it back", u, v)
					}
				}
			}
			if degrees != 2*tc.edges {
				t.Errorf("%d edges, want %d", degrees/2, tc.edges)
			}
		})
	}
	corner := Lattice{Cols: 5, Rows: 4, Flat: true}
	if n := len(corner.Neighbours(0)); n != 2 {
		t.Errorf("corner of a plane has %d neighbours, want 2", n)
	}
	if n := len(corner.Neighbours(2)); n != 3 {
		t.Errorf("edge unit of a plane has %d neighbours, want 3", n)
	}
}

// The neighbours of a unit are exactly the units at planar distance 1, the
// short way round on a torus: the unit spacing of both tilings.
func TestNeighboursAtUnitDistance(t *testing.T) {
	for _, l := range []Lattice{
		{Cols: 7, Rows: 5}, {Cols: 6, Rows: 6, Hex: true}, {Cols: 5, Rows: 4, Hex: true},
		{Cols: 6, Rows: 5, Flat: true}, {Cols: 6, Rows: 5, Hex: true, Flat: true},
	} {
		for a := range l.Units() {
			for b := range l.Units() {
				d := l.Dist(a, b)
				near := math.Abs(d-1) < 1e-12
				if near != l.adjacent(a, b) {
					t.Errorf("%+v: units %d and %d at distance %g, adjacent %v", l, a, b, d, l.adjacent(a, b))
				}
				if math.Abs(d-l.Dist(b, a)) > 0 {
					t.Errorf("%+v: distance %d–%d not symmetric", l, a, b)
				}
			}
		}
	}
}

// Every pairwise distance agrees with the one computed from cube
// coordinates and the torus's periods (refDist2).
func TestDistMatchesCubeCoordinates(t *testing.T) {
	for _, l := range []Lattice{
		{Cols: 6, Rows: 4, Hex: true}, {Cols: 5, Rows: 6, Hex: true}, {Cols: 7, Rows: 8, Hex: true},
		{Cols: 5, Rows: 3, Hex: true, Flat: true}, {Cols: 7, Rows: 5}, {Cols: 6, Rows: 4, Flat: true},
	} {
		for a := range l.Units() {
			for b := range l.Units() {
				if got, want := l.dist2(a, b), refDist2(l, a, b); math.Abs(got-want) > 1e-12*(1+want) {
					t.Errorf("%+v: units %d and %d at squared distance %g, cube coordinates give %g", l, a, b, got, want)
				}
			}
		}
	}
}

func TestWrapDistances(t *testing.T) {
	rect := Lattice{Cols: 10, Rows: 8}
	flat := Lattice{Cols: 10, Rows: 8, Flat: true}
	hex := Lattice{Cols: 10, Rows: 8, Hex: true}
	for _, tc := range []struct {
		l          Lattice
		c1, r1     int
		c2, r2     int
		want       float64
		wantOnFlat float64
	}{
		{rect, 0, 0, 9, 0, 1, 9},
		{rect, 0, 0, 0, 7, 1, 7},
		{rect, 0, 0, 5, 4, math.Sqrt(25 + 16), math.Sqrt(25 + 16)},
		{rect, 1, 1, 8, 6, math.Sqrt(9 + 9), math.Sqrt(49 + 25)},
		// Row 7 is odd, shifted right by half a unit: across the seam
		// (0, 0) and (9, 7) are half a unit apart sideways and one row
		// apart, so neighbours.
		{hex, 0, 0, 9, 7, 1, math.Hypot(9.5, 7*rowPitch)},
		{hex, 0, 0, 0, 4, 4 * rowPitch, 4 * rowPitch},
	} {
		a, b := tc.l.Unit(tc.c1, tc.r1), tc.l.Unit(tc.c2, tc.r2)
		if got := tc.l.Dist(a, b); math.Abs(got-tc.want) > 1e-12 {
			t.Errorf("%+v (%d,%d)–(%d,%d): %g, want %g", tc.l, tc.c1, tc.r1, tc.c2, tc.r2, got, tc.want)
		}
		f := tc.l
		f.Flat = true
		if got := f.Dist(a, b); math.Abs(got-tc.wantOnFlat) > 1e-12 {
			t.Errorf("flat %+v (%d,%d)–(%d,%d): %g, want %g", f, tc.c1, tc.r1, tc.c2, tc.r2, got, tc.wantOnFlat)
		}
	}
	if u := rect.Unit(-1, -1); u != rect.Unit(9, 7) {
		t.Errorf("wrapping (-1,-1) gives unit %d", u)
	}
	if u := flat.Unit(-1, 0); u != -1 {
		t.Errorf("outside a plane gives unit %d, want -1", u)
	}
}

func TestLatticeValidate(t *testing.T) {
	for _, tc := range []struct {
		l    Lattice
		want string // "" for valid
	}{
		{Lattice{Cols: 10, Rows: 8, Hex: true}, ""},
		{Lattice{Cols: 10, Rows: 7, Hex: true}, "even number of rows"},
		{Lattice{Cols: 10, Rows: 7, Hex: true, Flat: true}, ""},
		{Lattice{Cols: 10, Rows: 7}, ""},
		{Lattice{Cols: 2, Rows: 7}, "at least 3"},
		{Lattice{Cols: 20, Rows: 1, Flat: true}, ""},
		{Lattice{Cols: 0, Rows: 3}, "at least 1"},
	} {
		_, err := newLattice(tc.l.Cols, tc.l.Rows, tc.l.Hex, tc.l.Flat)
		switch {
		case tc.want == "" && err != nil:
			t.Errorf("%+v: %v", tc.l, err)
		case tc.want != "" && (err == nil || !strings.Contains(err.Error(), tc.want)):
			t.Errorf("%+v: error %v, want one saying %q", tc.l, err, tc.want)
		}
	}
}

func ExampleLattice_Neighbours() {
	l, err := newLattice(4, 4, false, false)
	if err != nil {
		panic(err)
	}
	fmt.Println(l.Neighbours(0)) // right, left across the seam, below, above across the seam
	h, _ := newLattice(4, 4, true, false)
	fmt.Println(h.Neighbours(5)) // an odd row, shifted right
	// Output:
	// [1 3 4 12]
	// [6 4 1 2 9 10]
}

// TestLatticeLimit checks that a lattice beyond MaxUnits is refused with a
// LimitError before anything is allocated: --grid 1000x1000 ran out of
// memory in the batch rule's units × units table.
func TestLatticeLimit(t *testing.T) {
	for _, tc := range []struct {
		cols, rows int
		ok         bool
	}{
		{64, 64, true},
		{1000, 1000, false},
		{MaxUnits + 1, 1, false},
		{1 << 31, 1 << 31, false}, // the product overflows int32
	} {
		_, err := newLattice(tc.cols, tc.rows, false, true)
		var le *LimitError
		if got := errors.As(err, &le); got == tc.ok {
			t.Errorf("%dx%d: err = %v, want a LimitError: %v", tc.cols, tc.rows, err, !tc.ok)
		}
	}
	// The default grid stays within the limit for any data size.
	for _, n := range []int{1, 1000, 1e6, 1e9} {
		for _, ratio := range []float64{1, 50, 1e6} {
			c, r := defaultGrid(n, ratio, 1, true)
			if c*r > MaxUnits {
				t.Errorf("defaultGrid(%d, ratio %g) = %dx%d, beyond %d units", n, ratio, c, r, MaxUnits)
			}
		}
	}
}
