//go:build !race

package sim

const raceBuild = false
