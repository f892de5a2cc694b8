package curve

import "math"

// Noise estimate. For white noise of standard deviation σ on a smooth curve,
// the second difference e_i = x[i+1] − 2x[i] + x[i−1] is noise of standard
// deviation √6·σ (the curve's own contribution, T''·dt², is negligible at
// cup sampling rates). The estimate is the mean of the smaller half of |e_i|
// (the trimming drops spikes, each of which spoils three e_i, the pour and
// the sharpest bends), divided by its value for unit σ,
// √6·√(2/π)·(1 − exp(−q²/2))/0.5 with q = 0.67449 the median of |N(0,1)|.
// Quantisation adds noise of q/√12 for a step q (the uniform distribution),
// which the trimmed mean under-reads; it is added in quadrature, with q the
// smallest non-zero change between consecutive readings, when the first 8
// changes are whole multiples of it (to 1e-6 of q: the mark of
// quantisation; the changes of an unquantised curve are not), and only where
// q/√12 could add more than 3 %.

const noiseTrim = 0.5

var noiseUnit = math.Sqrt(6) * math.Sqrt(2/math.Pi) * (1 - math.Exp(-0.6744897501960817*0.6744897501960817/2)) / noiseTrim

// Noise returns the robust noise estimate of x in the units of x (0 for
// fewer than 8 samples). scratch is work space of any length (nil
// allocates); the possibly grown scratch is returned for reuse.
func Noise(scratch, x []float64) (float64, []float64) {
	n := len(x)
	if n < 8 {
		return 0, scratch
	}
	m := n - 2
	if cap(scratch) < m {
		scratch = make([]float64, m)
	}
	e := scratch[:m]
	q := math.Inf(1)
	for i := 1; i < n-1; i++ {
		e[i-1] = math.Abs(x[i+1] - 2*x[i] + x[i-1])
		if st := math.Abs(x[i] - x[i-1]); st > 0 && st < q {
			q = st
		}
	}
	k := int(float64(m) * noiseTrim)
	if k < 1 {
		k = 1
	}
	selectSmallest(e, k)
	s := 0.0
	for _, v := range e[:k] {
		s += v
	}
	sig := s / float64(k) / noiseUnit
	return withQuantisation(sig, q, x), scratch
}

// withQuantisation adds q/√12 in quadrature to the estimate sig when the
// changes between consecutive readings of x (the first 8) are whole
// multiples of q, the smallest non-zero change. The check is skipped where q/√12 could not add
// more than 3 %.
func withQuantisation(sig, q float64, x []float64) float64 {
	if math.IsInf(q, 1) || q/math.Sqrt(12) < sig/4 {
		return sig
	}
	inv := 1 / q
	w := x[:min(len(x), 9)]
	for i := 1; i < len(w); i++ { // 8 steps tell a quantised logger
		r := math.Abs(w[i]-w[i-1]) * inv
		if r == float64(int64(r)) {
			continue // a whole number (below 2⁶³): round(r) = r
		}
		tol := 1e-6 // 1e-6·max(1, r); a NaN r fails the test either way
		if r > 1 {
			tol *= r
		}
		if math.Abs(r-round(r)) >= tol {
			return sig
		}
	}
	return math.Hypot(sig, q/math.Sqrt(12))
}

// round is math.Round: for 0 < r < 2⁵² by the integer part and the (exact)
// fraction r − ⌊r⌋ (halves away from zero), else math.Round itself.
func round(r float64) float64 {
	if r > 0 && r < 1<<52 {
		t := float64(int64(r))
		if r-t >= 0.5 {
			t++
		}
		return t
	}
	return math.Round(r)
}

// NoiseFast is a cheaper estimate for short blocks of a curve, without
// sorting: the mean of |e_i| over the second differences no larger than 4
// times their overall mean (which drops the three e_i a spike spoils),
// times √(π/2)/√6, the ratio of σ to the mean absolute value of N(0, 6σ²);
// quantisation as for Noise. The clipping removes a spike's few values but
// not a broad disturbance (the pour, a sharp bend): combine block estimates
// by a median. 0 for fewer than 3 samples. scratch is returned as given:
// the estimate needs no work space (the parameter is kept for callers).
func NoiseFast(scratch, x []float64) (float64, []float64) {
	sig, _, scratch := NoiseFastSpan(scratch, x)
	return sig, scratch
}

// NoiseFastSpan is NoiseFast that also returns the span max(x) − min(x),
// from the same pass.
func NoiseFastSpan(scratch, x []float64) (sigma, span float64, _ []float64) {
	n := len(x) - 2
	if n < 1 {
		return 0, 0, scratch
	}
	lo, hi := min(x[0], x[n+1]), max(x[0], x[n+1])
	x = x[:n+2]
	s := 0.0
	eb := uint64(0) // the largest e_i, as its bit pattern (e_i ≥ 0 or NaN)
	// q, the smallest non-zero |step|, without a branch: for values ≥ 0 the
	// order of the bit patterns is that of the numbers, and bits − 1 turns
	// a zero step into the largest pattern (a NaN step stays above +Inf, as
	// it fails the comparison)
	qb := math.Float64bits(math.Inf(1)) - 1
	for i := 1; i <= n; i++ {
		// lo and hi by comparison, not min and max (no NaN and signed-zero
		// handling per reading); a NaN reading makes s NaN, and the span is
		// then taken again by min and max below
		if xi := x[i]; xi < lo {
			lo = xi
		} else if xi > hi {
			hi = xi
		}
		v := math.Abs(x[i+1] - 2*x[i] + x[i-1])
		s += v
		eb = max(eb, math.Float64bits(v))
		qb = min(qb, math.Float64bits(math.Abs(x[i]-x[i-1]))-1)
	}
	qb = min(qb, math.Float64bits(math.Abs(x[n+1]-x[n]))-1)
	q := math.Float64frombits(qb + 1)
	span = hi - lo
	if s != s {
		span = spanOf(x)
	} else if span == 0 {
		span = 0 // +0, as max − min gives, whatever the zeros' signs
	}
	return clippedNoise(x, s, eb, q), span, scratch
}

// NoiseFastWithin is NoiseFast together with whether the span
// max(x) − min(x) is at most maxSpan (NoiseFastSpan's span ≤ maxSpan, the
// same answer), for callers that only compare the span. The span is
// bounded by the sum of |x[i] − x[i−1]| (taken with 1e-9 of it to spare for
// rounding) and taken by min and max only when that bound exceeds maxSpan:
// no minimum and maximum per reading. A NaN reading gives a NaN estimate
// and false, as NoiseFastSpan's NaN span does.
func NoiseFastWithin(x []float64, maxSpan float64) (sigma float64, within bool) {
	n := len(x) - 2
	if n < 1 {
		return 0, 0 <= maxSpan
	}
	x = x[:n+2]
	s, tv := 0.0, math.Abs(x[n+1]-x[n])
	eb := uint64(0)                // as in NoiseFastSpan
	qb := math.Float64bits(tv) - 1 // the last step's pattern, as there
	for i := 1; i <= n; i++ {
		v := math.Abs(x[i+1] - 2*x[i] + x[i-1])
		s += v
		eb = max(eb, math.Float64bits(v))
		st := math.Abs(x[i] - x[i-1])
		tv += st
		qb = min(qb, math.Float64bits(st)-1)
	}
	q := math.Float64frombits(min(qb, math.Float64bits(math.Inf(1))-1) + 1)
	within = tv*(1+1e-9) <= maxSpan || spanOf(x) <= maxSpan
	return clippedNoise(x, s, eb, q), within
}

// clippedNoise finishes NoiseFast from the sum s of the n = len(x)−2 values
// |e_i|, the bit pattern eb of the largest and the smallest non-zero step q.
func clippedNoise(x []float64, s float64, eb uint64, q float64) float64 {
	n := len(x) - 2
	cut := 4 * s / float64(n)
	// the clipped sum: when no e_i exceeds the cut (the usual case) it is s
	// itself, the same values added in the same order; else a second pass
	// recomputes the e_i
	s2, k := s, n
	if !(math.Float64frombits(eb) <= cut) {
		s2, k = 0, 0
		for i := 1; i <= n; i++ {
			if v := math.Abs(x[i+1] - 2*x[i] + x[i-1]); v <= cut {
				s2 += v
				k++
			}
		}
	}
	sig := 0.0
	if k > 0 {
		sig = s2 / float64(k) * math.Sqrt(math.Pi/2) / math.Sqrt(6)
	}
	return withQuantisation(sig, q, x)
}

// spanOf is max(x) − min(x) by the built-in min and max (NaN if any x is).
func spanOf(x []float64) float64 {
	lo, hi := x[0], x[0]
	for _, v := range x {
		lo, hi = min(lo, v), max(hi, v)
	}
	return hi - lo
}

// selectSmallest reorders v so that its k smallest values come first
// (Hoare quickselect with a median-of-three pivot; deterministic).
func selectSmallest(v []float64, k int) {
	lo, hi := 0, len(v)-1
	for lo < hi {
		mid := lo + (hi-lo)/2
		if v[mid] < v[lo] {
			v[mid], v[lo] = v[lo], v[mid]
		}
		if v[hi] < v[lo] {
			v[hi], v[lo] = v[lo], v[hi]
		}
		if v[hi] < v[mid] {
			v[hi], v[mid] = v[mid], v[hi]
		}
		p := v[mid]
		i, j := lo, hi
		for i <= j {
			for v[i] < p {
				i++
			}
			for v[j] > p {
				j--
			}
			if i <= j {
				v[i], v[j] = v[j], v[i]
				i++
				j--
			}
		}
		// Now v[lo..j] ≤ p ≤ v[i..hi].
		switch {
		case k-1 <= j:
			hi = j
		case k-1 >= i:
			lo = i
		default:
			return
		}
	}
}
