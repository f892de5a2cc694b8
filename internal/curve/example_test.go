package curve_test

import (
	"fmt"

	"github.com/undercool-foundry/undercool/internal/curve"
)

// Smoothing and differentiating a constructed (not measured) straight cooling
// line with one spike, sampled at 10 Hz: the spike is removed by taking a
// neighbour's reading, and the derivative gives the slope exactly.
func Example() {
	const rate = 10.0
	x := make([]float64, 30)
	for i := range x {
		x[i] = 1200 - 2*float64(i)/rate // −2 °C/s
	}
	x[12] += 25 // a single-sample spike; it becomes x[11], a real reading
	clean, removed := curve.Despike(nil, x, 3, 0)
	w := curve.WindowSamples(1, rate, 2, 5) // a 1 s window at 10 Hz
	smooth := curve.SavGol(w, 2, 0).Apply(nil, clean, 1/rate)
	slope := curve.SavGol(w, 2, 1).Apply(nil, clean, 1/rate)
	fmt.Printf("window %d samples, %d spike removed\n", w, removed)
	fmt.Printf("x[12] %.2f -> %.2f °C\n", x[12], clean[12])
	fmt.Printf("smoothed x[20] %.2f °C, slope %.2f °C/s\n", smooth[20], slope[20])
	// Output:
	// window 11 samples, 1 spike removed
	// x[12] 1222.60 -> 1197.60 °C
	// smoothed x[20] 1196.00 °C, slope -2.00 °C/s
}

// The published 5-point quadratic smoothing weights (Savitzky & Golay 1964).
func ExampleSavGol() {
	for _, c := range curve.SavGol(5, 2, 0).Coefficients() {
		fmt.Printf("%.0f ", c*35)
	}
	fmt.Println("(/35)")
	// Output: -3 12 17 12 -3 (/35)
}
