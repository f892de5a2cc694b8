package sim_test

import (
	"fmt"

	"github.com/undercool-foundry/undercool/internal/sim"
)

// A poorly and a well inoculated grey-iron cup (SIMULATED): the well
// inoculated one freezes its eutectic at a higher temperature with less
// recalescence.
func ExampleSimulate() {
	for _, inoc := range []float64{0.1, 0.9} {
		p, err := sim.Preset(sim.GreyIron, inoc, 1)
		if err != nil {
			panic(err)
		}
		tr := sim.Simulate(p).Truth
		fmt.Printf("inoculation %.1f: eutectic min %.0f °C, recalescence %.0f °C, liquidus found %v\n",
			inoc, tr.EutecticMin.TempC, tr.Recalescence, tr.Liquidus.OK)
	}
	// Output:
	// inoculation 0.1: eutectic min 1138 °C, recalescence 6 °C, liquidus found true
	// inoculation 0.9: eutectic min 1145 °C, recalescence 2 °C, liquidus found true
}
