//go:build unix

package curvefile

import (
	"syscall"
	"time"
)

// cpuTime is the process's user+system CPU time so far; benchmarks divide
// by it as well as by wall time, since on a shared machine the wall clock
// also counts the time other processes held the cores.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return -1
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
