package cpuclock

import (
	"runtime"
	"testing"
	"time"
)

// TestUsedGrows: a busy loop of some milliseconds shows on the CPU clock,
// and the clock never goes back.
func TestUsedGrows(t *testing.T) {
	if runtime.GOOS == "windows" || runtime.GOOS == "plan9" {
		t.Skip("no getrusage here: Used reads 0")
	}
	before := Used()
	x, deadline := 1.0, time.Now().Add(30*time.Millisecond)
	for time.Now().Before(deadline) {
		for range 1000 {
			x = x*1.0000001 + 1e-9
		}
	}
	after := Used()
	if after <= before || x == 0 {
		t.Fatalf("CPU time %v then %v after a 30 ms busy loop", before, after)
	}
}
