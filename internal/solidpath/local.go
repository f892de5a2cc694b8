package solidpath

import (
	"math"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/curve"
)

// despiked is x with single-sample spikes replaced by a neighbour's
// reading, by the analysis core's own spike test (curve.SpikeAt with the
// curve's robust noise and arrest.SpikeMinC), so that a spike the point
// finder ignores does not tilt a slope or an end of the integral here.
func despiked(x []float64) []float64 {
	noise, _ := curve.Noise(nil, x)
	out, _, _ := curve.DespikeRun(make([]float64, 0, len(x)), nil, x, 0, len(x), arrest.SpikeMinC, noise)
	return out
}

// local holds the centred least-squares line of a curve at every reading:
// over the readings within ±half seconds of reading i, T ≈ value[i] +
// slope[i]·(t − t[i]). A straight line fitted by least squares is the
// simplest smoothing that works on uneven time steps (a logger export with
// jitter); on even steps its slope equals the quadratic Savitzky–Golay
// derivative of the same window (Savitzky & Golay, Anal. Chem. 36 (1964)
// 1627).
type local struct {
	value, slope []float64
}

// smoothed is one thermocouple's series ready for the methods: the
// readings despiked (x) and their local line at every reading.
type smoothed struct {
	x []float64
	local
}

// smoothOf despikes x and fits its local line over ±half seconds.
func smoothOf(t, x []float64, half float64) smoothed {
	d := despiked(x)
	return smoothed{x: d, local: fitLocal(t, d, half)}
}

// fitLocal fits the line at every reading of x(t) with a window of ±half
// seconds (at least two readings either side where the curve has them).
// The sums run with times relative to t[0], so that loggers whose clock
// reads thousands of seconds keep their precision; the readings must be
// finite (a NaN would poison every later window).
func fitLocal(t, x []float64, half float64) local {
	n := len(t)
	out := local{value: make([]float64, n), slope: make([]float64, n)}
	var w window
	lo, hi := 0, 0 // the window is t[lo:hi]
	t0 := t[0]
	for i := range n {
		if i%1024 == 1023 {
			// Start the sums afresh now and then, so that rounding does
			// not accumulate over a long recording.
			w = window{}
			for j := lo; j < hi; j++ {
				w.add(t[j]-t0, x[j], 1)
			}
		}
		for hi < n && (t[hi]-t[i] <= half || hi < i+3) {
			w.add(t[hi]-t0, x[hi], 1)
			hi++
		}
		for lo < i-2 && t[i]-t[lo] > half {
			w.add(t[lo]-t0, x[lo], -1)
			lo++
		}
		// Least squares with one division: D = s0·s2 − s1² (s0 times the
		// window's Σ(u − ū)²), slope (s0·sty − s1·sy)/D, value at u_i
		// (sy + slope·(s0·u_i − s1))/s0.
		d := w.s0*w.s2 - w.s1*w.s1
		if d > 0 {
			r := 1 / (w.s0 * d)
			b := (w.s0*w.sty - w.s1*w.sy) * w.s0 * r
			out.slope[i] = b
			out.value[i] = (w.sy + b*(w.s0*(t[i]-t0)-w.s1)) * d * r
		} else {
			out.value[i] = w.sy / w.s0
		}
	}
	return out
}

// window holds the sums of a least-squares line over the readings in it:
// their count, Σu, Σu², Σx and Σu·x, u the time from the curve's start.
type window struct{ s0, s1, s2, sy, sty float64 }

// add takes a reading (u, x) into the sums (sign 1) or out of them (−1).
func (w *window) add(u, x, sign float64) {
	w.s0 += sign
	w.s1 += sign * u
	w.s2 += sign * u * u
	w.sy += sign * x
	w.sty += sign * u * x
}

// index returns the first reading at or after time s (len(t) if none).
func index(t []float64, s float64) int {
	lo, hi := 0, len(t)
	for lo < hi {
		m := (lo + hi) / 2
		if t[m] < s {
			lo = m + 1
		} else {
			hi = m
		}
	}
	return lo
}

// interp returns y at time s by linear interpolation between readings
// (NaN outside t).
func interp(t, y []float64, s float64) float64 {
	i := index(t, s)
	switch {
	case i == len(t) || math.IsNaN(s):
		return math.NaN()
	case t[i] == s:
		return y[i]
	case i == 0:
		return math.NaN()
	}
	a := (s - t[i-1]) / (t[i] - t[i-1])
	return y[i-1] + a*(y[i]-y[i-1])
}
