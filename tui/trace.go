package tui

import "math"

// trace is a bounded, decimated copy of a curve for drawing. It holds at
// most maxBuckets buckets; each bucket covers span consecutive readings (a
// power of two) and keeps their first time, lowest, highest and last value,
// so narrow features (a recalescence bump, a spike) survive decimation.
// It is made afresh from the curve for each drawing (a few microseconds a
// thousand readings), so the dashboard keeps no copy of a curve of its own.
type trace struct {
	t, lo, hi, last []float64
}

// maxBuckets bounds a trace; four times the widest braille plot we draw.
const maxBuckets = 2048

// traceOf decimates the curve (t, v), passing over non-finite values
// (the T′ of the first half window is NaN).
func traceOf(t, v []float64) trace {
	n := 0
	for _, x := range v {
		if !math.IsNaN(x) && !math.IsInf(x, 0) {
			n++
		}
	}
	span := 1
	for (n+span-1)/span > maxBuckets {
		span *= 2
	}
	k := (n + span - 1) / span
	tr := trace{t: make([]float64, 0, k), lo: make([]float64, 0, k), hi: make([]float64, 0, k), last: make([]float64, 0, k)}
	in := 0 // finite readings taken
	for i, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			continue
		}
		if in%span == 0 {
			tr.t = append(tr.t, t[i])
			tr.lo = append(tr.lo, x)
			tr.hi = append(tr.hi, x)
			tr.last = append(tr.last, x)
		} else {
			j := len(tr.t) - 1
			tr.lo[j] = math.Min(tr.lo[j], x)
			tr.hi[j] = math.Max(tr.hi[j], x)
			tr.last[j] = x
		}
		in++
	}
	return tr
}

func (tr *trace) len() int { return len(tr.t) }

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
