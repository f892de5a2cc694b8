package metal_test

import (
	"fmt"

	"github.com/undercool-foundry/undercool/internal/metal"
)

// A worked aluminium example (classical nucleation, Turnbull's ΔT_hom =
// 130 K for Al, memory): a melt that starts
// to nucleate 5 K below the melting point.
func ExampleNucleationPotency() {
	p, err := metal.NucleationPotency(metal.Metals["al"], 5, metal.Onset{})
	if err != nil {
		panic(err)
	}
	fmt.Printf("f(θ) %.2e, effective θ %.1f°, r* %.1f nm, smallest active nucleant %.3f µm\n",
		p.FTheta, p.ThetaDeg, p.RStarNm, p.DMinUm)
	// Output: f(θ) 1.71e-03, effective θ 17.8°, r* 32.4 nm, smallest active nucleant 0.114 µm
}

func ExampleLiquidusCE() {
	for _, r := range []metal.LiquidusCE{metal.Koriyama2020(), metal.Heine()} {
		fmt.Printf("%s: liquidus 1180 °C → CEL %.3f\n", r.Name, r.CEL(1180))
	}
	// Output:
	// koriyama2020: liquidus 1180 °C → CEL 4.045
	// heine: liquidus 1180 °C → CEL 3.944
}
