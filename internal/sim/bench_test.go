package sim

import "testing"

// BenchmarkSimulate300s10Hz is the target: a 300 s grey-iron cup at
// 10 Hz in at most 20 ms.
func BenchmarkSimulate300s10Hz(b *testing.B) {
	p, err := Preset(GreyIron, 0.5, 1)
	if err != nil {
		b.Fatal(err)
	}
	p.DurationS = 300
	p.Logger.RateHz = 10
	for b.Loop() {
		Simulate(p)
	}
}
