//go:build race

package sim

// raceBuild is true under the race detector, which slows this
// single-goroutine numerical code about tenfold; the recovery suite then
// runs every fifth case (all families still), the full set runs without it.
const raceBuild = true
