package curve

import "slices"

// Sliding gives the quadratic Savitzky–Golay smoothing and first derivative of
// a window of 2·Half+1 samples from running moment sums, O(1) per sample
// instead of O(window). For a centred window the quadratic (and cubic)
// smoothing weights are c_k = (3(3m²+3m−1) − 15k²) / ((2m−1)(2m+1)(2m+3)) and
// the linear (and quadratic) first-derivative weights are k / Σk² with
// Σk² = m(m+1)(2m+1)/3, m = Half, k = −m … m (Savitzky & Golay 1964, the
// closed forms behind their tables). The sums
// S_p = Σ k^p (x[c+k] − ref) move from centre c to c+1 by the binomial
// shift S_p(c+1) = Σ (k−1)^p …, and are recomputed directly every 128 steps
// so that rounding cannot drift; the results agree with Kernel.At to about
// 1e-12 of the signal's range.
//
// Only interior centres (Half ≤ c < len(x)−Half) are served. The zero value is
// unusable: call Reset first. Sliding is not safe for concurrent use.
type Sliding struct {
	half       int
	wSmooth0   float64 // 3(3m²+3m−1)/D
	wSmooth2   float64 // 15/D
	invSumK2   float64 // 1/Σk²
	c          int     // centre of the current sums, −1 when none
	ref        float64
	s0, s1, s2 float64
}

const slidingAnchor = 128

// Reset prepares s for windows of 2·half+1 samples (half ≥ 2).
func (s *Sliding) Reset(half int) {
	if half < 2 {
		panic("curve: Sliding half-width must be at least 2")
	}
	m := float64(half)
	d := (2*m - 1) * (2*m + 1) * (2*m + 3)
	*s = Sliding{
		half:     half,
		wSmooth0: 3 * (3*m*m + 3*m - 1) / d,
		wSmooth2: 15 / d,
		invSumK2: 3 / (m * (m + 1) * (2*m + 1)),
		c:        -1,
	}
}

// Half returns the half-width the Sliding was reset to.
func (s *Sliding) Half() int { return s.half }

// At returns the smoothed value and the first derivative per sample (divide
// by the sample interval for units per second) at interior centre c of x.
// Successive centres c, c+1, c+2 … cost O(1) each.
func (s *Sliding) At(x []float64, c int) (smooth, slope float64) {
	m := s.half
	if c == s.c+1 && c%slidingAnchor != 0 {
		out := x[c-1-m] - s.ref
		in := x[c+m] - s.ref
		fm := float64(m)
		a0 := s.s0 - out + in
		a1 := s.s1 + fm*out + (fm+1)*in
		a2 := s.s2 - fm*fm*out + (fm+1)*(fm+1)*in
		s.s0, s.s1, s.s2 = a0, a1-a0, a2-2*a1+a0
	} else {
		s.ref = x[c]
		var s0, s1, s2 float64
		for k := -m; k <= m; k++ {
			y := x[c+k] - s.ref
			fk := float64(k)
			s0 += y
			s1 += fk * y
			s2 += fk * fk * y
		}
		s.s0, s.s1, s.s2 = s0, s1, s2
	}
	s.c = c
	return s.ref + s.wSmooth0*s.s0 - s.wSmooth2*s.s2, s.s1 * s.invSumK2
}

// SlopeAt is At for the first derivative alone (per sample), a little
// cheaper. A Sliding used through SlopeAt must not be used through At
// without a Reset.
func (s *Sliding) SlopeAt(x []float64, c int) float64 {
	m := s.half
	if c == s.c+1 && c%slidingAnchor != 0 {
		out := x[c-1-m] - s.ref
		in := x[c+m] - s.ref
		fm := float64(m)
		a0 := s.s0 - out + in
		s.s1 += fm*out + (fm+1)*in - a0
		s.s0 = a0
	} else {
		s.ref = x[c]
		var s0, s1 float64
		for k := -m; k <= m; k++ {
			y := x[c+k] - s.ref
			s0 += y
			s1 += float64(k) * y
		}
		s.s0, s.s1 = s0, s1
	}
	s.c = c
	return s.s1 * s.invSumK2
}

// AppendSlopes appends SlopeAt(x, c)·scale for the centres c = from … to−1
// to dst and returns it: the values of SlopeAt in a loop, bit for bit, with
// the sums kept in registers, the readings leaving and entering the window
// taken from two slices that move along x, and the re-anchoring done
// between runs rather than tested at every centre. The same rules apply as
// for SlopeAt.
func (s *Sliding) AppendSlopes(dst, x []float64, from, to int, scale float64) []float64 {
	if to <= from {
		return dst
	}
	m := s.half
	fm, fm1 := float64(m), float64(m+1) // m+1 exactly, as SlopeAt's fm+1
	inv := s.invSumK2
	ref, s0, s1, prev := s.ref, s.s0, s.s1, s.c
	nd := len(dst)
	dst = slices.Grow(dst, to-from)[:nd+to-from]
	out := dst[nd:]
	for c := from; c < to; {
		if c != prev+1 || c%slidingAnchor == 0 {
			// the sums at c directly, as SlopeAt does
			ref = x[c]
			var t0, t1 float64
			for k, v := range x[c-m : c+m+1] {
				y := v - ref
				t0 += y
				t1 += float64(k-m) * y
			}
			s0, s1 = t0, t1
			out[c-from] = s1 * inv * scale
			prev = c
			c++
			continue
		}
		// the binomial shift for every centre up to the next anchor
		stop := min(to, (c/slidingAnchor+1)*slidingAnchor)
		olds := x[c-1-m : stop-1-m]
		news := x[c+m : stop+m]
		news = news[:len(olds)]
		o := out[c-from : stop-from]
		o = o[:len(olds)]
		for k, xo := range olds {
			ov := xo - ref
			in := news[k] - ref
			a0 := s0 - ov + in
			s1 += fm*ov + fm1*in - a0
			s0 = a0
			o[k] = s1 * inv * scale
		}
		prev = stop - 1
		c = stop
	}
	s.ref, s.s0, s.s1, s.c = ref, s0, s1, prev
	return dst
}
