package curve

import (
	"math"
	"math/rand/v2"
	"testing"
)

// NoiseFastWithin must give NoiseFastSpan's estimate bit for bit and its
// span ≤ maxSpan answer, on simulated blocks (seeded noise, quantisation,
// spikes, a steep fall like the pour, NaN readings) and on spans right at
// the limit.
func TestNoiseFastWithinMatchesNoiseFastSpan(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	check := func(x []float64, maxSpan float64) {
		t.Helper()
		want, span, _ := NoiseFastSpan(nil, x)
		got, within := NoiseFastWithin(x, maxSpan)
		if math.Float64bits(got) != math.Float64bits(want) && !(got != got && want != want) {
			t.Fatalf("len %d: estimate %v, NoiseFastSpan gives %v", len(x), got, want)
		}
		if within != (span <= maxSpan) {
			t.Fatalf("len %d: within %v for span %v and limit %v", len(x), within, span, maxSpan)
		}
	}
	for trial := range 4000 {
		n := rng.IntN(40)
		x := make([]float64, n)
		slope := []float64{0, -0.05, -3, 5}[trial%4]
		for i := range x {
			x[i] = 1150 + slope*float64(i) + 0.2*rng.NormFloat64()
			if trial%3 == 0 {
				x[i] = math.Round(x[i]*4) / 4 // 0.25 °C steps
			}
			if rng.IntN(30) == 0 {
				x[i] += 40 // a spike
			}
		}
		if n > 0 && trial%97 == 0 {
			x[rng.IntN(n)] = math.NaN()
		}
		check(x, 60)
		if n > 0 {
			_, span, _ := NoiseFastSpan(nil, x)
			check(x, span)                              // exactly at the limit
			check(x, math.Nextafter(span, 0))           // just below it
			check(x, math.Nextafter(span, math.Inf(1))) // just above it
		}
	}
}
