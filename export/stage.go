package export

import (
	"bufio"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// stage writes a set of files as hidden temporary files in their folder and
// renames them into place only when all were written, so that a failure
// leaves no half-written file and the outputs of an earlier run untouched.
type stage struct {
	dir   string
	names []string          // final names, in the order written
	temps map[string]string // final name → temporary path
	err   error             // first failure; later adds are skipped
}

func newStage(dir string) (*stage, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, fmt.Errorf("export: %w", err)
	}
	return &stage{dir: dir, temps: map[string]string{}}, nil
}

// add writes one file through write, unless an earlier add failed.
func (s *stage) add(name string, write func(io.Writer) error) {
	if s.err != nil {
		return
	}
	if _, dup := s.temps[name]; dup || name != filepath.Base(name) || name == "." || name == ".." {
		s.err = fmt.Errorf("export: %q: not a distinct plain file name", name)
		return
	}
	f, err := os.CreateTemp(s.dir, "."+name+".*.tmp")
	if err != nil {
		s.err = fmt.Errorf("export: %w", err)
		return
	}
	s.temps[name] = f.Name()
	s.names = append(s.names, name)
	bw := bufio.NewWriter(f)
	err = write(bw)
	if err == nil {
		err = bw.Flush()
	}
	if err == nil {
		err = f.Chmod(0o644) // CreateTemp makes 0600; outputs are for sharing
	}
	if err == nil {
		err = f.Sync()
	}
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		s.err = fmt.Errorf("export: %s: %w", filepath.Join(s.dir, name), err)
	}
}

// commit renames every staged file into place, or removes them all when an
// add failed, and returns the first error.
func (s *stage) commit() error {
	if s.err != nil {
		s.abort()
		return s.err
	}
	for i, name := range s.names {
		if err := os.Rename(s.temps[name], filepath.Join(s.dir, name)); err != nil {
			// Earlier renames cannot be undone; the rest stay as they were.
			s.names = s.names[i:]
			s.abort()
			return fmt.Errorf("export: %w", err)
		}
	}
	s.names = nil
	syncDir(s.dir)
	return nil
}

// abort removes the staged files that were not renamed.
func (s *stage) abort() {
	for _, name := range s.names {
		os.Remove(s.temps[name])
	}
	s.names = nil
}

// syncDir makes the renames durable (common practice on POSIX systems, no
// source). It is best effort: some file systems cannot sync a folder, and
// the files themselves are already synced.
func syncDir(dir string) {
	if d, err := os.Open(dir); err == nil {
		d.Sync()
		d.Close()
	}
}
