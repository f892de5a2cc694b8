//go:build !unix

package curvefile

// openFlags: no FIFOs to wait on here.
const openFlags = 0
