package curve

import (
	"math"
	"slices"
)

// Spike test (a Hampel-type median test on five samples). Sample i is a spike
// when it lies further from the median of its five-sample window than
//
//	thr = max(minC, 6·noise) + 2·min(|x[i+1]−x[i−1]|/2, |x[i+2]−x[i−2]|/4)
//
// The second term is the local change per sample, so a steep but genuine
// slope (the pour, the end of freezing) is never taken for a spike. A spike
// takes the window median, which is always one of the neighbours' readings:
// nothing is invented. Up to two adjacent spikes are removed. The window
// keeps five samples at the ends of x by moving inward.

// SpikeSigmas is the multiple of the noise estimate in the spike threshold.
const SpikeSigmas = 6

// SpikeAt applies the spike test to sample i of x (len(x) ≥ 5) with the given
// minimum threshold and noise estimate, both °C. It returns the value to use
// (x[i] itself, or the window median) and whether x[i] was a spike.
func SpikeAt(x []float64, i int, minC, noise float64) (float64, bool) {
	n := len(x)
	lo := i - 2
	if lo < 0 {
		lo = 0
	}
	if lo > n-5 {
		lo = n - 5
	}
	w := x[lo : lo+5 : lo+5]
	slope := min(math.Abs(w[3]-w[1])/2, math.Abs(w[4]-w[0])/4)
	thr := max(minC, SpikeSigmas*noise) + 2*slope
	v := x[i]
	// Fast exact path: when every reading of the window is within thr of
	// x[i], so is their median.
	if math.Abs(w[0]-v) <= thr && math.Abs(w[1]-v) <= thr && math.Abs(w[2]-v) <= thr &&
		math.Abs(w[3]-v) <= thr && math.Abs(w[4]-v) <= thr {
		return v, false
	}
	med := median5(w[0], w[1], w[2], w[3], w[4])
	if math.Abs(v-med) > thr {
		return med, true
	}
	return v, false
}

// DespikeRun applies the spike test to samples from … to−1 of x, all with
// the same noise estimate, appending the values to dst and the indices of
// the spikes to spikes; it returns both. It gives what SpikeAt in a loop
// gives, for callers that despike a growing curve piece by piece; away from
// the ends of x it keeps the five-sample window in registers and tests the
// usual case, no spike, inline.
func DespikeRun(dst []float64, spikes []int, x []float64, from, to int, minC, noise float64) ([]float64, []int) {
	n := len(x)
	i := from
	for ; i < to && i < 2; i++ {
		dst, spikes = spikeStep(dst, spikes, x, i, minC, noise)
	}
	if stop := min(to, n-2); i < stop {
		base := max(minC, SpikeSigmas*noise)
		x := x[:stop+2]
		w0, w1, w2, w3 := x[i-2], x[i-1], x[i], x[i+1]
		// the cheaper test of each reading, its four differences against
		// base alone, from the differences of neighbours one and two apart
		// (each computed once: |a−b| = |b−a| exactly): near1[k] tells
		// |x[k+1]−x[k]| ≤ base, near2[k] |x[k+2]−x[k]| ≤ base
		near2m2 := math.Abs(w2-w0) <= base // k = i−2
		near1m1 := math.Abs(w2-w1) <= base // k = i−1
		near2m1 := math.Abs(w3-w1) <= base
		// the values are stored into dst grown once, not appended one by one
		nd := len(dst)
		dst = slices.Grow(dst, stop-i)
		out := dst[nd : nd+stop-i]
		for o := range out {
			w4 := x[i+2]
			near1, near2 := math.Abs(w3-w2) <= base, math.Abs(w4-w2) <= base
			// the same arithmetic as SpikeAt (w2 is the reading itself),
			// after the cheaper test: thr ≥ base whenever the four
			// differences are finite, so passing it passes SpikeAt's
			v := w2
			if !(near2m2 && near1m1 && near1 && near2) {
				slope := min(math.Abs(w3-w1)/2, math.Abs(w4-w0)/4)
				thr := base + 2*slope
				if !(math.Abs(w0-v) <= thr && math.Abs(w1-v) <= thr && math.Abs(w3-v) <= thr && math.Abs(w4-v) <= thr) {
					if med := median5(w0, w1, w2, w3, w4); math.Abs(v-med) > thr {
						v = med
						spikes = append(spikes, i)
					}
				}
			}
			out[o] = v
			w0, w1, w2, w3 = w1, w2, w3, w4
			near2m2, near2m1, near1m1 = near2m1, near2, near1
			i++
		}
		dst = dst[:nd+len(out)]
	}
	for ; i < to; i++ {
		dst, spikes = spikeStep(dst, spikes, x, i, minC, noise)
	}
	return dst, spikes
}

// spikeStep is one SpikeAt appended to dst (and to spikes if a spike).
func spikeStep(dst []float64, spikes []int, x []float64, i int, minC, noise float64) ([]float64, []int) {
	v, spike := SpikeAt(x, i, minC, noise)
	if spike {
		spikes = append(spikes, i)
	}
	return append(dst, v), spikes
}

// Despike writes x with single-sample spikes replaced (see SpikeAt) into dst
// and returns it with the number of samples replaced. A nil dst allocates;
// dst may not alias x. Fewer than five samples are copied unchanged.
func Despike(dst, x []float64, minC, noise float64) ([]float64, int) {
	n := len(x)
	if dst == nil {
		dst = make([]float64, n)
	}
	dst = dst[:n]
	if n < 5 {
		copy(dst, x)
		return dst, 0
	}
	count := 0
	for i := range x {
		v, spike := SpikeAt(x, i, minC, noise)
		dst[i] = v
		if spike {
			count++
		}
	}
	return dst, count
}

// median5 returns the median of five values (one of them, never a mean),
// by insertion sort of a copy.
func median5(a, b, c, d, e float64) float64 {
	v := [5]float64{a, b, c, d, e}
	for i := 1; i < 5; i++ {
		for j := i; j > 0 && v[j] < v[j-1]; j-- {
			v[j], v[j-1] = v[j-1], v[j]
		}
	}
	return v[2]
}
