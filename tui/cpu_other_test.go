//go:build !unix

package tui

// processCPU is not measured here; the CPU metrics read 0.
func processCPU() int64 { return 0 }
