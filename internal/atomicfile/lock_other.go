//go:build !unix

package atomicfile

import (
	"errors"
	"os"
)

// tryLock fails where flock(2) is missing: without a lock that the system
// releases when its holder dies, two runs could interleave or a killed run
// could lock a folder for good.
func tryLock(*os.File) (bool, error) {
	return false, errors.New("folder locks need a Unix system")
}

func unlock(*os.File) error { return nil }
