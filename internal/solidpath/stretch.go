package solidpath

import "math"

// Stretch lengths, s.
const (
	// minStretchS is the shortest single-phase stretch a zero curve is
	// fitted on.
	minStretchS = 6
	// maxSolidS is the longest solid stretch used: further from the end of
	// freezing the cup's wall and the room change the cooling more than the
	// zero curve's form can follow.
	maxSolidS = 60
	// settleRate is how slowly T' must change, relative to itself, for the
	// solid stretch to begin, 1/s: a tenth of the end-of-freezing dip's
	// share is left to relax when its time constant is 10 s.
	settleRate = 0.01
)

// span is an index range [lo, hi) of a curve.
type span struct{ lo, hi int }

func (s span) ok(t []float64) bool {
	return s.hi-s.lo >= 5 && t[s.hi-1]-t[s.lo] >= minStretchS
}

func (s span) window(t []float64) Window {
	if !s.ok(t) {
		return Window{}
	}
	return Window{FromS: t[s.lo], ToS: t[s.hi-1], OK: true}
}

// knee is the reading where freezing shows first: the largest d²T/dt² between
// the start of the liquid stretch and the first arrest (the sharpest bend of
// the curve before its first arrest, as T' turns up with the first latent
// heat). A pure metal's first arrest point may lie well into its plateau;
// the knee is where the plateau begins.
func knee(t []float64, d []float64, ev Events, o Options) int {
	lo, hi := index(t, liquidFrom(t, ev, o)+o.SlopeS), min(index(t, ev.ArrestS), len(t)-1)
	if hi-lo < 3 {
		return hi
	}
	dd := fitLocal(t[lo:hi+1], d[lo:hi+1], o.SlopeS/2).slope
	best := 0
	for k, v := range dd {
		if v > dd[best] {
			best = k
		}
	}
	return lo + best
}

// liquidFrom is where the liquid stretch starts: SettleS after the pour
// peak, or the first reading.
func liquidFrom(t []float64, ev Events, o Options) float64 {
	if math.IsNaN(ev.PourS) {
		return t[0]
	}
	return ev.PourS + o.SettleS
}

// liquidSpan is the liquid stretch from liquidFrom to one slope window
// before the knee; the caller narrows it to the detected start of
// freezing.
func liquidSpan(t []float64, k int, ev Events, o Options) span {
	return span{index(t, liquidFrom(t, ev, o)), index(t, t[k]-o.SlopeS)}
}

// solidSpan is the solid stretch after the end of freezing: from where T'
// has settled after the end-of-freezing dip, d²T/dt² ≤ settleRate·|T'| (a
// first-order relaxation of time constant τ has d²T/dt² = (T'∞ − T')/τ; Newton's
// law alone gives d²T/dt² = K·|T'| with K ≈ 0.002/s in a cup), at least half a
// slope window after the end, for at most maxSolidS.
func solidSpan(t, d []float64, ev Events, o Options) span {
	n := len(t)
	i0 := index(t, ev.EndS+o.SlopeS/2)
	if i0 >= n-5 {
		return span{n, n}
	}
	dd := fitLocal(t[i0:], d[i0:], o.SlopeS).slope
	lo := n
	for j, v := range dd {
		if v <= settleRate*math.Abs(d[i0+j]) {
			lo = i0 + j
			break
		}
	}
	return span{lo, index(t, t[min(lo, n-1)]+maxSolidS)}
}
