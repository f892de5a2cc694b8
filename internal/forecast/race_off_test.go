//go:build !race

package forecast

const raceBuild = false
