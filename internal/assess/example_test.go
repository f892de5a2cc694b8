package assess_test

import (
	"fmt"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"
)

// A constructed (hand-built) result of a poorly inoculated grey-iron cup,
// judged against the shipped example limits.
func ExampleFromResult() {
	res := arrest.Result{Samples: 1800, RateHz: 10, Complete: true,
		PourPeak:     arrest.Point{TempC: 1318, TimeS: 2, OK: true},
		Liquidus:     arrest.Point{TempC: 1175, TimeS: 40, OK: true},
		EutecticMin:  arrest.Point{TempC: 1139.2, TimeS: 95, OK: true},
		EutecticMax:  arrest.Point{TempC: 1143.2, TimeS: 120, OK: true},
		Recalescence: 4, RecalescenceOK: true, FreezingTimeS: 200}
	rec := assess.FromResult(assess.Input{Alloy: "grey-iron"}, res)
	fmt.Println(rec.Verdict)
	for _, r := range rec.Reasons {
		fmt.Println("-", r)
	}
	// Output:
	// fail
	// - eutectic undercooling 9.8 °C is above the 8.0 °C limit
}
