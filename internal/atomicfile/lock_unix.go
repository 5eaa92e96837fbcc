//go:build unix

package atomicfile

import (
	"errors"
	"os"

	"golang.org/x/sys/unix"
)

// tryLock takes an exclusive flock(2) on f without blocking; busy reports
// that another process holds it. flock rather than a lock file made with
// O_EXCL: the kernel releases it when its holder dies, so a killed run
// never leaves a folder locked and no stale-lock guess is needed.
func tryLock(f *os.File) (busy bool, err error) {
	err = unix.Flock(int(f.Fd()), unix.LOCK_EX|unix.LOCK_NB)
	if errors.Is(err, unix.EWOULDBLOCK) {
		return true, nil
	}
	return false, err
}

func unlock(f *os.File) error { return unix.Flock(int(f.Fd()), unix.LOCK_UN) }
