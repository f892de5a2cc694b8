//go:build unix

package forecast

import (
	"syscall"
	"time"
)

// cpuTime is the process's user+system CPU time so far: BenchmarkAdvise
// reports it per sample beside the wall time, since on a shared machine
// the wall clock also counts the time other processes held the core.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return -1
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
