// Package model builds, writes and reads the saved model: everything
// needed to map a later dump the same way (the feature schema and
// settings, the normalisation, the map, its regimes, the training settings
// and the lineage of its regime numbers), built complete by one
// constructor, Train, Update or, for a map trained elsewhere, New.
//
// Update keeps regime numbers from one model to the next, pairing the new
// regimes with the previous ones (RegimeChange reports how they moved),
// and carries the user's labels with the numbers; CheckLabel and Statuses
// are the rules of those labels.
package model

import (
	"bufio"
	"bytes"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/mat"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/internal/atomicfile"
	"github.com/kinmap/kinmap/internal/quantile"
	"github.com/kinmap/kinmap/mapper"
)

// FormatVersion is the version of the model file this package writes, and
// the newest it reads. Version 2 added the lineage, which a version 1 file
// lacks; it reads as before. Version 3 records how the number of regimes
// was reached (mapper.Choice) instead of the Davies–Bouldin scores, which older
// files keep. Version 4 records the lattice's shape by name (cells and
// surface) instead of the booleans Hex and Flat; older files read as before.
// Version 5 adds the channels' units (Units), which an older build would
// refuse as an unknown field; older files read as before, without units.
// Version 6 adds the channels' levels by regime (Levels), the phases
// (Phases: areas found as regimes that no site held) and marks the label
// knowledge (Conditions), which version 5 files written by later builds
// also carry; an older build says a version 6 file is newer instead of
// refusing an unknown field. Files of versions 1 to 5 read as before,
// without levels or phases.
const FormatVersion = 6

// Score is the Davies–Bouldin index of one number of regimes K, as model
// files before format version 3 recorded it: lower was better.
type Score struct {
	K             int     `json:"k"`
	DaviesBouldin float64 `json:"davies_bouldin"`
}

// magic starts every model file, followed by a space and the format version.
const magic = "kinmap-model"

// qeSteps is the number of steps between the stored quantiles of the
// training quantization error: quantiles 0, 1/qeSteps, …, 1.
const qeSteps = 1000

// Model is everything needed to map a later dump the same way: the feature
// schema and settings, the normalisation, the map, its regimes and the
// training settings. It is written to one checksummed file.
type Model struct {
	Version       int
	FeatureNames  []string        // schema of the feature table at training
	FeatureConfig features.Config // how windows were cut
	Scaler        *features.Scaler
	Map           mapper.Map
	Regimes       []mapper.Regime
	UnitRegime    []int          // regime ID of each unit
	Training      mapper.Config  // training settings
	Quality       mapper.Quality // on the training windows
	QEQuantiles   []float64      // training quantization errors at quantiles 0, 0.001, …, 1
	Windows       int            // training windows
	Choice        *mapper.Choice // how the number of regimes was reached; nil in files before format version 3
	Scores        []Score        `json:",omitempty"` // files before format version 3: the Davies–Bouldin index of each number of regimes tried
	// Lineage names the regime numbering: set when a map is trained from
	// scratch and kept by updates, which keep the numbers. Files written
	// before it existed have none.
	Lineage string `json:",omitempty"`

	// Units are the units of the channels (such as "m3/h" for flow) in
	// which descriptions give their levels; channels without one are
	// absent. Files before format version 5 have none.
	Units map[string]string `json:",omitempty"`

	// Phases are areas of the map found as regimes that no site held after
	// decoding, each a phase of a held regime (see Fold); decoding scores
	// windows against them too (States). Files before format version 6
	// have none.
	Phases []Phase `json:",omitempty"`

	// Conditions is what labelled events (maintenance and inspection
	// records) said about the windows each unit won; nil when no run of
	// the model was given events. Files without it read as before.
	Conditions *Conditions `json:",omitempty"`

	// Levels are the typical raw levels of the channels in each regime and
	// over all windows, as the run that wrote the model found them; nil
	// in files before format version 6 and in a model not yet run.
	Levels *Levels `json:",omitempty"`
}

// Levels are the typical raw levels of the channels (features.Levels:
// the median and p95 of the readings in the windows) of each regime, by
// regime ID, and of the fleet, over every window. Channels without a
// reading are left out, as JSON holds no NaN.
type Levels struct {
	Regimes map[int][]features.Level
	Fleet   []features.Level
}

// Train trains a new map on the training windows of t, scaled by sc into
// x (Scaler.Transform), with the settings cfg, and returns the complete
// model (see New); the windows of t are placed on the map.
func Train(t *features.Table, x *mat.Dense, sc *features.Scaler, cfg mapper.Config) (*Model, error) {
	if err := checkNames(x, sc); err != nil {
		return nil, err
	}
	m, cfg, err := mapper.Train(x, cfg)
	if err != nil {
		return nil, err
	}
	return New(m, cfg, t, x, sc, m.Assign(x, cfg.Workers))
}

// Update continues training prev's map on the windows of t, scaled by
// prev's normalisation into x (see mapper.TrainFrom), derives the regimes
// again with cfg.Regimes, and numbers them after prev's regimes with
// matchRegimes. The model returned keeps prev's feature schema,
// feature settings, normalisation and lineage; the changes list every
// renumbering, split and merge; names and statuses follow the regime
// numbers (carryLabels). prev's phases (Phase) are matched like its
// regimes; the regimes found are all regimes of the model returned. The
// windows of t are placed on the new map.
func Update(prev *Model, t *features.Table, x *mat.Dense, cfg mapper.Config) (*Model, []RegimeChange, error) {
	if err := checkNames(x, prev.Scaler); err != nil {
		return nil, nil, err
	}
	m, cfg, err := mapper.TrainFrom(&prev.Map, x, cfg)
	if err != nil {
		return nil, nil, err
	}
	next, err := New(m, cfg, t, x, prev.Scaler, m.Assign(x, cfg.Workers))
	if err != nil {
		return nil, nil, err
	}
	// prev's phases are matched too, so that an area that was a phase
	// keeps its number.
	states, _ := prev.States()
	ids, changes, err := matchRegimes(states, next.Regimes)
	if err != nil {
		return nil, nil, err
	}
	if err := next.Renumber(ids); err != nil {
		return nil, nil, err
	}
	carryLabels(prev.Regimes, next.Regimes)
	next.FeatureNames = slices.Clone(prev.FeatureNames)
	next.FeatureConfig = prev.FeatureConfig
	// The update keeps the regime numbers, hence the lineage.
	next.Lineage = prev.LineageOrDerived()
	// It keeps the lattice's units, hence the label counts of events.
	next.Conditions = prev.Conditions
	return next, changes, nil
}

func checkNames(x *mat.Dense, sc *features.Scaler) error {
	switch {
	case x == nil:
		return fmt.Errorf("model: no training windows")
	case sc == nil:
		return fmt.Errorf("model: no normalisation")
	}
	if _, d := x.Dims(); d != len(sc.Names) {
		return fmt.Errorf("model: %d feature names for %d columns", len(sc.Names), d)
	}
	return nil
}

// New builds the complete model of map m, trained with the complete
// settings cfg (mapper.Config.WithDefaults) on the windows of t, scaled by
// sc into x, which landed at asg (one per window, as mapper.Map.Assign
// gives): it places the windows of t on the map (mapper.Place), finds the
// regimes (mapper.FindRegimes on the sites' timelines, then
// mapper.Describe), and records the quality, the quantiles of the training
// quantization errors, the feature schema and settings of t, sc and a new
// lineage. Train and Update call it; a runner that trains the map
// elsewhere calls it too.
func New(m *mapper.Map, cfg mapper.Config, t *features.Table, x *mat.Dense, sc *features.Scaler, asg []mapper.Assignment) (*Model, error) {
	if err := mapper.Place(t.Windows, asg); err != nil {
		return nil, err
	}
	tl := mapper.Timelines{Sequences: t.Sequences(), MinRun: t.WeekRun(), Slots: t.Slots()}
	groups, choice, err := mapper.FindRegimes(m, cfg.Regimes, &mapper.Windows{X: x, Assignments: asg, Timelines: tl})
	if err != nil {
		return nil, err
	}
	regs, err := mapper.Describe(m, groups, x, asg, sc.Names)
	if err != nil {
		return nil, err
	}
	unitRegime := make([]int, len(groups))
	for u, g := range groups {
		unitRegime[u] = regs[g].ID
	}
	cfg.Progress = nil
	md := &Model{
		Version:       FormatVersion,
		FeatureNames:  t.Names,
		FeatureConfig: t.Config,
		Scaler:        sc,
		Map:           *m,
		Regimes:       regs,
		UnitRegime:    unitRegime,
		Training:      cfg,
		Quality:       m.Quality(asg),
		QEQuantiles:   qeQuantiles(asg),
		Windows:       len(asg),
		Choice:        choice,
	}
	md.Lineage = md.LineageOrDerived()
	return md, nil
}

// qeQuantiles returns the quantization errors at quantiles 0, 0.001, …, 1,
// interpolated linearly between order statistics: the sample quantile of
// definition 7 of R. J. Hyndman and Y. Fan, "Sample quantiles in
// statistical packages", The American Statistician 50(4), 1996.
func qeQuantiles(asg []mapper.Assignment) []float64 {
	if len(asg) == 0 {
		return nil
	}
	qe := make([]float64, len(asg))
	for i, a := range asg {
		qe[i] = a.QE
	}
	slices.Sort(qe)
	out := make([]float64, qeSteps+1)
	for k := range out {
		out[k] = quantile.Sorted(qe, float64(k)/qeSteps)
	}
	return out
}

// QEThreshold returns the training quantization error at quantile q in
// [0, 1] (clamped), interpolated linearly between the stored quantiles; a
// window beyond QEThreshold(0.99) fits the map worse than 99 % of the
// training windows did. It returns NaN when the model stores no quantiles
// or q is NaN.
func (m *Model) QEThreshold(q float64) float64 {
	if len(m.QEQuantiles) == 0 || math.IsNaN(q) {
		return math.NaN()
	}
	// The stored quantiles are evenly spaced and ascending, so
	// interpolating between them is definition 7 on them as a sample.
	return quantile.Sorted(m.QEQuantiles, math.Min(1, math.Max(0, q)))
}

// Renumber gives regime i the number ids[i] (as Update derives them) and
// updates UnitRegime and the levels to match. The numbers must be positive
// and distinct.
func (m *Model) Renumber(ids []int) error {
	if len(ids) != len(m.Regimes) {
		return fmt.Errorf("model: %d numbers for %d regimes", len(ids), len(m.Regimes))
	}
	seen := make(map[int]bool)
	old := make(map[int]int)
	for i, id := range ids {
		if id < 1 || seen[id] {
			return fmt.Errorf("model: regime number %d is not positive or is repeated", id)
		}
		seen[id] = true
		old[m.Regimes[i].ID] = id
	}
	for i := range m.Regimes {
		m.Regimes[i].ID = ids[i]
	}
	for u, id := range m.UnitRegime {
		m.UnitRegime[u] = old[id]
	}
	if lv := m.Levels; lv != nil {
		by := make(map[int][]features.Level, len(lv.Regimes))
		for id, l := range lv.Regimes {
			by[old[id]] = l
		}
		m.Levels = &Levels{Regimes: by, Fleet: lv.Fleet}
	}
	for j := range m.Phases {
		m.Phases[j].Of = old[m.Phases[j].Of]
	}
	return nil
}

// CheckSchema reports whether a feature table with the columns names can be
// mapped with the model: the same features in the same order as at
// training. The error names the missing and the extra features, or the
// first place where the order differs.
func (m *Model) CheckSchema(names []string) error {
	have := make(map[string]bool, len(names))
	for _, n := range names {
		if have[n] {
			return fmt.Errorf("model: the feature table has feature %q twice", n)
		}
		have[n] = true
	}
	want := make(map[string]bool, len(m.FeatureNames))
	var missing, extra []string
	for _, n := range m.FeatureNames {
		want[n] = true
		if !have[n] {
			missing = append(missing, n)
		}
	}
	for _, n := range names {
		if !want[n] {
			extra = append(extra, n)
		}
	}
	if len(missing) > 0 || len(extra) > 0 {
		var parts []string
		if len(missing) > 0 {
			parts = append(parts, "missing "+strings.Join(missing, ", "))
		}
		if len(extra) > 0 {
			parts = append(parts, "extra "+strings.Join(extra, ", "))
		}
		return fmt.Errorf("model: the feature table does not match the model, which uses the channels %s: %s",
			strings.Join(features.Channels(m.FeatureNames), ", "), strings.Join(parts, "; "))
	}
	for i, n := range names {
		if n != m.FeatureNames[i] {
			return fmt.Errorf("model: the feature table has the model's features in another order: column %d is %q, the model has %q", i, n, m.FeatureNames[i])
		}
	}
	return nil
}

// Write writes the model as one file: a first line with the magic word and
// the format version, a second with the payload's length and SHA-256
// checksum, then the payload, the model in JSON. JSON writes every float in
// the shortest form that reads back to the same value, so a model reads back
// exactly; it cannot hold NaN or infinities, which Write refuses.
func (m *Model) Write(w io.Writer) error {
	c := *m
	c.Version = FormatVersion
	payload, err := json.Marshal(&c)
	if err != nil {
		return fmt.Errorf("model: %w", err)
	}
	sum := sha256.Sum256(payload)
	if _, err := fmt.Fprintf(w, "%s %d\n%d %s\n", magic, FormatVersion, len(payload), hex.EncodeToString(sum[:])); err != nil {
		return fmt.Errorf("model: %w", err)
	}
	if _, err := w.Write(payload); err != nil {
		return fmt.Errorf("model: %w", err)
	}
	return nil
}

// Read reads a model written by Write. It checks the format version,
// the length and the checksum of the payload and the consistency of what it
// decodes before returning anything, so a truncated, corrupted or newer file
// is refused whole.
func Read(r io.Reader) (*Model, error) {
	m, err := readModel(r)
	if err != nil {
		return nil, fmt.Errorf("model: %w", err)
	}
	return m, nil
}

// WriteFile writes the model to path, aside and then renamed into place,
// so that a reader never sees half a model; an error names path.
func (m *Model) WriteFile(path string) error {
	err := atomicfile.WriteFile(path, func(w io.Writer) error { return errors.Unwrap(m.Write(w)) })
	if err != nil {
		return fmt.Errorf("model: %w", err)
	}
	return nil
}

// ReadFile reads the model file at path.
func ReadFile(path string) (*Model, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("model: %w", err)
	}
	defer f.Close()
	m, err := readModel(bufio.NewReader(f))
	if err != nil {
		return nil, fmt.Errorf("model: %s: %w", path, err)
	}
	return m, nil
}

func readModel(r io.Reader) (*Model, error) {
	br := bufio.NewReader(r)
	head, err := br.ReadString('\n')
	if err != nil {
		return nil, errors.New("not a kinmap model file (no header line)")
	}
	word, ver, ok := strings.Cut(strings.TrimSuffix(head, "\n"), " ")
	version, verr := strconv.Atoi(ver)
	if !ok || word != magic || verr != nil || version < 1 {
		return nil, errors.New("not a kinmap model file")
	}
	if version > FormatVersion {
		return nil, fmt.Errorf("format version %d is newer than this build reads (up to %d): use a newer kinmap", version, FormatVersion)
	}
	line, err := br.ReadString('\n')
	if err != nil {
		return nil, errors.New("truncated in its header")
	}
	size, sum, ok := strings.Cut(strings.TrimSuffix(line, "\n"), " ")
	n, serr := strconv.Atoi(size)
	want, herr := hex.DecodeString(sum)
	if !ok || serr != nil || n < 0 || herr != nil || len(want) != sha256.Size {
		return nil, errors.New("damaged header")
	}
	payload, err := io.ReadAll(io.LimitReader(br, int64(n)+1))
	if err != nil {
		return nil, err
	}
	switch {
	case len(payload) < n:
		return nil, fmt.Errorf("truncated: %d of %d payload bytes", len(payload), n)
	case len(payload) > n:
		return nil, errors.New("unexpected bytes after the payload")
	}
	if got := sha256.Sum256(payload); !bytes.Equal(got[:], want) {
		return nil, errors.New("checksum mismatch: the file is corrupted")
	}
	dec := json.NewDecoder(bytes.NewReader(payload))
	dec.DisallowUnknownFields()
	var m Model
	if err := dec.Decode(&m); err != nil {
		return nil, fmt.Errorf("payload: %w", err)
	}
	if m.Version != version {
		return nil, fmt.Errorf("payload says format version %d, the header %d", m.Version, version)
	}
	if err := m.check(); err != nil {
		return nil, err
	}
	return &m, nil
}

// check verifies that the parts of a decoded model fit together.
func (m *Model) check() error {
	l := m.Map.Lattice
	if err := l.Validate(); err != nil {
		return errors.New(strings.TrimPrefix(err.Error(), "mapper: "))
	}
	u := l.Units()
	switch {
	case m.Map.Dim < 1 || len(m.Map.Codebook) != u*m.Map.Dim:
		return fmt.Errorf("codebook has %d values, want %d units × %d", len(m.Map.Codebook), u, m.Map.Dim)
	case len(m.UnitRegime) != u:
		return fmt.Errorf("%d unit regimes for %d units", len(m.UnitRegime), u)
	case len(m.QEQuantiles) != 0 && len(m.QEQuantiles) != qeSteps+1:
		return fmt.Errorf("%d error quantiles, want %d", len(m.QEQuantiles), qeSteps+1)
	}
	if sc := m.Scaler; sc == nil {
		return errors.New("no normalisation")
	} else if len(sc.Names) != m.Map.Dim || len(sc.Center) != m.Map.Dim || len(sc.Scale) != m.Map.Dim || len(sc.Weight) != m.Map.Dim {
		return fmt.Errorf("normalisation of %d names, %d centres, %d scales and %d weights for a map of dimension %d",
			len(sc.Names), len(sc.Center), len(sc.Scale), len(sc.Weight), m.Map.Dim)
	}
	if err := m.checkValues(); err != nil {
		return err
	}
	if err := m.Conditions.check(u); err != nil {
		return err
	}
	if lv := m.Levels; lv != nil {
		for id := range lv.Regimes {
			if !slices.ContainsFunc(m.Regimes, func(r mapper.Regime) bool { return r.ID == id }) {
				return fmt.Errorf("levels of regime %d, which the model does not have", id)
			}
		}
	}
	ids := make(map[int]bool)
	listed := 0
	for _, r := range m.Regimes {
		if ids[r.ID] {
			return fmt.Errorf("regime %d appears twice", r.ID)
		}
		if err := CheckLabel(r.Name, r.Status); err != nil {
			return fmt.Errorf("regime %d: %w", r.ID, err)
		}
		if len(r.Centroid) != m.Map.Dim {
			return fmt.Errorf("regime %d has a centroid of dimension %d, the map %d", r.ID, len(r.Centroid), m.Map.Dim)
		}
		for _, un := range r.Units {
			if un < 0 || un >= u || m.UnitRegime[un] != r.ID {
				return fmt.Errorf("regime %d lists unit %d, which is not one of its units", r.ID, un)
			}
		}
		ids[r.ID] = true
		listed += len(r.Units)
	}
	for un, id := range m.UnitRegime {
		if !ids[id] {
			return fmt.Errorf("unit %d belongs to regime %d, which the model does not have", un, id)
		}
	}
	if listed != u {
		return fmt.Errorf("the regimes list %d units, the map has %d", listed, u)
	}
	return m.checkPhases(ids)
}

// checkValues verifies the numbers a checksum cannot vouch for, since a
// hand-edited file carries a valid one: a zero or negative scale would
// divide every window by zero, a non-finite codebook or centroid makes
// every distance NaN, and settings outside their ranges would be used as
// they stand.
func (m *Model) checkValues() error {
	sc := m.Scaler
	seen := make(map[string]bool, len(sc.Names))
	for j, name := range sc.Names {
		switch {
		case seen[name]:
			return fmt.Errorf("normalisation: feature %q appears twice", name)
		case !finite(sc.Center[j]):
			return fmt.Errorf("normalisation: feature %q: centre %g is not a finite number", name, sc.Center[j])
		case !(sc.Scale[j] > 0) || !finite(sc.Scale[j]):
			return fmt.Errorf("normalisation: feature %q: scale %g must be a finite number > 0", name, sc.Scale[j])
		case !(sc.Weight[j] >= 0) || !finite(sc.Weight[j]):
			return fmt.Errorf("normalisation: feature %q: weight %g must be a finite number ≥ 0", name, sc.Weight[j])
		}
		seen[name] = true
	}
	for i, v := range m.Map.Codebook {
		if !finite(v) {
			return fmt.Errorf("codebook: unit %d: %g is not a finite number", i/m.Map.Dim, v)
		}
	}
	for _, r := range m.Regimes {
		for _, v := range r.Centroid {
			if !finite(v) {
				return fmt.Errorf("regime %d: centroid value %g is not a finite number", r.ID, v)
			}
		}
	}
	for i, q := range m.QEQuantiles {
		if !(q >= 0) || !finite(q) || i > 0 && q < m.QEQuantiles[i-1] {
			return fmt.Errorf("error quantile %d: %g: the quantiles must be finite, ≥ 0 and ascending", i, q)
		}
	}
	if err := m.FeatureConfig.Validate(); err != nil {
		return fmt.Errorf("window settings: %w", err)
	}
	return nil
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// LineageOrDerived returns the lineage of m: its own, or for a model that
// records none (one trained before lineages, or by a runner that does not
// set it) one derived from what its regime numbers mean: the feature
// schema, the lattice and the regime of every unit. Not from the codebook:
// two runs that differ only by rounding, such as the local and the Beam
// batch map, make the same regimes and so number them the same.
func (m *Model) LineageOrDerived() string {
	if m.Lineage != "" {
		return m.Lineage
	}
	h := sha256.New()
	for _, n := range m.FeatureNames {
		fmt.Fprintf(h, "%q ", n)
	}
	l := m.Map.Lattice
	fmt.Fprintf(h, "\n%d %d %t %t\n", l.Cols, l.Rows, l.Hex, l.Flat)
	for _, id := range m.UnitRegime {
		binary.Write(h, binary.LittleEndian, int64(id))
	}
	return hex.EncodeToString(h.Sum(nil)[:8])
}
