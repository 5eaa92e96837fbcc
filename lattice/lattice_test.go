package lattice

import (
	"errors"
	"fmt"
	"math"
	"slices"
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
					if !adjacent(tc.l, v, u) {
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
				if near != adjacent(l, a, b) {
					t.Errorf("%+v: units %d and %d at distance %g, adjacent %v", l, a, b, d, adjacent(l, a, b))
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
				if got, want := l.Dist2(a, b), refDist2(l, a, b); math.Abs(got-want) > 1e-12*(1+want) {
					t.Errorf("%+v: units %d and %d at squared distance %g, cube coordinates give %g", l, a, b, got, want)
				}
			}
		}
	}
}

// Pairwise tabulates by offset what Dist2 gives for each pair.
func TestPairwiseMatchesDist2(t *testing.T) {
	for _, l := range []Lattice{
		{Cols: 6, Rows: 4, Hex: true}, {Cols: 5, Rows: 3, Hex: true, Flat: true},
		{Cols: 7, Rows: 5}, {Cols: 6, Rows: 4, Flat: true}, {Cols: 1, Rows: 1},
	} {
		got := l.Pairwise(func(d2 float64) float64 { return d2 })
		n := l.Units()
		if len(got) != n*n {
			t.Fatalf("%+v: %d entries, want %d", l, len(got), n*n)
		}
		for a := range n {
			for b := range n {
				if want := l.Dist2(a, b); got[a*n+b] != want {
					t.Errorf("%+v: pair %d–%d tabulated %g, Dist2 gives %g", l, a, b, got[a*n+b], want)
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
		{hex, 0, 0, 9, 7, 1, math.Hypot(9.5, 7*RowPitch)},
		{hex, 0, 0, 0, 4, 4 * RowPitch, 4 * RowPitch},
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
		err := tc.l.Validate()
		switch {
		case tc.want == "" && err != nil:
			t.Errorf("%+v: %v", tc.l, err)
		case tc.want != "" && (err == nil || !strings.Contains(err.Error(), tc.want)):
			t.Errorf("%+v: error %v, want one saying %q", tc.l, err, tc.want)
		}
	}
}

func ExampleLattice_Neighbours() {
	l := Lattice{Cols: 4, Rows: 4}
	fmt.Println(l.Neighbours(0)) // right, left across the seam, below, above across the seam
	h := Lattice{Cols: 4, Rows: 4, Hex: true}
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
		err := Lattice{Cols: tc.cols, Rows: tc.rows, Flat: true}.Validate()
		var le *LimitError
		if got := errors.As(err, &le); got == tc.ok {
			t.Errorf("%dx%d: err = %v, want a LimitError: %v", tc.cols, tc.rows, err, !tc.ok)
		}
	}
}

// adjacent reports whether b is among the neighbours of a.
func adjacent(l Lattice, a, b int) bool { return slices.Contains(l.Neighbours(a), b) }

// refDist2 is the squared planar distance between units a and b, computed
// apart from the package's geometry, with neighbours one unit apart. Unit u
// sits at column u % Cols and row u / Cols; on a hexagonal lattice odd rows
// are shifted right by half a unit ("odd-r" offset coordinates). Those
// become axial coordinates q = col − (row − row mod 2)/2, r = row, and cube
// coordinates (q, −q−r, r) (A. Patel, "Hexagonal Grids", Red Blob Games,
// 2013; from memory). With the neighbour steps e₁ = (1, 0) and
// e₂ = (1/2, √3/2), the offset q·e₁ + r·e₂ has squared length
// q² + qr + r², half the sum of the squared cube coordinates. A torus is
// the quotient by its periods, Cols columns and Rows rows (in axial
// coordinates (Cols, 0) and (−Rows/2, Rows), Rows being even); the distance
// on it is the shortest over the images.
func refDist2(l Lattice, a, b int) float64 {
	axial := func(u int) (q, r int) {
		c, r := u%l.Cols, u/l.Cols
		if l.Hex {
			return c - (r-r%2)/2, r
		}
		return c, r
	}
	norm2 := func(q, r int) float64 {
		if l.Hex {
			x, y, z := q, -q-r, r
			return float64(x*x+y*y+z*z) / 2
		}
		return float64(q*q + r*r)
	}
	qa, ra := axial(a)
	qb, rb := axial(b)
	dq, dr := qb-qa, rb-ra
	best := norm2(dq, dr)
	if l.Flat {
		return best
	}
	shear := 0 // axial q change of moving Rows rows down
	if l.Hex {
		shear = -l.Rows / 2
	}
	for k := -2; k <= 2; k++ {
		for m := -2; m <= 2; m++ {
			best = math.Min(best, norm2(dq+k*l.Cols+m*shear, dr+m*l.Rows))
		}
	}
	return best
}
