// Package faultwriter makes a writer fail part-way, as a full disk does,
// for the fault-injection tests of kinmap's outputs.
package faultwriter

import (
	"errors"
	"io"
)

// ErrFull is the error of a Writer that ran out of room.
var ErrFull = errors.New("no space left on device (injected)")

// Writer passes the first N bytes written to W, then fails with ErrFull.
type Writer struct {
	W io.Writer
	N int
}

func (f *Writer) Write(p []byte) (int, error) {
	if len(p) > f.N {
		k, _ := f.W.Write(p[:f.N])
		f.N = 0
		return k, ErrFull
	}
	f.N -= len(p)
	return f.W.Write(p)
}
