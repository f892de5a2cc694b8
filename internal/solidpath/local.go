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
	var s0, s1, s2, sy, sty float64
	lo, hi := 0, 0 // the window is t[lo:hi]
	t0 := t[0]
	for i := range n {
		if i%1024 == 1023 {
			// Start the sums afresh now and then, so that rounding does
			// not accumulate over a long recording.
			s0, s1, s2, sy, sty = 0, 0, 0, 0, 0
			for j := lo; j < hi; j++ {
				u := t[j] - t0
				s0++
				s1 += u
				s2 += u * u
				sy += x[j]
				sty += u * x[j]
			}
		}
		for hi < n && (t[hi]-t[i] <= half || hi < i+3) {
			u := t[hi] - t0
			s0++
			s1 += u
			s2 += u * u
			sy += x[hi]
			sty += u * x[hi]
			hi++
		}
		for lo < i-2 && t[i]-t[lo] > half {
			u := t[lo] - t0
			s0--
			s1 -= u
			s2 -= u * u
			sy -= x[lo]
			sty -= u * x[lo]
			lo++
		}
		// Least squares with one division: D = s0·s2 − s1² (s0 times the
		// window's Σ(u − ū)²), slope (s0·sty − s1·sy)/D, value at u_i
		// (sy + slope·(s0·u_i − s1))/s0.
		d := s0*s2 - s1*s1
		if d > 0 {
			r := 1 / (s0 * d)
			b := (s0*sty - s1*sy) * s0 * r
			out.slope[i] = b
			out.value[i] = (sy + b*(s0*(t[i]-t0)-s1)) * d * r
		} else {
			out.value[i] = sy / s0
		}
	}
	return out
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
