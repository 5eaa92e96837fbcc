//go:build !unix

package atomicfile

import (
	"errors"
	"io/fs"
	"os"
)

// acquire creates the lock file at path, which must not exist; busy
// reports that it does. Without flock(2) a lock file left by a killed
// process stays: the wait then ends in ErrBusy, whose message names it.
func acquire(path string) (f *os.File, busy bool, err error) {
	f, err = os.OpenFile(path, os.O_RDWR|os.O_CREATE|os.O_EXCL, 0o644)
	if errors.Is(err, fs.ErrExist) {
		return nil, true, nil
	}
	return f, false, err
}

// release closes and removes the lock file.
func release(f *os.File, path string) {
	f.Close()
	os.Remove(path)
}
