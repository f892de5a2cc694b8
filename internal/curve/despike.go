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
// takes the mean of its two neighbours' readings where neither is a spike
// itself (spikeTest): on a slope one neighbour's reading would put it a
// whole step off (3 °C on a liquid cooling at 3 °C/s logged once a
// second), and the bend in T' that makes can pass for an arrest. Else it
// takes the window median, which is always one of the neighbours' readings. Up to two adjacent spikes are removed. The window
// keeps five samples at the ends of x by moving inward; a spike at either
// end takes the median.

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
	base := max(minC, SpikeSigmas*noise)
	thr := base + 2*slope
	v := x[i]
	// Fast exact path: when every reading of the window is within thr of
	// x[i], so is their median.
	if math.Abs(w[0]-v) <= thr && math.Abs(w[1]-v) <= thr && math.Abs(w[2]-v) <= thr &&
		math.Abs(w[3]-v) <= thr && math.Abs(w[4]-v) <= thr {
		return v, false
	}
	med := median5(w[0], w[1], w[2], w[3], w[4])
	if i > 0 && i < n-1 {
		return spikeTest(v, med, x[i-1], x[i+1], base, thr)
	}
	if math.Abs(v-med) > thr {
		return med, true
	}
	return v, false
}

// spikeTest decides on the reading v between its neighbours' readings prev
// and next (med the median of its window, base and thr the base and full
// spike thresholds): a spike when it lies more than thr from med, or, where
// neither neighbour is a spike itself (both within thr of med), more than
// base from med and more than thr from the neighbours' mean. On a
// slope the median is a neighbour's reading, a whole step from where the
// curve is; a spike there stands out from the neighbours' mean by that
// step more (at 1 Hz on a liquid cooling at 2.7 °C/s, an 11 °C spike lay
// 8.3 °C from the median, under its 8.4 °C threshold). A reading of a
// monotonic window is its median, never a spike (the pour, the end of
// freezing).
func spikeTest(v, med, prev, next, base, thr float64) (float64, bool) {
	clean := math.Abs(prev-med) <= thr && math.Abs(next-med) <= thr
	if dev := math.Abs(v - med); dev > thr || clean && dev > base && math.Abs(v-(prev+next)/2) > thr {
		if clean {
			return (prev + next) / 2, true
		}
		return med, true
	}
	return v, false
}

// DespikeRun applies the spike test to samples from … to−1 of x, all with
// the same noise estimate, appending the values to dst and the indices of
// the spikes to spikes; it returns both. It gives what SpikeAt in a loop
// gives, for callers that despike a growing curve piece by piece. Away from
// the ends of x it finds runs of readings that are no spike because their
// steps are small against the base threshold max(minC, 6·noise)
// (quietCopy) and copies them; the rest go through spikeSlow, SpikeAt's
// own arithmetic.
//
// maxStep bounds the steps within the run, |v[k] − v[k−1]| for the values
// v of samples from < k < to: the base threshold when every sample of the
// run passed that quick test (each is then its own reading, its steps at
// most half the base), else +Inf (no bound known).
func DespikeRun(dst []float64, spikes []int, x []float64, from, to int, minC, noise float64) (_ []float64, _ []int, maxStep float64) {
	n := len(x)
	i := from
	maxStep = math.Inf(1)
	for ; i < to && i < 2; i++ {
		dst, spikes = spikeStep(dst, spikes, x, i, minC, noise)
	}
	base := max(minC, SpikeSigmas*noise)
	if stop := min(to, n-2); i < stop && base >= 0 { // not NaN, not negative: bit patterns order as the numbers
		bb := math.Float64bits(quietStep(base))
		xs := x[i-2 : stop+2] // the window of out[o] is xs[o : o+5]
		// the values are stored into dst grown once, not appended one by one
		nd := len(dst)
		dst = slices.Grow(dst, stop-i)
		out := dst[nd : nd+stop-i]
		o := quietCopy(out, xs, bb)
		if o == len(out) && i == from && stop == to {
			return dst[:nd+len(out)], spikes, base
		}
		for o < len(out) {
			w := xs[o : o+5]
			v := w[2]
			if med, spike := spikeSlow(w[0], w[1], w[2], w[3], w[4], base); spike {
				v = med
				spikes = append(spikes, i+o)
			}
			out[o] = v
			o++
			o += quietCopy(out[o:], xs[o:], bb)
		}
		dst = dst[:nd+len(out)]
		i = stop
	}
	for ; i < to; i++ {
		dst, spikes = spikeStep(dst, spikes, x, i, minC, noise)
	}
	return dst, spikes, maxStep
}

// quietCopy copies to out[o] the middle reading of each leading
// five-sample window xs[o : o+5] whose four steps, |xs[o+j+1] − xs[o+j]|
// for j = 0 … 3, are all at most h, and returns how many it copied
// (len(out) ≥ len(xs) − 4); h is given as its bit pattern hb (h ≥ 0), and
// the steps are compared as the patterns of their magnitudes, which order
// as the numbers do (a NaN's lies above every finite one, so a NaN step
// fails). Each window adds one step to the one before, so the scan takes
// one subtraction a reading.
//
// With h = quietStep(base) such a middle reading passes SpikeAt's quick
// test, all four differences to its neighbours within base, and so is no
// spike: the steps next to it are such differences themselves, and each
// difference two readings apart is at most the sum of two steps, below
// base with room for the rounding of all three subtractions.
func quietCopy(out, xs []float64, hb uint64) int {
	if len(xs) < 5 {
		return 0
	}
	const sign = 1 << 63
	if max(math.Float64bits(xs[1]-xs[0])&^sign, math.Float64bits(xs[2]-xs[1])&^sign,
		math.Float64bits(xs[3]-xs[2])&^sign, math.Float64bits(xs[4]-xs[3])&^sign) > hb {
		return 0
	}
	out[0] = xs[2]
	// window o (from 1) adds the step from xs[o+3] to xs[o+4]
	mid, from, to := xs[3:len(xs)-2], xs[4:len(xs)-1], xs[5:]
	from, to, dst := from[:len(mid)], to[:len(mid)], out[1:len(mid)+1]
	for o, v := range mid {
		if math.Float64bits(to[o]-from[o])&^sign > hb {
			return 1 + o
		}
		dst[o] = v
	}
	return 1 + len(mid)
}

// quietStep is the largest step quietCopy lets through for the base
// threshold: half of it, less 1e-12 of it. Two steps of at most that, each
// rounded by its subtraction (relative error ≤ 2⁻⁵³), bound the exact
// difference two readings apart by base·(1 − 2·10⁻¹²)/(1 − 2⁻⁵³), and its
// rounded value stays below base.
func quietStep(base float64) float64 { return base * (0.5 - 1e-12) }

// spikeSlow is SpikeAt's test of the middle reading w2 of the window w0 … w4
// beyond the base threshold max(minC, 6·noise): the median and whether w2
// is a spike.
//
//go:noinline
func spikeSlow(w0, w1, w2, w3, w4, base float64) (float64, bool) {
	slope := min(math.Abs(w3-w1)/2, math.Abs(w4-w0)/4)
	thr := base + 2*slope
	v := w2
	if math.Abs(w0-v) <= thr && math.Abs(w1-v) <= thr && math.Abs(w3-v) <= thr && math.Abs(w4-v) <= thr {
		return v, false
	}
	return spikeTest(v, median5(w0, w1, w2, w3, w4), w1, w3, base, thr)
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
