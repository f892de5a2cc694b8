//go:build !unix

package store

import "time"

// cpuTime is not measured here; the benchmark's cpu-ns/op then reads 0.
func cpuTime() time.Duration { return 0 }
