package ingest

import (
	"errors"
	"fmt"
	"strings"
)

// ErrUsage marks errors caused by the way the package was called (options,
// paths, patterns) rather than by what the files hold; errors.Is(err,
// ErrUsage) tells them apart. Every other error of Read and ReadRegister is
// about the data and is usually an *Error.
var ErrUsage = errors.New("ingest: usage error")

type usageError struct{ msg string }

func (e *usageError) Error() string        { return "ingest: " + e.msg }
func (e *usageError) Is(target error) bool { return target == ErrUsage }

func usagef(format string, args ...any) error {
	return &usageError{fmt.Sprintf(format, args...)}
}

// Error is a problem with the content of a file. Its message is one line:
//
//	ingest: dump.parquet: row 12: column "time": int96 timestamps are not supported
type Error struct {
	File   string // path as given; empty when the problem is not tied to one file
	Line   int    // line of a CSV file, 0 when unknown or not applicable
	Row    int64  // row of a Parquet or Arrow file counted from 1, 0 when unknown
	Column string // empty when the problem is not tied to one column
	Err    error
}

func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString("ingest: ")
	if e.File != "" {
		b.WriteString(e.File + ": ")
	}
	if e.Line > 0 {
		fmt.Fprintf(&b, "line %d: ", e.Line)
	}
	if e.Row > 0 {
		fmt.Fprintf(&b, "row %d: ", e.Row)
	}
	if e.Column != "" {
		fmt.Fprintf(&b, "column %q: ", e.Column)
	}
	// Messages of the underlying readers sometimes span lines.
	b.WriteString(strings.Join(strings.Fields(e.Err.Error()), " "))
	return b.String()
}

func (e *Error) Unwrap() error { return e.Err }

// colErr is a problem with one column, its file filled in by the caller.
func colErr(column, format string, args ...any) *Error {
	return &Error{Column: column, Err: fmt.Errorf(format, args...)}
}

// inFile ties an error to the file it came from, unless it is a usage error
// or already names a file.
func inFile(err error, path string) error {
	if err == nil || errors.Is(err, ErrUsage) {
		return err
	}
	var e *Error
	if errors.As(err, &e) {
		if e.File == "" {
			e.File = path
		}
		return err
	}
	return &Error{File: path, Err: err}
}
