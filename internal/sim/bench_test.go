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

// BenchmarkSimulateRadial300s10Hz is the same cup as a radial cup, default
// (8 zones) and strong-gradient (12 zones).
func BenchmarkSimulateRadial300s10Hz(b *testing.B) {
	for _, c := range []struct {
		name string
		r    Radial
	}{{"default", Radial{}}, {"strong", StrongGradient(GreyIron)}} {
		p, err := Preset(GreyIron, 0.5, 1)
		if err != nil {
			b.Fatal(err)
		}
		p.DurationS, p.Logger.RateHz = 300, 10
		p.Cup, p.Radial = CupRadial, c.r
		b.Run(c.name, func(b *testing.B) {
			for b.Loop() {
				Simulate(p)
			}
		})
	}
}
