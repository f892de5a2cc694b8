//go:build unix

package curvefile

import "syscall"

// openFlags make the open of a curve file return at once, whatever it
// turns out to be (a FIFO swapped in after the check would otherwise wait
// for a writer); reads of a regular file are not affected.
const openFlags = syscall.O_NONBLOCK
