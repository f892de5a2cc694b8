//go:build !unix

package forecast

import "time"

// cpuTime is not measured here.
func cpuTime() time.Duration { return -1 }
