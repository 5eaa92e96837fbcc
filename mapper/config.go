package mapper

import (
	"fmt"
	"math"

	"github.com/kinmap/kinmap/lattice"
)

// Training rules and initialisations accepted in Config.
const (
	RuleBatch  = "batch"
	RuleOnline = "online"
	InitPCA    = "pca"
	InitRandom = "random"
)

// minSide is the smallest side defaultGrid proposes: even, so that it suits a
// hexagonal torus, and large enough for a torus to have distinct neighbours.
const minSide = 4

// defaultGrid proposes a lattice for n training windows: about 5·√n units
// (common practice, no source), at most lattice.MaxUnits, at least 4 along
// each side. Its aspect ratio cols/rows follows sv1/sv2, the two leading singular values of the
// centred data, which are proportional to the spread of the data along its
// first two principal axes, so the lattice is stretched like the data. On a
// hexagonal lattice the ratio is taken in the plane (rows are √3/2 apart) and
// rows is rounded to an even number, as a hexagonal torus requires.
func defaultGrid(n int, sv1, sv2 float64, hex bool) (cols, rows int) {
	units := math.Min(5*math.Sqrt(float64(max(n, 1))), lattice.MaxUnits)
	ratio := 1.0
	if sv1 > 0 && sv2 > 0 && !math.IsInf(sv1, 0) {
		ratio = math.Max(sv1, sv2) / math.Min(sv1, sv2)
	} else if sv1 > 0 || sv2 > 0 {
		ratio = math.Inf(1)
	}
	pitch := 1.0
	if hex {
		pitch = lattice.RowPitch
	}
	// cols·rows = units and cols / (rows·pitch) = ratio.
	r := math.Sqrt(units / (ratio * pitch))
	rows = max(minSide, int(math.Round(r)))
	if hex && rows%2 != 0 {
		rows++
	}
	cols = max(minSide, int(math.Round(units/float64(rows))))
	for cols*rows > lattice.MaxUnits { // a very stretched grid rounds up past the limit
		cols--
	}
	return cols, rows
}

// WithDefaults returns c with its unset fields filled for n training windows
// whose centred data have the leading singular values sv1 and sv2:
//
//   - Rule "batch", Init "pca";
//   - Cols and Rows from defaultGrid when both are 0;
//   - Epochs 25 for the batch map, 10 for the online rule;
//   - Sigma0 a quarter of the longer side of the grid, at least 1; SigmaEnd
//     the smaller of 1 and Sigma0;
//   - Eta0 0.5 and EtaEnd Eta0/50 (online rule only, but always filled).
//
// Regimes 0 (choose the number, see FindRegimes) and Workers 0 (all cores)
// are kept: they are meaningful as they are.
func (c Config) WithDefaults(n int, sv1, sv2 float64) Config {
	if c.Rule == "" {
		c.Rule = RuleBatch
	}
	if c.Init == "" {
		c.Init = InitPCA
	}
	if c.Cols == 0 && c.Rows == 0 {
		c.Cols, c.Rows = defaultGrid(n, sv1, sv2, c.Hex)
	}
	if c.Epochs == 0 {
		c.Epochs = 25
		if c.Rule == RuleOnline {
			c.Epochs = 10
		}
	}
	if c.Sigma0 == 0 {
		c.Sigma0 = math.Max(1, float64(max(c.Cols, c.Rows))/4)
	}
	if c.SigmaEnd == 0 {
		c.SigmaEnd = math.Min(1, c.Sigma0)
	}
	if c.Eta0 == 0 {
		c.Eta0 = 0.5
	}
	if c.EtaEnd == 0 {
		c.EtaEnd = c.Eta0 / 50
	}
	return c
}

// Lattice returns the lattice the settings describe.
func (c Config) Lattice() lattice.Lattice {
	return lattice.Lattice{Cols: c.Cols, Rows: c.Rows, Hex: c.Hex, Flat: c.Flat}
}

// Validate reports whether complete settings (after WithDefaults) can train
// a map.
func (c Config) Validate() error {
	positive := func(name string, v float64) error {
		if !(v > 0) || math.IsInf(v, 0) {
			return fmt.Errorf("mapper: %s must be a positive number, not %g", name, v)
		}
		return nil
	}
	switch c.Rule {
	case RuleBatch, RuleOnline:
	default:
		return fmt.Errorf("mapper: unknown training rule %q (want %q or %q)", c.Rule, RuleBatch, RuleOnline)
	}
	switch c.Init {
	case InitPCA, InitRandom:
	default:
		return fmt.Errorf("mapper: unknown initialisation %q (want %q or %q)", c.Init, InitPCA, InitRandom)
	}
	if err := c.Lattice().Validate(); err != nil {
		return fmt.Errorf("mapper: %w", err)
	}
	if c.Epochs < 1 {
		return fmt.Errorf("mapper: epochs must be at least 1, not %d", c.Epochs)
	}
	if err := positive("Sigma0", c.Sigma0); err != nil {
		return err
	}
	if err := positive("SigmaEnd", c.SigmaEnd); err != nil {
		return err
	}
	if c.SigmaEnd > c.Sigma0 {
		return fmt.Errorf("mapper: SigmaEnd %g exceeds Sigma0 %g: the neighbourhood must shrink", c.SigmaEnd, c.Sigma0)
	}
	if !(c.Eta0 > 0 && c.Eta0 <= 1) {
		return fmt.Errorf("mapper: Eta0 must lie in (0, 1], not %g", c.Eta0)
	}
	if !(c.EtaEnd > 0 && c.EtaEnd <= c.Eta0) {
		return fmt.Errorf("mapper: EtaEnd must lie in (0, Eta0 = %g], not %g", c.Eta0, c.EtaEnd)
	}
	if c.Regimes < 0 || c.Regimes > c.Cols*c.Rows {
		return fmt.Errorf("mapper: %d regimes asked of a map of %d units", c.Regimes, c.Cols*c.Rows)
	}
	if c.Workers < 0 {
		return fmt.Errorf("mapper: workers must not be negative, not %d", c.Workers)
	}
	return nil
}

// Sigma returns the neighbourhood width of a batch epoch (0-based) under
// complete settings: it decays exponentially from Sigma0 at the first epoch
// to SigmaEnd at the last. A runner that trains one epoch at a time reaches
// the same map as Train by smoothing epoch e with Sigma(cfg, e).
func Sigma(cfg Config, epoch int) float64 {
	return decay(cfg.Sigma0, cfg.SigmaEnd, epoch, cfg.Epochs)
}

// decay interpolates exponentially from a at step 0 to b at step n-1.
func decay(a, b float64, step, n int) float64 {
	if n <= 1 {
		return a
	}
	return a * math.Pow(b/a, float64(step)/float64(n-1))
}
