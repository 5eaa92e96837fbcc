// Package labels reads and writes the user's names and statuses of
// regimes: a small CSV file that kinmap label applies to a model.
//
// The file has a header row and one row per regime (RFC 4180; comma or
// semicolon, as spreadsheets save it; a UTF-8 byte-order mark is ignored):
//
//	regime,name,status,description
//	1,baseline,normal,"flow median 41 m3/h (fleet 38); ..."
//	4,worn bearing,fault,...
//
// regime is the regime number; name is free text (at most
// model.MaxNameLen characters); status is normal, watch, fault or empty.
// Columns are found by their header, in any order; description is
// written by Write for orientation and ignored on reading; any other column
// is refused, so that a misspelt header cannot pass unnoticed. A row with
// an empty name and status clears that regime's label; regimes without a
// row keep theirs.
package labels

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"

	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/model"
)

// The columns of a labels file.
const (
	ColRegime      = "regime"
	ColName        = "name"
	ColStatus      = "status"
	ColDescription = "description"
)

// MaxBytes bounds the size of a labels file: a model has at most a few
// dozen regimes, and a file far larger is not a labels file.
const MaxBytes = 1 << 20

// Label is one row of a labels file.
type Label struct {
	Regime int    // regime number
	Name   string // "" for none
	Status string // one of model.Statuses, or "" for none
	Row    int    // line of the file, from 1 for the header
}

// Error is an error in a labels file, at a row (0 when it concerns the
// whole file) and in a column ("" when none).
type Error struct {
	Path   string // "" when read from a reader
	Row    int
	Column string
	Err    error
}

func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString("labels: ")
	if e.Path != "" {
		b.WriteString(e.Path + ": ")
	}
	if e.Row > 0 {
		fmt.Fprintf(&b, "row %d: ", e.Row)
	}
	if e.Column != "" {
		fmt.Fprintf(&b, "column %q: ", e.Column)
	}
	b.WriteString(e.Err.Error())
	return b.String()
}

func (e *Error) Unwrap() error { return e.Err }

// Read reads a labels file. It refuses, naming the row and column, a
// missing header or regime column, an unknown or repeated column, a regime
// number that is not a positive integer, a regime given twice, an unknown
// status and a name model.CheckLabel refuses. Names and statuses are
// trimmed of surrounding spaces and statuses read in any case; rows with
// every field empty, as spreadsheets leave, are skipped.
func Read(r io.Reader) ([]Label, error) {
	data, err := io.ReadAll(io.LimitReader(r, MaxBytes+1))
	if err != nil {
		return nil, &Error{Err: err}
	}
	if len(data) > MaxBytes {
		return nil, &Error{Err: fmt.Errorf("larger than %d bytes: not a labels file", MaxBytes)}
	}
	data = bytes.TrimPrefix(data, []byte("\uFEFF"))
	cr := csv.NewReader(bytes.NewReader(data))
	first, _, _ := bytes.Cut(data, []byte("\n"))
	if !bytes.ContainsRune(first, ',') && bytes.ContainsRune(first, ';') {
		cr.Comma = ';'
	}
	header, err := cr.Read()
	if err == io.EOF {
		return nil, &Error{Err: errors.New("empty file: want a header row regime,name,status")}
	}
	if err != nil {
		return nil, csvError(err)
	}
	col := map[string]int{}
	for i, h := range header {
		h = strings.ToLower(strings.TrimSpace(h))
		switch _, seen := col[h]; {
		case seen:
			return nil, &Error{Row: 1, Column: h, Err: errors.New("the column appears twice")}
		case h != ColRegime && h != ColName && h != ColStatus && h != ColDescription:
			return nil, &Error{Row: 1, Column: h, Err: errors.New("unknown column: want regime, name, status and optionally description")}
		}
		col[h] = i
	}
	_, hasName := col[ColName]
	_, hasStatus := col[ColStatus]
	if _, ok := col[ColRegime]; !ok || !hasName && !hasStatus {
		return nil, &Error{Row: 1, Err: errors.New("the header must name the columns regime and name, status or both")}
	}
	field := func(rec []string, name string) string {
		if i, ok := col[name]; ok {
			return strings.TrimSpace(rec[i])
		}
		return ""
	}
	var out []Label
	rowOf := map[int]int{}
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			return out, nil
		}
		if err != nil {
			return nil, csvError(err)
		}
		row, _ := cr.FieldPos(0)
		if strings.TrimSpace(strings.Join(rec, "")) == "" {
			continue
		}
		l := Label{Name: field(rec, ColName), Status: strings.ToLower(field(rec, ColStatus)), Row: row}
		id := field(rec, ColRegime)
		if l.Regime, err = strconv.Atoi(id); err != nil || l.Regime < 1 {
			return nil, &Error{Row: row, Column: ColRegime, Err: fmt.Errorf("%q is not a regime number (a whole number from 1)", id)}
		}
		if first, ok := rowOf[l.Regime]; ok {
			return nil, &Error{Row: row, Column: ColRegime, Err: fmt.Errorf("regime %d is labelled again (first on row %d)", l.Regime, first)}
		}
		rowOf[l.Regime] = row
		if err := model.CheckLabel(l.Name, ""); err != nil {
			return nil, &Error{Row: row, Column: ColName, Err: err}
		}
		if err := model.CheckLabel("", l.Status); err != nil {
			return nil, &Error{Row: row, Column: ColStatus, Err: err}
		}
		out = append(out, l)
	}
}

// csvError turns an error of encoding/csv into an Error at its line.
func csvError(err error) error {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return &Error{Row: pe.Line, Err: pe.Err}
	}
	return &Error{Err: err}
}

// ReadFile reads the labels file at path; errors name it.
func ReadFile(path string) ([]Label, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("labels: %w", err)
	}
	defer f.Close()
	ls, err := Read(f)
	var le *Error
	if errors.As(err, &le) {
		le.Path = path
	}
	return ls, err
}

// Write writes the labels of regs as a labels file, one row per regime
// in the order given, with each regime's description for orientation:
// the file to start from.
func Write(w io.Writer, regs []mapper.Regime) error {
	c := csv.NewWriter(w)
	c.UseCRLF = true
	if err := c.Write([]string{ColRegime, ColName, ColStatus, ColDescription}); err != nil {
		return fmt.Errorf("labels: %w", err)
	}
	for _, g := range regs {
		if err := c.Write([]string{strconv.Itoa(g.ID), g.Name, g.Status, g.Description}); err != nil {
			return fmt.Errorf("labels: %w", err)
		}
	}
	c.Flush()
	if err := c.Error(); err != nil {
		return fmt.Errorf("labels: %w", err)
	}
	return nil
}

// Apply sets the labels ls on the regimes of m and returns one line per
// regime whose label changed, such as `regime 2: "baseline" normal (was
// unlabelled)`. A label naming a regime the model lacks is an error; m is
// left unchanged on any error.
func Apply(m *model.Model, ls []Label) ([]string, error) {
	at := make(map[int]int, len(m.Regimes))
	for i, g := range m.Regimes {
		at[g.ID] = i
	}
	for _, l := range ls {
		if _, ok := at[l.Regime]; !ok {
			return nil, &Error{Row: l.Row, Column: ColRegime, Err: fmt.Errorf("the model has no regime %d (it has %s)", l.Regime, idList(m.Regimes))}
		}
		if err := model.CheckLabel(l.Name, l.Status); err != nil {
			return nil, &Error{Row: l.Row, Err: err}
		}
	}
	var changed []string
	for _, l := range ls {
		g := &m.Regimes[at[l.Regime]]
		if g.Name == l.Name && g.Status == l.Status {
			continue
		}
		changed = append(changed, fmt.Sprintf("regime %d: %s (was %s)", g.ID, Words(l.Name, l.Status), Words(g.Name, g.Status)))
		g.Name, g.Status = l.Name, l.Status
	}
	return changed, nil
}

// Words writes a label for people: `"baseline" normal`, `"baseline"`,
// `normal`, or `unlabelled`.
func Words(name, status string) string {
	var parts []string
	if name != "" {
		parts = append(parts, strconv.Quote(name))
	}
	if status != "" {
		parts = append(parts, status)
	}
	if len(parts) == 0 {
		return "unlabelled"
	}
	return strings.Join(parts, " ")
}

func idList(regs []mapper.Regime) string {
	ids := make([]string, len(regs))
	for i, g := range regs {
		ids[i] = strconv.Itoa(g.ID)
	}
	return strings.Join(ids, ", ")
}
