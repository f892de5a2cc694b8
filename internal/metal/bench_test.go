package metal

import "testing"

func BenchmarkNucleationPotency(b *testing.B) {
	c := Metals["fe"]
	for b.Loop() {
		if _, err := NucleationPotency(c, 8.5, Onset{}); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkLeastSquares200x2(b *testing.B) {
	y, x1, x2 := make([]float64, 200), make([]float64, 200), make([]float64, 200)
	for i := range y {
		x1[i], x2[i] = 1150+float64(i%80), 1.5+float64(i%13)*0.07
		y[i] = 13.8 - x1[i]/120 - x2[i]/4 + float64(i%7)*1e-3
	}
	for b.Loop() {
		if _, err := LeastSquares(y, x1, x2); err != nil {
			b.Fatal(err)
		}
	}
}
