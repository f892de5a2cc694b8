//go:build !unix

package curvefile

import "time"

// cpuTime is not measured here.
func cpuTime() time.Duration { return -1 }
