// Package cpuclock reads the CPU time the process has used, for
// benchmarks that report CPU seconds beside wall seconds: on a shared
// machine the wall clock also counts the time other processes held the
// cores, the CPU clock does not.
package cpuclock
