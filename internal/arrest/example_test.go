package arrest_test

import (
	"fmt"

	"github.com/undercool-foundry/undercool/internal/arrest"
)

// constructedIron is a constructed (not measured) grey-iron cup curve at
// 10 Hz: T' is given at knots (s, °C/s) and blended with a smoothstep, the
// temperature is its integral from a 1290 °C pour peak.
func constructedIron() (t, temp []float64) {
	knots := [][2]float64{{0, 0}, {4, -3}, {30, -2.5}, {42, -0.5}, {52, -1.3}, {76, -1.2},
		{88, 0.5}, {99, -0.06}, {160, -0.12}, {168, -3.5}, {173, -2.2}, {280, -1.6}}
	T := 1290.0
	for i := 0; i <= 2800; i++ {
		s := float64(i) / 10
		t, temp = append(t, s), append(temp, T)
		for k := 1; k < len(knots); k++ { // advance T by T'·0.1 s (midpoint rule)
			a, b := knots[k-1], knots[k]
			if m := s + 0.05; m <= b[0] {
				u := (m - a[0]) / (b[0] - a[0])
				T += 0.1 * (a[1] + (b[1]-a[1])*u*u*(3-2*u))
				break
			}
		}
	}
	return t, temp
}

func Example() {
	t, temp := constructedIron()
	r := arrest.Analyze(t, temp, arrest.Options{Family: arrest.FamilyIron})
	show := func(name string, p arrest.Point) {
		if !p.OK {
			fmt.Printf("%-13s null\n", name)
			return
		}
		fmt.Printf("%-13s %7.1f °C at %5.1f s\n", name, p.TempC, p.TimeS)
	}
	show("pour peak", r.PourPeak)
	show("liquidus min", r.LiquidusMin)
	show("liquidus", r.Liquidus)
	show("eutectic min", r.EutecticMin)
	show("eutectic max", r.EutecticMax)
	show("solidus", r.Solidus)
	fmt.Printf("recalescence %.1f °C, complete %v, problems %d\n", r.Recalescence, r.Complete, len(r.Problems))
	// Output:
	// pour peak      1290.0 °C at   0.0 s
	// liquidus min  null
	// liquidus       1194.4 °C at  42.2 s
	// eutectic min   1149.9 °C at  83.7 s
	// eutectic max   1153.8 °C at  96.9 s
	// solidus        1133.7 °C at 168.0 s
	// recalescence 3.9 °C, complete true, problems 0
}

// A live sample: the same Analyzer is fed the growing curve; points appear
// once settled and never change.
func ExampleAnalyzer() {
	t, temp := constructedIron()
	var a arrest.Analyzer
	for _, n := range []int{400, 900, 1200, 1900, len(t)} {
		r := a.Analyze(t[:n], temp[:n], arrest.Options{Family: arrest.FamilyIron, Live: true})
		eut := "—"
		if r.EutecticMin.OK {
			eut = fmt.Sprintf("%.1f", r.EutecticMin.TempC)
		}
		fmt.Printf("%5.0f s: liquidus %v, eutectic min %s, complete %v\n", t[n-1], r.Liquidus.OK, eut, r.Complete)
	}
	// Output:
	//    40 s: liquidus false, eutectic min —, complete false
	//    90 s: liquidus true, eutectic min 1149.9, complete false
	//   120 s: liquidus true, eutectic min 1149.9, complete false
	//   190 s: liquidus true, eutectic min 1149.9, complete true
	//   280 s: liquidus true, eutectic min 1149.9, complete true
}
