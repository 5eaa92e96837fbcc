//go:build unix

package mapper

import (
	"syscall"
	"time"
)

// cpuTime returns the processor time the process has used, user and
// system: on a shared machine it measures a phase better than the clock.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
