package atomicfile

import (
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
)

// Pending reports whether dir holds a journal of an interrupted commit,
// which Recover must settle before the folder is read.
func Pending(dir string) bool {
	items, _ := os.ReadDir(dir)
	for _, it := range items {
		if isJournal(it.Name()) {
			return true
		}
	}
	return false
}

// Recover settles what interrupted transactions left in dir, whose lock
// the caller holds, and says what it did. A journal whose home copy is in
// place belongs to a committed transaction, which it finishes in every
// folder; any other journal, to one that never committed, which it undoes
// by removing its temporary files. Temporary files that no journal names
// are left over from writes that never reached Commit; they are removed.
func Recover(dir string) ([]string, error) {
	items, err := os.ReadDir(dir)
	if err != nil {
		return nil, err
	}
	var notes []string
	for _, it := range items {
		name := it.Name()
		if !isJournal(name) {
			continue
		}
		id := strings.TrimSuffix(strings.TrimPrefix(name, tempPrefix), journalSuffix)
		b, err := os.ReadFile(filepath.Join(dir, name))
		if err != nil {
			return notes, err
		}
		var j journal
		if err := json.Unmarshal(b, &j); err != nil {
			return notes, fmt.Errorf("%s: unreadable journal of an interrupted write: %w", filepath.Join(dir, name), err)
		}
		if _, err := os.Stat(journalPath(j.Home, id)); err == nil {
			if err := apply(id, j); err != nil {
				return notes, fmt.Errorf("%s: finishing an interrupted write: %w", dir, err)
			}
			notes = append(notes, fmt.Sprintf("%s: finished a write that was interrupted after its commit (%d files)", dir, len(j.Renames)))
			continue
		}
		n := 0
		for _, r := range j.Renames {
			if err := os.Remove(r.From); err == nil {
				n++
			} else if !errors.Is(err, fs.ErrNotExist) {
				return notes, err
			}
		}
		if err := dropJournal(id, j); err != nil {
			return notes, err
		}
		notes = append(notes, fmt.Sprintf("%s: undid a write that was interrupted before its commit (%d temporary files removed; the earlier files stand)", dir, n))
	}
	items, err = os.ReadDir(dir)
	if err != nil {
		return notes, err
	}
	n, size := 0, int64(0)
	for _, it := range items {
		if !isTemp(it.Name()) {
			continue
		}
		if info, err := it.Info(); err == nil {
			size += info.Size()
		}
		if err := os.Remove(filepath.Join(dir, it.Name())); err != nil && !errors.Is(err, fs.ErrNotExist) {
			return notes, err
		}
		n++
	}
	if n > 0 {
		notes = append(notes, fmt.Sprintf("%s: removed %d temporary files (%d bytes) of an interrupted write; the earlier files stand", dir, n, size))
	}
	return notes, nil
}

func isJournal(name string) bool {
	return strings.HasPrefix(name, tempPrefix) && strings.HasSuffix(name, journalSuffix)
}

func isTemp(name string) bool {
	return strings.HasPrefix(name, tempPrefix) && strings.HasSuffix(name, tempSuffix)
}
