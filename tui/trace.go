package tui

import "math"

// trace is a bounded, decimated copy of a growing curve for drawing. It
// holds at most maxBuckets buckets; each bucket covers span consecutive
// readings and keeps their first time, lowest, highest and last value, so
// narrow features (a recalescence bump, a spike) survive decimation. When
// it is full, neighbouring buckets are merged in pairs and span doubles:
// adding is O(1) amortised and memory stays bounded however long the
// recording runs. The whole curve itself is kept elsewhere for analysis.
type trace struct {
	t, lo, hi, last []float64
	span, n         int // readings per bucket; readings in the last bucket
	max             int
}

// maxBuckets bounds a trace; four times the widest braille plot we draw.
const maxBuckets = 2048

func newTrace() trace { return trace{span: 1, max: maxBuckets} }

func (tr *trace) reset() {
	tr.t, tr.lo, tr.hi, tr.last = tr.t[:0], tr.lo[:0], tr.hi[:0], tr.last[:0]
	tr.span, tr.n = 1, 0
}

func (tr *trace) len() int { return len(tr.t) }

func (tr *trace) add(t, v float64) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return
	}
	if k := len(tr.t); k > 0 && tr.n < tr.span {
		tr.lo[k-1] = math.Min(tr.lo[k-1], v)
		tr.hi[k-1] = math.Max(tr.hi[k-1], v)
		tr.last[k-1] = v
		tr.n++
		return
	}
	if len(tr.t) >= tr.max {
		tr.halve()
	}
	tr.t = append(tr.t, t)
	tr.lo = append(tr.lo, v)
	tr.hi = append(tr.hi, v)
	tr.last = append(tr.last, v)
	tr.n = 1
}

// halve merges buckets pairwise.
func (tr *trace) halve() {
	k := len(tr.t) / 2
	for i := 0; i < k; i++ {
		a, b := 2*i, 2*i+1
		tr.t[i] = tr.t[a]
		tr.lo[i] = math.Min(tr.lo[a], tr.lo[b])
		tr.hi[i] = math.Max(tr.hi[a], tr.hi[b])
		tr.last[i] = tr.last[b]
	}
	tr.t, tr.lo, tr.hi, tr.last = tr.t[:k], tr.lo[:k], tr.hi[:k], tr.last[:k]
	tr.span *= 2
	tr.n = tr.span // the last merged bucket is full
}

// bounds gives the lowest and highest value of buckets starting at or
// after t0; ok is false when there are none.
func (tr *trace) bounds(t0 float64) (lo, hi float64, ok bool) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for i, t := range tr.t {
		if t < t0 {
			continue
		}
		lo, hi, ok = math.Min(lo, tr.lo[i]), math.Max(hi, tr.hi[i]), true
	}
	return lo, hi, ok
}

// slope is a live estimate of dT/dt: the least-squares slope of the
// readings in the trailing window of width w seconds, attributed to the
// window's middle. It is a display aid (the analysis core computes its own
// Savitzky–Golay derivative); least-squares slope formula: any numerical
// methods text, e.g. Press et al., Numerical Recipes, §15.2 (memory).
type slope struct {
	w     float64
	start int // first index of the window in the curve slices
}

// next returns the slope for the window ending at index i of (t, v), and
// false while the window holds fewer than 4 readings.
func (s *slope) next(t, v []float64, i int) (mid, rate float64, ok bool) {
	for s.start < i && t[i]-t[s.start] > s.w {
		s.start++
	}
	n := i - s.start + 1
	if n < 4 {
		return 0, 0, false
	}
	t0, v0 := t[s.start], v[s.start]
	var st, sv, stt, stv float64
	for k := s.start; k <= i; k++ {
		x, y := t[k]-t0, v[k]-v0
		st += x
		sv += y
		stt += x * x
		stv += x * y
	}
	fn := float64(n)
	den := fn*stt - st*st
	if den <= 0 {
		return 0, 0, false
	}
	return t0 + st/fn, (fn*stv - st*sv) / den, true
}
