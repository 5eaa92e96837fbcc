package mapper

import (
	"bufio"
	"bytes"
	"crypto/sha256"
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
)

// FormatVersion is the version of the model file this package writes, and
// the newest it reads. Version 2 added the lineage, which a version 1 file
// lacks; it reads as before. Version 3 records how the number of regimes
// was reached (Choice) instead of the Davies–Bouldin scores, which older
// files keep. Version 4 records the lattice's shape by name (cells and
// surface) instead of the booleans Hex and Flat; older files read as before.
const FormatVersion = 4

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

// Fit trains a map on the rows of x, whose columns names names, assigns the
// windows, measures the quality, finds and describes the regimes, and
// returns the model with the assignments of x. tl holds each site's rows
// in time order, which FindRegimes decodes; no sequences count every row
// as a site of its own. The caller fills FeatureNames, FeatureConfig and
// Scaler.
func Fit(x *mat.Dense, names []string, tl Timelines, cfg Config) (*Model, []Assignment, error) {
	if err := checkNames(x, names); err != nil {
		return nil, nil, err
	}
	m, cfg, err := InitMap(x, cfg)
	if err != nil {
		return nil, nil, err
	}
	train(m, x, cfg)
	return finish(m, x, names, tl, cfg)
}

// Update continues training prev's map on x (see TrainFrom), derives the
// regimes again with cfg.Regimes (tl as for Fit), and numbers them after prev's regimes
// with MatchRegimes. The model returned keeps prev's feature schema,
// feature settings and scaler; the changes list every renumbering, split
// and merge. Names and statuses follow the regime numbers (CarryLabels).
func Update(prev *Model, x *mat.Dense, names []string, tl Timelines, cfg Config) (*Model, []Assignment, []RegimeChange, error) {
	if err := checkNames(x, names); err != nil {
		return nil, nil, nil, err
	}
	m, cfg, err := trainFrom(&prev.Map, x, cfg)
	if err != nil {
		return nil, nil, nil, err
	}
	next, asg, err := finish(m, x, names, tl, cfg)
	if err != nil {
		return nil, nil, nil, err
	}
	ids, changes, err := MatchRegimes(prev.Regimes, next.Regimes)
	if err != nil {
		return nil, nil, nil, err
	}
	if err := next.Renumber(ids); err != nil {
		return nil, nil, nil, err
	}
	CarryLabels(prev.Regimes, next.Regimes)
	next.FeatureNames = slices.Clone(prev.FeatureNames)
	next.FeatureConfig = prev.FeatureConfig
	next.Scaler = prev.Scaler
	return next, asg, changes, nil
}

func checkNames(x *mat.Dense, names []string) error {
	if x == nil {
		return fmt.Errorf("mapper: no training windows")
	}
	if _, d := x.Dims(); d != len(names) {
		return fmt.Errorf("mapper: %d feature names for %d columns", len(names), d)
	}
	return nil
}

// finish builds the model of a trained map.
func finish(m *Map, x *mat.Dense, names []string, tl Timelines, cfg Config) (*Model, []Assignment, error) {
	asg := m.Assign(x, cfg.Workers)
	md, err := NewModel(m, x, names, tl, cfg, asg)
	return md, asg, err
}

// NewModel builds the model of a map trained with the complete settings cfg
// (Config.WithDefaults) on x, whose windows landed at asg and whose sites'
// windows in time order tl holds (no sequences: every window a site of its
// own):
// the regimes (FindRegimes on those windows, then Describe), the quality and
// the quantiles of the training quantization errors. Fit and Update call
// it after their epochs; a runner that trains the map elsewhere calls it
// too. The caller fills FeatureNames, FeatureConfig and Scaler.
func NewModel(m *Map, x *mat.Dense, names []string, tl Timelines, cfg Config, asg []Assignment) (*Model, error) {
	if tl.Sequences == nil {
		n, _ := x.Dims()
		tl.Sequences = make([][]int, n)
		for i := range tl.Sequences {
			tl.Sequences[i] = []int{i}
		}
	}
	groups, choice, err := FindRegimes(m, cfg.Regimes, &Windows{X: x, Assignments: asg, Timelines: tl})
	if err != nil {
		return nil, err
	}
	regs, err := Describe(m, groups, x, asg, names)
	if err != nil {
		return nil, err
	}
	unitRegime := make([]int, len(groups))
	for u, g := range groups {
		unitRegime[u] = regs[g].ID
	}
	cfg.Progress = nil
	return &Model{
		Version:     FormatVersion,
		Map:         *m,
		Regimes:     regs,
		UnitRegime:  unitRegime,
		Training:    cfg,
		Quality:     m.Quality(asg),
		QEQuantiles: qeQuantiles(asg),
		Windows:     len(asg),
		Choice:      choice,
	}, nil
}

// qeQuantiles returns the quantization errors at quantiles 0, 0.001, …, 1,
// interpolated linearly between order statistics: the sample quantile of
// definition 7 of R. J. Hyndman and Y. Fan, "Sample quantiles in
// statistical packages", The American Statistician 50(4), 1996.
func qeQuantiles(asg []Assignment) []float64 {
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

// Renumber gives regime i the number ids[i] (as from MatchRegimes) and
// updates UnitRegime to match. The numbers must be positive and distinct.
func (m *Model) Renumber(ids []int) error {
	if len(ids) != len(m.Regimes) {
		return fmt.Errorf("mapper: %d numbers for %d regimes", len(ids), len(m.Regimes))
	}
	seen := make(map[int]bool)
	old := make(map[int]int)
	for i, id := range ids {
		if id < 1 || seen[id] {
			return fmt.Errorf("mapper: regime number %d is not positive or is repeated", id)
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
			return fmt.Errorf("mapper: the feature table has feature %q twice", n)
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
		return fmt.Errorf("mapper: the feature table does not match the model, which uses the channels %s: %s",
			strings.Join(features.Channels(m.FeatureNames), ", "), strings.Join(parts, "; "))
	}
	for i, n := range names {
		if n != m.FeatureNames[i] {
			return fmt.Errorf("mapper: the feature table has the model's features in another order: column %d is %q, the model has %q", i, n, m.FeatureNames[i])
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
		return fmt.Errorf("mapper: model: %w", err)
	}
	sum := sha256.Sum256(payload)
	if _, err := fmt.Fprintf(w, "%s %d\n%d %s\n", magic, FormatVersion, len(payload), hex.EncodeToString(sum[:])); err != nil {
		return fmt.Errorf("mapper: model: %w", err)
	}
	if _, err := w.Write(payload); err != nil {
		return fmt.Errorf("mapper: model: %w", err)
	}
	return nil
}

// ReadModel reads a model written by Write. It checks the format version,
// the length and the checksum of the payload and the consistency of what it
// decodes before returning anything, so a truncated, corrupted or newer file
// is refused whole.
func ReadModel(r io.Reader) (*Model, error) {
	m, err := readModel(r)
	if err != nil {
		return nil, fmt.Errorf("mapper: model: %w", err)
	}
	return m, nil
}

// WriteFile writes the model to path, aside and then renamed into place,
// so that a reader never sees half a model; an error names path.
func (m *Model) WriteFile(path string) error {
	err := atomicfile.WriteFile(path, func(w io.Writer) error { return errors.Unwrap(m.Write(w)) })
	if err != nil {
		return fmt.Errorf("mapper: %w", err)
	}
	return nil
}

// ReadModelFile reads the model file at path.
func ReadModelFile(path string) (*Model, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("mapper: %w", err)
	}
	defer f.Close()
	m, err := readModel(bufio.NewReader(f))
	if err != nil {
		return nil, fmt.Errorf("mapper: %s: %w", path, err)
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
	return nil
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
