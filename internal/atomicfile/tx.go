package atomicfile

import (
	"bufio"
	"crypto/rand"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"sync"
	"time"
)

// The names of a transaction's own files in the folders it writes to.
const (
	tempPrefix    = ".kinmap-"
	tempSuffix    = ".tmp"
	journalSuffix = ".journal"
)

// Tx is a set of file writes and removals in one or more folders that take
// effect together at Commit, or not at all.
type Tx struct {
	// Wrap, when set, wraps the writer of every file, which is given by its
	// final path. Fault-injection tests make writes fail with it.
	Wrap func(path string, w io.Writer) io.Writer

	id      string
	home    string
	dirs    []string // absolute, home first
	locks   []*Lock
	created []string // folders the transaction made, outer first, removed again by Abort when empty
	renames []rename
	removes []string
	notes   []string
	done    bool
	mu      sync.Mutex // Create and Remove may be called concurrently
	seq     int        // files created, numbering the temporary names
}

// rename is one file to move into place at commit.
type rename struct {
	From string `json:"from"`
	To   string `json:"to"`
}

// journal is the record of a commit, one copy in each folder.
type journal struct {
	Home    string   `json:"home"` // the folder whose copy decides the commit
	Dirs    []string `json:"dirs"`
	Renames []rename `json:"renames"`
	Removes []string `json:"removes"`
}

// Begin starts a transaction that writes into home and the folders others,
// creating them if needed. It takes their locks, waiting at most wait for
// each, in a fixed order so that two transactions cannot deadlock, then
// recovers what an interrupted transaction left in them (see Notes).
func Begin(home string, others []string, wait time.Duration) (*Tx, error) {
	id := make([]byte, 6)
	rand.Read(id)
	t := &Tx{id: hex.EncodeToString(id)}
	var err error
	if t.home, err = filepath.Abs(home); err != nil {
		return nil, err
	}
	t.dirs = []string{t.home}
	for _, d := range others {
		a, err := filepath.Abs(d)
		if err != nil {
			return nil, err
		}
		if !slices.Contains(t.dirs, a) {
			t.dirs = append(t.dirs, a)
		}
	}
	order := slices.Clone(t.dirs)
	slices.Sort(order)
	for _, d := range order {
		if _, err := os.Stat(d); errors.Is(err, fs.ErrNotExist) {
			if err := os.MkdirAll(d, 0o755); err != nil {
				t.Abort()
				return nil, err
			}
			t.created = append(t.created, d)
		}
		l, err := LockDir(d, wait)
		if err != nil {
			t.Abort()
			return nil, err
		}
		t.locks = append(t.locks, l)
		notes, err := Recover(d)
		t.notes = append(t.notes, notes...)
		if err != nil {
			t.Abort()
			return nil, err
		}
	}
	return t, nil
}

// Notes says what Begin recovered from interrupted transactions.
func (t *Tx) Notes() []string { return t.notes }

// Create writes the file that will be at path after Commit; files are
// switched into place in the order created. It is safe for concurrent use. Its folder
// must be one of the transaction's or below one; write gets a buffered
// writer. The file is written in full and synced now, under a temporary
// name in the transaction's folder above path; an error names path.
func (t *Tx) Create(path string, write func(io.Writer) error) error {
	path, err := filepath.Abs(path)
	if err != nil {
		return err
	}
	dir := t.dirOf(path)
	if dir == "" {
		return fmt.Errorf("%s: outside the folders of the write", path)
	}
	var made []string // the folders above path that are not there yet, deepest first
	for d := filepath.Dir(path); d != dir; d = filepath.Dir(d) {
		if _, err := os.Stat(d); err == nil {
			break
		}
		made = append(made, d)
	}
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return err
	}
	slices.Reverse(made)
	t.mu.Lock()
	t.created = append(t.created, made...)
	t.seq++
	tmp := filepath.Join(dir, fmt.Sprintf("%s%s-%d-%s%s", tempPrefix, t.id, t.seq, filepath.Base(path), tempSuffix))
	t.mu.Unlock()
	if err := writeTemp(tmp, path, t.Wrap, write); err != nil {
		return err
	}
	t.mu.Lock()
	t.renames = append(t.renames, rename{From: tmp, To: path})
	t.mu.Unlock()
	return nil
}

// Remove removes the file at path at Commit, if it is there.
func (t *Tx) Remove(path string) error {
	path, err := filepath.Abs(path)
	if err != nil {
		return err
	}
	if t.dirOf(path) == "" {
		return fmt.Errorf("%s: outside the folders of the write", path)
	}
	t.mu.Lock()
	t.removes = append(t.removes, path)
	t.mu.Unlock()
	return nil
}

// dirOf returns the transaction's folder that holds path, "" for none.
func (t *Tx) dirOf(path string) string {
	for _, d := range t.dirs {
		if rel, err := filepath.Rel(d, path); err == nil && rel != "." && !strings.HasPrefix(rel, ".."+string(filepath.Separator)) && rel != ".." {
			return d
		}
	}
	return ""
}

// writeTemp writes tmp in full through write and syncs it; errors name
// path, the file the user knows.
func writeTemp(tmp, path string, wrap func(string, io.Writer) io.Writer, write func(io.Writer) error) error {
	f, err := os.OpenFile(tmp, os.O_RDWR|os.O_CREATE|os.O_EXCL, 0o644)
	if err != nil {
		return named(path, err)
	}
	var w io.Writer = f
	if wrap != nil {
		w = wrap(path, w)
	}
	bw := bufio.NewWriterSize(w, 1<<16)
	err = write(bw)
	if err == nil {
		err = bw.Flush()
	}
	if err == nil {
		err = f.Sync()
	}
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		os.Remove(tmp)
		return named(path, err)
	}
	return nil
}

// named returns err about path: an error of the operating system names
// the temporary file, which the user never asked for.
func named(path string, err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return &fs.PathError{Op: pe.Op, Path: path, Err: pe.Err}
	}
	return fmt.Errorf("%s: %w", path, err)
}

// Commit switches every file created into place and makes the removals,
// then releases the locks. Before the commit point (the home journal in
// place) a failure leaves every folder as it was; after it, the next
// Begin or Recover on any of the folders finishes the commit.
func (t *Tx) Commit() error {
	if t.done {
		return errors.New("atomicfile: transaction already ended")
	}
	// What would make a rename fail after the commit point is refused
	// before it: the folders are ours and writable, so only a folder in the
	// place of a file remains.
	for _, r := range t.renames {
		if info, err := os.Lstat(r.To); err == nil && info.IsDir() {
			t.Abort()
			return fmt.Errorf("%s: a folder is in the way", r.To)
		}
	}
	j := journal{Home: t.home, Dirs: t.dirs, Renames: t.renames, Removes: t.removes}
	b, err := json.Marshal(j)
	if err != nil {
		t.Abort()
		return err
	}
	// Home last: its copy is the commit point.
	for _, d := range append(slices.Clone(t.dirs[1:]), t.home) {
		if err := writeJournal(d, t.id, b); err != nil {
			t.Abort()
			return err
		}
	}
	t.done = true
	defer t.unlock()
	if err := apply(t.id, j); err != nil {
		return fmt.Errorf("%w (the next run on %s finishes it)", err, t.home)
	}
	return nil
}

// Abort removes the files written and the journals placed, and releases
// the locks. It does nothing after Commit.
func (t *Tx) Abort() {
	if t.done {
		return
	}
	t.done = true
	for _, r := range t.renames {
		os.Remove(r.From)
	}
	for _, d := range t.dirs {
		os.Remove(journalPath(d, t.id))
		os.Remove(filepath.Join(d, tempPrefix+t.id+"-journal"+tempSuffix))
	}
	t.unlock()
	for _, d := range slices.Backward(t.created) {
		os.Remove(d) // only when empty
	}
}

func (t *Tx) unlock() {
	for _, l := range t.locks {
		l.Unlock()
	}
	t.locks = nil
}

func journalPath(dir, id string) string {
	return filepath.Join(dir, tempPrefix+id+journalSuffix)
}

// writeJournal places the journal b in dir, atomically and durably.
func writeJournal(dir, id string, b []byte) error {
	tmp := filepath.Join(dir, tempPrefix+id+"-journal"+tempSuffix)
	if err := writeTemp(tmp, journalPath(dir, id), nil, func(w io.Writer) error { _, err := w.Write(b); return err }); err != nil {
		return err
	}
	if err := os.Rename(tmp, journalPath(dir, id)); err != nil {
		os.Remove(tmp)
		return err
	}
	syncDir(dir)
	return nil
}

// apply makes the renames and removals of a committed journal, then
// removes its copies, home last. Each step is idempotent: a rename whose
// temporary file is gone was made before.
func apply(id string, j journal) error {
	synced := map[string]bool{}
	for _, r := range j.Renames {
		if err := os.Rename(r.From, r.To); err != nil && !errors.Is(err, fs.ErrNotExist) {
			return err
		}
		synced[filepath.Dir(r.To)] = true
	}
	for _, p := range j.Removes {
		if err := os.Remove(p); err != nil && !errors.Is(err, fs.ErrNotExist) {
			return err
		}
		synced[filepath.Dir(p)] = true
	}
	for d := range synced {
		syncDir(d)
	}
	return dropJournal(id, j)
}

// dropJournal removes the copies of a journal, home last, so that a copy
// without its home always means a commit that never happened.
func dropJournal(id string, j journal) error {
	for _, d := range j.Dirs {
		if d == j.Home {
			continue
		}
		if err := os.Remove(journalPath(d, id)); err != nil && !errors.Is(err, fs.ErrNotExist) {
			return err
		}
		syncDir(d)
	}
	if err := os.Remove(journalPath(j.Home, id)); err != nil && !errors.Is(err, fs.ErrNotExist) {
		return err
	}
	syncDir(j.Home)
	return nil
}

// syncDir makes the renames in dir durable (common practice on POSIX
// systems, no source). It is best effort: some file systems cannot sync a
// folder, and the files themselves are already synced.
func syncDir(dir string) {
	if d, err := os.Open(dir); err == nil {
		d.Sync()
		d.Close()
	}
}

// WriteFile writes the file at path through write, aside and then renamed
// into place, so that a reader sees the old file or the new one, never
// part of one. It takes no lock: a single rename needs none.
func WriteFile(path string, write func(io.Writer) error) error {
	id := make([]byte, 6)
	rand.Read(id)
	tmp := filepath.Join(filepath.Dir(path), tempPrefix+hex.EncodeToString(id)+"-"+filepath.Base(path)+tempSuffix)
	if err := writeTemp(tmp, path, nil, write); err != nil {
		return err
	}
	if err := os.Rename(tmp, path); err != nil {
		os.Remove(tmp)
		return named(path, err)
	}
	syncDir(filepath.Dir(path))
	return nil
}
