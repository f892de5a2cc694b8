package store_test

import (
	"fmt"

	"github.com/undercool-foundry/undercool/internal/store"
)

// A shift's eutectic minima (constructed values), as the dashboard's
// history view charts them: mean, spread and individuals-chart limits.
func ExampleComputeSPC() {
	eutMin := []float64{1146.2, 1147.0, 1145.8, 1146.5, 1144.9, 1146.1, 1147.3, 1145.6}
	s := store.ComputeSPC(eutMin)
	// Worked by hand (computed): Σ = 9169.4, mean 1146.175; Σ(x − mean)² = 4.155,
	// s = √(4.155/7) = 0.770; moving ranges 0.8 1.2 0.7 1.6 1.2 1.2 1.7, MR̄ = 8.4/7 = 1.2;
	// σ = 1.2/1.128 = 1.064; limits 1146.175 ± 3.191.
	fmt.Printf("n %d, mean %.2f °C, s %.2f °C\n", s.N, s.Mean, s.SD)
	fmt.Printf("MR̄ %.3f °C, σ = MR̄/1.128 = %.3f °C\n", s.MRBar, s.Sigma)
	fmt.Printf("control limits %.2f … %.2f °C\n", s.LCL, s.UCL)
	// Output:
	// n 8, mean 1146.17 °C, s 0.77 °C
	// MR̄ 1.200 °C, σ = MR̄/1.128 = 1.064 °C
	// control limits 1142.98 … 1149.37 °C
}
