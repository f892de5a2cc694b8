//go:build race

package forecast

// raceBuild is true under the race detector, which slows the cup model
// about tenfold; the many-pair tests then run a few pairs.
const raceBuild = true
