package faultwriter

import (
	"bytes"
	"errors"
	"testing"
)

// The bytes before the fault arrive, the write that crosses it reports
// how many did, and every later write fails.
func TestWriter(t *testing.T) {
	var buf bytes.Buffer
	w := &Writer{W: &buf, N: 5}
	if n, err := w.Write([]byte("abc")); n != 3 || err != nil {
		t.Errorf("first write: %d, %v", n, err)
	}
	if n, err := w.Write([]byte("defg")); n != 2 || !errors.Is(err, ErrFull) {
		t.Errorf("crossing write: %d, %v", n, err)
	}
	if n, err := w.Write([]byte("h")); n != 0 || !errors.Is(err, ErrFull) {
		t.Errorf("later write: %d, %v", n, err)
	}
	if buf.String() != "abcde" {
		t.Errorf("wrote %q, want abcde", buf.String())
	}
}
