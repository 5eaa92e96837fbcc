package lattice

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
)

// The names of a lattice's shape, as flags, files and reports give them: its
// cells are hexagonal or square, and its surface a torus that wraps both
// ways or a plane with edges.
const (
	CellsHex     = "hex"
	CellsSquare  = "square"
	SurfaceTorus = "torus"
	SurfacePlane = "plane"
)

// Cells names the shape of the lattice's cells: CellsHex or CellsSquare.
func (l Lattice) Cells() string {
	if l.Hex {
		return CellsHex
	}
	return CellsSquare
}

// Surface names the lattice's surface: SurfaceTorus or SurfacePlane.
func (l Lattice) Surface() string {
	if l.Flat {
		return SurfacePlane
	}
	return SurfaceTorus
}

// parseShape returns the Hex and Flat settings that the names cells
// (CellsHex or CellsSquare) and surface (SurfaceTorus or SurfacePlane) stand for.
func parseShape(cells, surface string) (hex, flat bool, err error) {
	switch cells {
	case CellsHex, CellsSquare:
	default:
		return false, false, fmt.Errorf("cells %q: want %s or %s", cells, CellsHex, CellsSquare)
	}
	switch surface {
	case SurfaceTorus, SurfacePlane:
	default:
		return false, false, fmt.Errorf("surface %q: want %s or %s", surface, SurfaceTorus, SurfacePlane)
	}
	return cells == CellsHex, surface == SurfacePlane, nil
}

// Shape is a lattice's shape as a file records it: by name, or, in model
// files before format version 4 and in their run.json, as the booleans hex
// and flat. A struct that embeds it reads either way.
type Shape struct {
	Cells   string `json:"cells,omitempty"`
	Surface string `json:"surface,omitempty"`
	Hex     *bool  `json:"hex,omitempty"`
	Flat    *bool  `json:"flat,omitempty"`
}

// Settings returns the Hex and Flat settings the record stands for. It
// takes one way of recording only, and both of its parts.
func (r Shape) Settings() (hex, flat bool, err error) {
	switch {
	case (r.Cells != "" || r.Surface != "") && (r.Hex != nil || r.Flat != nil):
		return false, false, errors.New("shape recorded both by name (cells, surface) and as hex and flat")
	case r.Hex != nil && r.Flat != nil:
		return *r.Hex, *r.Flat, nil
	case r.Hex != nil || r.Flat != nil:
		return false, false, errors.New("shape recorded as hex and flat: one of them is missing")
	}
	return parseShape(r.Cells, r.Surface)
}

// DecodeShaped decodes b into v, a struct embedding Shape, refusing
// fields v does not have (as a model file refuses them everywhere), and
// returns the Hex and Flat settings of the shape recorded.
func DecodeShaped(b []byte, v interface{ Settings() (bool, bool, error) }) (hex, flat bool, err error) {
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	if err := dec.Decode(v); err != nil {
		return false, false, err
	}
	return v.Settings()
}

// MarshalJSON records the lattice with its shape by name: Cols, Rows,
// Cells and Surface.
func (l Lattice) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		Cols, Rows     int
		Cells, Surface string
	}{l.Cols, l.Rows, l.Cells(), l.Surface()})
}

// UnmarshalJSON reads a lattice recorded by MarshalJSON or, as model files
// before format version 4 have it, with the booleans Hex and Flat.
func (l *Lattice) UnmarshalJSON(b []byte) error {
	var v struct {
		Cols, Rows int
		Shape
	}
	hex, flat, err := DecodeShaped(b, &v)
	if err != nil {
		return err
	}
	*l = Lattice{Cols: v.Cols, Rows: v.Rows, Hex: hex, Flat: flat}
	return nil
}
