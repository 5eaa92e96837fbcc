package ingest

import (
	"errors"
	"fmt"
	"strings"
	"time"
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

// UnitError reports integer epoch times that look like another unit than
// the one they are read in: read in that unit they fall between 1990 and
// 2100, read in the one given they do not.
type UnitError struct {
	Sample int64  // an epoch time as written
	Given  string // the unit read, as Options.TimeUnit
	Likely string // the unit it looks like
}

func (e *UnitError) Error() string {
	return fmt.Sprintf("integer times such as %d look like epochs in %s, not %s", e.Sample, unitWords[e.Likely], unitWords[e.Given])
}

// unitWords name the units of Options.TimeUnit.
var unitWords = map[string]string{"s": "seconds", "ms": "milliseconds", "us": "microseconds", "ns": "nanoseconds"}

// likelyUnit returns the unit in which epoch v falls between 1990 and
// 2100, the years of digital sensor records (common practice, no source),
// or "" when none does. The units are 1000 times apart, and the span 110
// years, so at most one fits.
func likelyUnit(v int64) string {
	lo, hi := float64(time.Date(1990, 1, 1, 0, 0, 0, 0, time.UTC).Unix()), float64(time.Date(2100, 1, 1, 0, 0, 0, 0, time.UTC).Unix())
	for _, u := range []string{"s", "ms", "us", "ns"} {
		ns, _ := unitNanos(u)
		if s := float64(v) * float64(ns) / 1e9; s >= lo && s < hi {
			return u
		}
	}
	return ""
}
