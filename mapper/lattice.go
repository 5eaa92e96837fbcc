package mapper

import (
	"fmt"
	"math"
)

// rowPitch is the vertical distance between hexagonal rows when neighbouring
// units are one unit apart: √3/2.
const rowPitch = 0.86602540378443864676372317075294

// newLattice returns a lattice of cols × rows units. A hexagonal torus needs
// an even number of rows, or the row offsets would not match across the seam.
func newLattice(cols, rows int, hex, flat bool) (Lattice, error) {
	l := Lattice{Cols: cols, Rows: rows, Hex: hex, Flat: flat}
	return l, l.Validate()
}

// MaxUnits is the largest lattice a map may have. The batch rule and the
// BMU search each keep a units × units table of float64 (128 MiB at this
// limit), so the limit bounds their memory before any is allocated; the
// default grid reaches it only beyond about 670,000 training windows.
const MaxUnits = 4096

// Validate reports whether the lattice can be built.
func (l Lattice) Validate() error {
	switch {
	case l.Cols < 1 || l.Rows < 1:
		return fmt.Errorf("mapper: lattice %dx%d: both sides must be at least 1", l.Cols, l.Rows)
	case l.Cols > MaxUnits || l.Rows > MaxUnits || l.Cols*l.Rows > MaxUnits:
		return &LimitError{What: fmt.Sprintf("lattice %dx%d", l.Cols, l.Rows), Value: float64(l.Cols) * float64(l.Rows), Limit: MaxUnits, Unit: "units"}
	case l.Hex && !l.Flat && l.Rows%2 != 0:
		return fmt.Errorf("mapper: lattice %dx%d: a hexagonal torus needs an even number of rows, not %d", l.Cols, l.Rows, l.Rows)
	case !l.Flat && (l.Cols < 3 || l.Rows < 3) && l.Cols*l.Rows > 1:
		return fmt.Errorf("mapper: lattice %dx%d: a torus needs at least 3 units along each side; use a plane for a chain", l.Cols, l.Rows)
	}
	return nil
}

// Units reports the number of units.
func (l Lattice) Units() int { return l.Cols * l.Rows }

// Cell returns the column and row of unit u.
func (l Lattice) Cell(u int) (col, row int) { return u % l.Cols, u / l.Cols }

// Unit returns the unit at col and row, wrapping on a torus. On a plane
// it returns -1 outside the plane.
func (l Lattice) Unit(col, row int) int {
	if l.Flat {
		if col < 0 || col >= l.Cols || row < 0 || row >= l.Rows {
			return -1
		}
	} else {
		col = mod(col, l.Cols)
		row = mod(row, l.Rows)
	}
	return row*l.Cols + col
}

// Position returns the planar position of unit u. Neighbours are one unit
// apart; on a hexagonal lattice odd rows are shifted right by half a unit and
// rows are √3/2 apart.
func (l Lattice) Position(u int) (x, y float64) {
	c, r := l.Cell(u)
	if !l.Hex {
		return float64(c), float64(r)
	}
	x = float64(c)
	if r%2 == 1 {
		x += 0.5
	}
	return x, float64(r) * rowPitch
}

// Period returns the planar size of the torus along x and y, the translations
// under which it repeats. It is meaningless for a plane.
func (l Lattice) Period() (px, py float64) {
	if l.Hex {
		return float64(l.Cols), float64(l.Rows) * rowPitch
	}
	return float64(l.Cols), float64(l.Rows)
}

// dist2 returns the squared planar distance between units a and b, the
// shortest way round on a torus.
func (l Lattice) dist2(a, b int) float64 {
	ca, ra := l.Cell(a)
	cb, rb := l.Cell(b)
	return l.offsetDist2(ra%2, cb-ca, rb-ra)
}

// offsetDist2 returns the squared planar distance from a unit in a row of
// parity p to the unit dc columns and dr rows away (|dc| < Cols,
// |dr| < Rows), the shortest way round on a torus. It depends on nothing
// else, which lets the neighbourhood weights be tabulated by offset.
func (l Lattice) offsetDist2(p, dc, dr int) float64 {
	dx, dy := float64(dc), float64(dr)
	if l.Hex {
		dx += 0.5 * float64(mod(p+dr, 2)-p) // odd rows are shifted right
		dy *= rowPitch
	}
	dx, dy = math.Abs(dx), math.Abs(dy)
	if !l.Flat {
		px, py := l.Period()
		dx = math.Min(dx, px-dx)
		dy = math.Min(dy, py-dy)
	}
	return dx*dx + dy*dy
}

// Dist returns the planar distance between units a and b.
func (l Lattice) Dist(a, b int) float64 { return math.Sqrt(l.dist2(a, b)) }

// Neighbours returns the distinct units adjacent to u: up to 4 on a
// square lattice, up to 6 on a hexagonal one, fewer at the edge of a
// plane.
func (l Lattice) Neighbours(u int) []int {
	c, r := l.Cell(u)
	var steps [][2]int
	switch {
	case !l.Hex:
		steps = [][2]int{{1, 0}, {-1, 0}, {0, 1}, {0, -1}}
	case r%2 == 0:
		steps = [][2]int{{1, 0}, {-1, 0}, {-1, -1}, {0, -1}, {-1, 1}, {0, 1}}
	default:
		steps = [][2]int{{1, 0}, {-1, 0}, {0, -1}, {1, -1}, {0, 1}, {1, 1}}
	}
	out := make([]int, 0, len(steps))
	for _, s := range steps {
		v := l.Unit(c+s[0], r+s[1])
		if v < 0 || v == u || contains(out, v) {
			continue
		}
		out = append(out, v)
	}
	return out
}

// adjacent reports whether units a and b are lattice neighbours.
func (l Lattice) adjacent(a, b int) bool { return contains(l.Neighbours(a), b) }

// neighbourTable returns the neighbours of every unit.
func (l Lattice) neighbourTable() [][]int {
	t := make([][]int, l.Units())
	for u := range t {
		t[u] = l.Neighbours(u)
	}
	return t
}

func contains(s []int, v int) bool {
	for _, x := range s {
		if x == v {
			return true
		}
	}
	return false
}

func mod(a, n int) int {
	a %= n
	if a < 0 {
		a += n
	}
	return a
}
