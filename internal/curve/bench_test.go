package curve

import "testing"

// The per-reading work of the detector's filter on a constructed 300 s,
// 10 Hz curve (0.2 °C noise): despiking, T' over a window and the
// noise estimate of 2 s blocks.
func BenchmarkDespikeRun3000(b *testing.B) {
	x := constructedCurve(3000, 10, 0.2, 1)
	dst := make([]float64, 0, len(x))
	var spikes []int
	for b.Loop() {
		dst, spikes, _ = DespikeRun(dst[:0], spikes[:0], x, 0, len(x), 3, 0.2)
	}
}

func BenchmarkAppendGrowing3000(b *testing.B) {
	x := constructedCurve(3000, 10, 0.2, 1)
	dst := make([]float64, 0, len(x))
	k := SavGol(41, 2, 1)
	for b.Loop() {
		dst = k.AppendGrowing(dst[:0], x, 20, len(x)-20, 0.1)
	}
}

func BenchmarkNoiseFastSpanBlocks3000(b *testing.B) {
	x := constructedCurve(3000, 10, 0.2, 1)
	var scratch []float64
	for b.Loop() {
		for k := 0; k+21 <= len(x); k += 20 {
			_, _, scratch = NoiseFastSpan(scratch, x[k:k+21])
		}
	}
}
