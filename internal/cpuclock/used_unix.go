//go:build unix

package cpuclock

import (
	"syscall"
	"time"
)

// Used is the process's user plus system CPU time so far (getrusage,
// RUSAGE_SELF); 0 where it cannot be read.
func Used() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
