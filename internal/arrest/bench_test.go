package arrest

import (
	"fmt"
	"math"
	"testing"
	"time"
)

// benchCurve is a constructed grey-iron curve (shape 0) of n readings at
// rate Hz, noise 0.2 °C, 0.25 °C steps and spikes.
func benchCurve(rate float64, n int) ([]float64, []float64) {
	sh := shapes()[0]
	tail := float64(n)/rate - (sh.end() + 3 + sh.pre)
	tt, v := sh.sample(sampling{rate: rate, noise: 0.2, quant: 0.25, spikeP: 1.0 / 500, spikeLo: 10, spikeHi: 40, seed: 1, tailS: max(tail, 0)})
	return tt[:min(n, len(tt))], v[:min(n, len(v))]
}

// One 300 s, 10 Hz curve analysed offline (target ≤ 50 µs, a handful of
// allocations). Besides the mean it reports the fastest round of 50 curves
// (ns/op-fastest50): on a shared host the mean includes the stretches when
// another hardware thread competes for the core, the fastest round is the
// code on a core of its own.
func BenchmarkAnalyze300s10Hz(b *testing.B) {
	tt, v := benchCurve(10, 3000)
	b.ReportAllocs()
	best := math.Inf(1)
	n, t0 := 0, time.Now()
	for b.Loop() {
		Analyze(tt, v, Options{})
		if n++; n == 50 {
			best = min(best, float64(time.Since(t0).Nanoseconds())/50)
			n, t0 = 0, time.Now()
		}
	}
	if !math.IsInf(best, 1) {
		b.ReportMetric(best, "ns/op-fastest50")
	}
}

// The live call: a 3000-reading curve fed one reading at a time through one
// Analyzer; reported per reading (target ≤ 5 µs amortised).
func BenchmarkLivePerReading(b *testing.B) {
	tt, v := benchCurve(10, 3000)
	b.ReportAllocs()
	var a Analyzer
	readings := 0
	for b.Loop() {
		a.Reset()
		for k := 1; k <= len(tt); k++ {
			a.Analyze(tt[:k], v[:k], Options{Live: true})
		}
		readings += len(tt)
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(readings), "ns/reading")
}

// Size ladder: the whole curve analysed offline, 300 to 300 000 readings
// (10 Hz; beyond the end of freezing the analysis stops early, so the
// longer rungs measure the recording being taken in).
func BenchmarkAnalyzeSizes(b *testing.B) {
	for _, n := range []int{300, 3000, 30000, 300000} {
		rate := 10.0
		if n > 3000 {
			rate = float64(n) / 300 // keep 300 s of curve, faster logging
		}
		tt, v := benchCurve(rate, n)
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(int64(16 * len(tt)))
			for b.Loop() {
				Analyze(tt, v, Options{})
			}
		})
	}
}

var benchSink float64

// A reference loop for reading the figures above across machines: 3000
// dependent floating-point additions, one per reading of the 300 s curve
// (about 3 cycles each on a current x86-64 core, so roughly 3 µs on an
// idle 3 GHz core). The sum is kept in a register by a function of its
// own: inside the b.Loop body it would be stored and reloaded on every
// addition, which measures the store instead (about 12 µs here).
func BenchmarkReferenceLoop3000Adds(b *testing.B) {
	x := make([]float64, 3000)
	for i := range x {
		x[i] = float64(i)
	}
	for b.Loop() {
		benchSink = dependentAdds(x)
	}
}

//go:noinline
func dependentAdds(x []float64) float64 {
	s := 0.0
	for _, v := range x {
		s += v * 1.0001
	}
	return s
}
