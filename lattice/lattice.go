// Package lattice is the arrangement of a self-organising map's units:
// columns and rows of square or hexagonal cells on a torus that wraps both
// ways or on a plane with edges. It gives each unit's cell, planar position,
// neighbours and distances (the shortest way round on a torus), names the
// shape as files and flags give it, and bounds the number of units
// (MaxUnits).
package lattice

import (
	"fmt"
	"math"
	"slices"
)

// Lattice is the arrangement of the map's units. Unit u sits at column
// u % Cols and row u / Cols.
type Lattice struct {
	Cols, Rows int
	Hex        bool // hexagonal cells (6 neighbours); otherwise square (4)
	Flat       bool // a plane with edges; otherwise a torus wrapping both ways
}

// RowPitch is the distance between the rows of a hexagonal lattice, whose
// neighbouring units are one unit apart: √3/2.
const RowPitch = 0.86602540378443864676372317075294

// MaxUnits is the largest lattice a map may have. The batch rule and the
// BMU search each keep a units × units table of float64 (128 MiB at this
// limit), so the limit bounds their memory before any is allocated; the
// default grid reaches it only beyond about 670,000 training windows.
const MaxUnits = 4096

// Validate reports whether the lattice can be built: at least one unit
// along each side and at most MaxUnits in all; a torus needs at least 3
// along each side, and a hexagonal torus an even number of rows, or the row
// offsets would not match across the seam.
func (l Lattice) Validate() error {
	switch {
	case l.Cols < 1 || l.Rows < 1:
		return fmt.Errorf("lattice: %dx%d: both sides must be at least 1", l.Cols, l.Rows)
	case l.Cols > MaxUnits || l.Rows > MaxUnits || l.Cols*l.Rows > MaxUnits:
		return &LimitError{What: fmt.Sprintf("%dx%d", l.Cols, l.Rows), Value: float64(l.Cols) * float64(l.Rows), Limit: MaxUnits, Unit: "units"}
	case l.Hex && !l.Flat && l.Rows%2 != 0:
		return fmt.Errorf("lattice: %dx%d: a hexagonal torus needs an even number of rows, not %d", l.Cols, l.Rows, l.Rows)
	case !l.Flat && (l.Cols < 3 || l.Rows < 3) && l.Cols*l.Rows > 1:
		return fmt.Errorf("lattice: %dx%d: a torus needs at least 3 units along each side; use a plane for a chain", l.Cols, l.Rows)
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
	return x, float64(r) * RowPitch
}

// Period returns the planar size of the torus along x and y, the translations
// under which it repeats. It is meaningless for a plane.
func (l Lattice) Period() (px, py float64) {
	if l.Hex {
		return float64(l.Cols), float64(l.Rows) * RowPitch
	}
	return float64(l.Cols), float64(l.Rows)
}

// Dist2 returns the squared planar distance between units a and b, the
// shortest way round on a torus.
func (l Lattice) Dist2(a, b int) float64 {
	ca, ra := l.Cell(a)
	cb, rb := l.Cell(b)
	return l.offsetDist2(ra%2, cb-ca, rb-ra)
}

// offsetDist2 returns the squared planar distance from a unit in a row of
// parity p to the unit dc columns and dr rows away (|dc| < Cols,
// |dr| < Rows), the shortest way round on a torus. It depends on nothing
// else, which lets Pairwise tabulate by offset.
func (l Lattice) offsetDist2(p, dc, dr int) float64 {
	dx, dy := float64(dc), float64(dr)
	if l.Hex {
		dx += 0.5 * float64(mod(p+dr, 2)-p) // odd rows are shifted right
		dy *= RowPitch
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
func (l Lattice) Dist(a, b int) float64 { return math.Sqrt(l.Dist2(a, b)) }

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
		if v < 0 || v == u || slices.Contains(out, v) {
			continue
		}
		out = append(out, v)
	}
	return out
}

// Pairwise returns the Units × Units matrix, row-major, of f applied to
// the squared planar distance of every pair of units. That distance
// depends only on the pair's offset on the lattice (and the parity of the
// first unit's row), so f is called once per offset, not once per pair.
func (l Lattice) Pairwise(f func(d2 float64) float64) []float64 {
	parities := 1
	if l.Hex {
		parities = 2
	}
	w, hgt := 2*l.Cols-1, 2*l.Rows-1
	table := make([]float64, parities*hgt*w)
	for p := range parities {
		for dr := range hgt {
			for dc := range w {
				table[(p*hgt+dr)*w+dc] = f(l.offsetDist2(p, dc-l.Cols+1, dr-l.Rows+1))
			}
		}
	}
	u := l.Units()
	h := make([]float64, u*u)
	for j := range u {
		cj, rj := l.Cell(j)
		p := 0
		if l.Hex {
			p = rj % 2
		}
		row := h[j*u : (j+1)*u]
		for i := range row {
			ci, ri := l.Cell(i)
			row[i] = table[(p*hgt+ri-rj+l.Rows-1)*w+ci-cj+l.Cols-1]
		}
	}
	return h
}

func mod(a, n int) int {
	a %= n
	if a < 0 {
		a += n
	}
	return a
}
