package atomicfile

import (
	"fmt"
	"os"
	"path/filepath"
	"time"
)

// LockFile is the name of the file that a folder's lock is taken on.
const LockFile = ".kinmap.lock"

// ErrBusy reports that another process held a folder's lock for longer
// than the wait allowed.
type ErrBusy struct {
	Dir  string
	Wait time.Duration
}

func (e *ErrBusy) Error() string {
	return fmt.Sprintf("%s: another kinmap run has held it for more than %v (lock file %s)", e.Dir, e.Wait, LockFile)
}

// Lock is an exclusive lock on a folder, held until Unlock.
type Lock struct {
	f    *os.File
	path string
}

// LockDir takes the lock of folder dir, which must exist, waiting at most
// wait for another holder to release it. The lock file exists only while
// the lock is held.
func LockDir(dir string, wait time.Duration) (*Lock, error) {
	path := filepath.Join(dir, LockFile)
	deadline := time.Now().Add(wait)
	for pause := time.Millisecond; ; pause = min(2*pause, 100*time.Millisecond) {
		f, busy, err := acquire(path)
		switch {
		case err != nil:
			// The lock file is kinmap's own; the folder is what the user named.
			return nil, named(dir, err)
		case !busy:
			return &Lock{f: f, path: path}, nil
		case time.Now().After(deadline):
			return nil, &ErrBusy{Dir: dir, Wait: wait}
		}
		time.Sleep(pause)
	}
}

// Unlock releases the lock and removes its file.
func (l *Lock) Unlock() { release(l.f, l.path) }
