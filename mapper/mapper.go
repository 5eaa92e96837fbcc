// Package mapper trains Kohonen's self-organising map on a lattice (package
// lattice; by default one that wraps both ways, a torus), measures its
// quality, and groups its units into operating regimes.
//
// The stage is Train (or InitMap and one Accumulate and Smooth per epoch,
// for a runner that spreads the data over machines), Assign, Quality,
// FindRegimes and Describe; TrainFrom continues a map on a later dump.
// Package model puts them together into the saved model, keeps regime
// numbers and labels from one model to the next.
//
// Regimes are states that sites hold for days, relative to the fleet.
// FindRegimes leaves out the directions the whole fleet moves in together
// at each time, builds Ward's tree of the units, only lattice neighbours
// merging, and splits it from the top while the decoded segments of the
// sites (runs of one site in one regime) show two modes along the split
// (an Anderson–Darling test, as in G-means, or a test for two groups on a
// line, at level Alpha between them, and a BIC
// preference for two modes over one after a power transform); Choice
// records each split, the runner-up number and how close it came. The decoding is the timelines' own
// (package internal/viterbi, SwitchCostPerQE, DefaultMinDwell).
//
// Winners are exact: the matrix product that scores every unit only
// shortlists candidates, and every near-tie is settled by one fixed
// distance computation, ties going to the lower unit; the shortcut search
// of late epochs proves its winners or falls back to the full search. The
// batch map is deterministic for any number of workers.
package mapper

import "github.com/kinmap/kinmap/lattice"

// Config holds the training settings. It is recorded in the model. Zero
// fields mean the defaults of WithDefaults.
type Config struct {
	Cols     int                         `json:"cols"` // grid size; 0 means the default from the data size
	Rows     int                         `json:"rows"`
	Hex      bool                        `json:"-"`         // hexagonal cells; recorded as "cells" (MarshalJSON)
	Flat     bool                        `json:"-"`         // a plane instead of a torus; recorded as "surface"
	Rule     string                      `json:"rule"`      // "batch" (default) or "online"
	Epochs   int                         `json:"epochs"`    // passes over the data
	Sigma0   float64                     `json:"sigma0"`    // initial neighbourhood width in lattice units; 0 means a default from the grid size
	SigmaEnd float64                     `json:"sigma_end"` // final neighbourhood width
	Eta0     float64                     `json:"eta0"`      // online rule: initial learning rate in (0, 1]
	EtaEnd   float64                     `json:"eta_end"`   // online rule: final learning rate
	Init     string                      `json:"init"`      // "pca" (default) or "random"
	Seed     int64                       `json:"seed"`
	Regimes  int                         `json:"regimes"` // number of regimes; 0 chooses it (FindRegimes), at most 12
	Workers  int                         `json:"-"`       // parallelism; 0 means all cores
	Progress func(epoch int, qe float64) `json:"-"`       // called after each epoch when set
}

// Map is a trained self-organising map.
type Map struct {
	Lattice  lattice.Lattice
	Dim      int
	Codebook []float64 // Units × Dim, row-major
}

// Assignment is where one window lands on the map.
type Assignment struct {
	BMU    int     // best-matching unit
	Second int     // second-best unit
	QE     float64 // Euclidean distance to the BMU's codebook vector
}

// Quality summarises how well a map fits its training data.
type Quality struct {
	QE       float64  `json:"qe"`       // mean quantization error
	TE       float64  `json:"te"`       // topographic error: share of windows whose first and second BMU are not lattice neighbours
	Unused   float64  `json:"unused"`   // share of units that win no window
	Warnings []string `json:"warnings"` // for example a high unused share
}

// Regime is a connected group of units on the lattice.
type Regime struct {
	ID          int       // stable regime number, from 1
	Units       []int     // units of the regime, ascending
	Centroid    []float64 // mean codebook vector of the units weighted by their hits, scaled space
	Traits      []Trait   // most distinctive features, strongest first
	Description string    // for example "vibration.p95 +2.1σ, flow.mean −1.4σ"

	// Name and Status are the user's: a name such as "baseline" and one of
	// "normal", "watch" or "fault". Empty until the user labels the regime.
	Name   string `json:",omitempty"`
	Status string `json:",omitempty"`
}

// Trait is one feature's standardised difference of a regime from the fleet
// mean.
type Trait struct {
	Feature string
	Sigma   float64
}
