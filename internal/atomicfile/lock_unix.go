//go:build unix

package atomicfile

import (
	"errors"
	"os"

	"golang.org/x/sys/unix"
)

// acquire takes an exclusive flock(2) on the lock file at path without
// blocking; busy reports that another process holds it. flock rather than
// a file made with O_EXCL: the kernel releases it when its holder dies, so
// a killed run never leaves a folder locked and no stale-lock guess is
// needed. x/sys/unix rather than syscall, which is frozen.
func acquire(path string) (f *os.File, busy bool, err error) {
	f, err = os.OpenFile(path, os.O_RDWR|os.O_CREATE, 0o644)
	if err != nil {
		return nil, false, err
	}
	err = unix.Flock(int(f.Fd()), unix.LOCK_EX|unix.LOCK_NB)
	if errors.Is(err, unix.EWOULDBLOCK) {
		f.Close()
		return nil, true, nil
	}
	if err != nil {
		f.Close()
		return nil, false, err
	}
	// The holder before removes the file as it unlocks: a lock on a file
	// no longer at path locks nothing, so try again on the new one.
	held, err1 := f.Stat()
	named, err2 := os.Stat(path)
	if err1 != nil || err2 != nil || !os.SameFile(held, named) {
		f.Close()
		return nil, true, nil
	}
	return f, false, nil
}

// release removes the lock file, then unlocks it.
func release(f *os.File, path string) {
	os.Remove(path)
	unix.Flock(int(f.Fd()), unix.LOCK_UN)
	f.Close()
}
