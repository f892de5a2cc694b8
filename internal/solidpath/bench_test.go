package solidpath

import "testing"

// The solidification path of a 300 s, 10 Hz cup (target: well under a
// millisecond; constructed cups, 0.05 °C noise, 0.01 °C steps).
func BenchmarkNewtonian300s10Hz(b *testing.B) {
	c := newtonianCup()
	c.dur = 300
	c.t1, c.t2, c.t3 = 30, 140, 240
	tt, temp, _ := c.sample(10, 0, 0.05, 0.01, 1)
	ev, opt := c.events(), Options{SpecificHeat: c.c}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Newtonian(tt, temp, ev, opt); err != nil {
			b.Fatal(err)
		}
	}
}

// Both thermocouples of a 300 s, 10 Hz cup: the Fourier path and the
// coherency search together (the Newtonian path as in Analyze besides).
func BenchmarkAnalyzeTwoThermocouples300s10Hz(b *testing.B) {
	c := fourierCup()
	c.dur = 300
	c.t1, c.t2, c.t3 = 30, 140, 240
	tt, centre, wall := c.sample(10, 0, 0.05, 0.01, 1)
	cup := Cup{Time: tt, Centre: centre, Wall: wall, Geometry: Geometry{WallMm: 16}, Events: c.events(), Options: Options{SpecificHeat: c.c}, Coherency: true}
	b.ReportAllocs()
	for b.Loop() {
		if s := Analyze(cup); s.Fourier == nil {
			b.Fatal(s.FourierErr)
		}
	}
}
