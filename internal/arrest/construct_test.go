package arrest

import (
	"math"
	"math/rand/v2"
	"testing"
)

// Constructed test curves (not measured, not simulated): T'(t) is given at
// knots and blended between them with the cubic smoothstep S(u) = 3u² − 2u³,
// so T' is continuous with zero slope at every knot (each knot is a smooth
// extremum or the end of a flat stretch) and T, its integral, is known in
// closed form: ∫₀¹ S = 1/2 and ∫₀ᵘ S = u³ − u⁴/2. Time 0 is the pour peak;
// before it the reading sits at 25 °C and rises to the peak over 3 s along
// the same smoothstep. The true points follow from the definitions in
// docs/analysis.md applied to this exact T' (see truth), independently of the
// detector.

type knot struct{ t, v float64 } // T' = v °C/s at t s after the pour peak

type shape struct {
	name    string
	family  Family
	anchorT float64 // T(anchorT) = anchorC fixes the pour peak
	anchorC float64
	knots   []knot
	pre     float64 // seconds at room temperature before the pour rise
	// topC, when set, replaces the family's EutecticTopC in truth: a curve
	// constructed with its liquidus inside the family's hint window says
	// by construction which arrest is which.
	topC float64
}

func smooth(u float64) float64 { return u * u * (3 - 2*u) }

// slope returns the exact T' at t (0 before the peak, the pour rise excepted).
func (sh *shape) slope(t float64) float64 {
	k := sh.knots
	if t <= 0 {
		return 0
	}
	for i := 1; i < len(k); i++ {
		if t <= k[i].t {
			u := (t - k[i-1].t) / (k[i].t - k[i-1].t)
			return k[i-1].v + (k[i].v-k[i-1].v)*smooth(u)
		}
	}
	return k[len(k)-1].v
}

// rise is T − peak after t s, exactly.
func (sh *shape) rise(t float64) float64 {
	k := sh.knots
	sum := 0.0
	for i := 1; i < len(k); i++ {
		a, b := k[i-1], k[i]
		if t >= b.t {
			sum += (b.t - a.t) * (a.v + b.v) / 2
			continue
		}
		if t > a.t {
			u := (t - a.t) / (b.t - a.t)
			sum += (b.t - a.t) * (a.v*u + (b.v-a.v)*(u*u*u-u*u*u*u/2))
		}
		return sum
	}
	return sum + (t-k[len(k)-1].t)*k[len(k)-1].v
}

func (sh *shape) peak() float64 { return sh.anchorC - sh.rise(sh.anchorT) }

// temp returns the exact T at t.
func (sh *shape) temp(t float64) float64 {
	p := sh.peak()
	switch {
	case t < -3:
		return 25
	case t < 0:
		return 25 + (p-25)*smooth((t+3)/3)
	}
	return p + sh.rise(t)
}

func (sh *shape) end() float64 { return sh.knots[len(sh.knots)-1].t }

// zero finds the crossing of T' = 0 in (a, b), where T' changes sign, by
// bisection.
func (sh *shape) zero(a, b float64) float64 {
	fa := sh.slope(a)
	for range 200 {
		m := (a + b) / 2
		if (sh.slope(m) > 0) == (fa > 0) {
			a = m
		} else {
			b = m
		}
	}
	return (a + b) / 2
}

// truth applies the definitions of docs/analysis.md to the exact curve.
func (sh *shape) truth() Result {
	var r Result
	pt := func(t float64) Point { return Point{TempC: sh.temp(t), TimeS: t, OK: true} }
	r.PourPeak = pt(0)
	top := FamilyHints(sh.family).EutecticTopC
	if sh.topC != 0 {
		top = sh.topC
	}
	k := sh.knots
	i := 1
	for ; i < len(k)-1; i++ {
		if !(k[i].v > k[i-1].v && k[i].v >= k[i+1].v) {
			continue // not a local maximum of T'
		}
		lo, hi := pt(k[i].t), pt(k[i].t)
		recal := k[i].v > 0
		if recal {
			lo = pt(sh.zero(k[i-1].t, k[i].t))
			j := i + 1
			for k[j].v > 0 {
				j++
			}
			if k[j].v == 0 {
				hi = pt(k[j].t)
			} else {
				hi = pt(sh.zero(k[j-1].t, k[j].t))
			}
		}
		if lo.TempC > top {
			if !r.Liquidus.OK {
				r.Liquidus = hi
				if recal {
					r.LiquidusMin = lo
				}
			}
			continue
		}
		r.EutecticMin, r.EutecticMax = lo, hi
		r.RecalescenceOK = true
		r.Recalescence = hi.TempC - lo.TempC
		break
	}
	best := i + 1
	for j := i + 1; j < len(k); j++ {
		if k[j].v < k[best].v {
			best = j
		}
	}
	r.Solidus = pt(k[best].t)
	return r
}

// sampling describes how a constructed curve is logged.
type sampling struct {
	rate    float64 // Hz
	phase   float64 // fraction of an interval by which the first reading is late
	noise   float64 // white noise, °C (sd)
	spikeP  float64 // probability of a spike per reading
	quant   float64 // quantisation step, °C (0 none)
	seed    uint64
	tailS   float64 // seconds recorded after the last knot
	spikeLo float64 // spike size range, °C
	spikeHi float64
}

// sample logs the constructed curve.
func (sh *shape) sample(s sampling) (t, v []float64) {
	r := rand.New(rand.NewPCG(s.seed, 0x5eed))
	t0 := -3 - sh.pre
	n := int((sh.end() + s.tailS - t0) * s.rate)
	t, v = make([]float64, n), make([]float64, n)
	for i := range n {
		ti := t0 + (float64(i)+s.phase)/s.rate
		x := sh.temp(ti) + s.noise*r.NormFloat64()
		if s.spikeP > 0 && r.Float64() < s.spikeP {
			x += (s.spikeLo + (s.spikeHi-s.spikeLo)*r.Float64()) * float64(1-2*r.IntN(2))
		}
		if s.quant > 0 {
			x = math.Round(x/s.quant) * s.quant
		}
		t[i], v[i] = ti, x
	}
	return t, v
}

// matched returns the duration of the segment after an extremum of T' that
// gives it the same curvature as the segment before (3A/D² on each side), so
// that a moving-window derivative keeps the extremum in place.
func matched(dBefore, aBefore, aAfter float64) float64 {
	return dBefore * math.Sqrt(math.Abs(aAfter/aBefore))
}

// knotSeq lists the knots from the pour peak (0, 0) and start, each step
// {Δt, T'} after the one before.
func knotSeq(start knot, steps ...[2]float64) []knot {
	ks := []knot{{0, 0}, start}
	for _, s := range steps {
		last := ks[len(ks)-1]
		ks = append(ks, knot{last.t + s[0], s[1]})
	}
	return ks
}

// shapes are the constructed curves of the accuracy tests: cast iron hypo-
// and hypereutectic, with and without eutectic recalescence, a white
// (tellurium-cup) flat arrest, Al-Si with and without α-Al recalescence.
func shapes() []*shape {
	seq := knotSeq
	return []*shape{
		{name: "grey iron, hypoeutectic, eutectic recalescence (constructed)", family: FamilyIron, anchorT: 95, anchorC: 1146, pre: 5,
			knots: seq(knot{4, -3.2}, [2]float64{26, -2.6}, [2]float64{12, -0.4}, [2]float64{matched(12, 2.2, 0.9), -1.3}, [2]float64{24, -1.2},
				[2]float64{12, 0.5}, [2]float64{11, -0.06}, [2]float64{60, -0.12}, [2]float64{8, -3.5}, [2]float64{matched(8, 3.38, 1.3), -2.2}, [2]float64{100, -1.6})},
		{name: "grey iron, hypoeutectic, no eutectic recalescence (constructed)", family: FamilyIron, anchorT: 95, anchorC: 1148, pre: 5,
			knots: seq(knot{4, -3.0}, [2]float64{26, -2.5}, [2]float64{12, -0.5}, [2]float64{matched(12, 2.0, 0.8), -1.3}, [2]float64{24, -1.2},
				[2]float64{14, -0.04}, [2]float64{matched(14, 1.16, 0.08), -0.12}, [2]float64{55, -0.2}, [2]float64{8, -3.4}, [2]float64{matched(8, 3.2, 1.2), -2.2}, [2]float64{100, -1.6})},
		{name: "ductile iron, hypereutectic, no liquidus arrest (constructed)", family: FamilyIron, anchorT: 60, anchorC: 1142, pre: 3,
			knots: seq(knot{4, -3.0}, [2]float64{44, -2.2}, [2]float64{12, 0.35}, [2]float64{10, -0.05}, [2]float64{70, -0.1},
				[2]float64{8, -3.4}, [2]float64{matched(8, 3.3, 1.1), -2.3}, [2]float64{100, -1.7})},
		{name: "white iron (tellurium cup), flat arrest (constructed)", family: FamilyWhite, anchorT: 85, anchorC: 1118, pre: 4,
			knots: seq(knot{4, -3.2}, [2]float64{22, -2.8}, [2]float64{12, -0.6}, [2]float64{matched(12, 2.2, 0.7), -1.3}, [2]float64{25, -1.5},
				[2]float64{14, -0.02}, [2]float64{matched(14, 1.48, 0.04), -0.06}, [2]float64{50, -0.1}, [2]float64{7, -4.0}, [2]float64{matched(7, 3.9, 1.4), -2.6}, [2]float64{100, -1.8})},
		{name: "Al-Si7Mg, unrefined: α-Al recalescence, eutectic recalescence (constructed)", family: FamilyAluminum, anchorT: 66, anchorC: 613, pre: 5,
			knots: seq(knot{4, -1.3}, [2]float64{56, -1.0}, [2]float64{8, 0.25}, [2]float64{8, -0.6}, [2]float64{64, -0.55},
				[2]float64{12, 0.12}, [2]float64{12, -0.03}, [2]float64{80, -0.07}, [2]float64{12, -1.4}, [2]float64{matched(12, 1.33, 0.5), -0.9}, [2]float64{110, -0.7})},
		{name: "Al-Si7Mg, grain refined: no α-Al recalescence (constructed)", family: FamilyAluminum, anchorT: 66, anchorC: 614, pre: 5,
			knots: seq(knot{4, -1.3}, [2]float64{56, -1.0}, [2]float64{10, -0.15}, [2]float64{matched(10, 0.85, 0.45), -0.6}, [2]float64{64, -0.55},
				[2]float64{12, 0.1}, [2]float64{12, -0.03}, [2]float64{80, -0.07}, [2]float64{12, -1.4}, [2]float64{matched(12, 1.33, 0.5), -0.9}, [2]float64{110, -0.7})},
	}
}

// TestConstructedTruth checks the test's own construction: T' is the
// derivative of T (central difference), and prints the true points.
func TestConstructedTruth(t *testing.T) {
	for _, sh := range shapes() {
		for tt := 0.5; tt < sh.end(); tt += 0.37 {
			num := (sh.temp(tt+1e-4) - sh.temp(tt-1e-4)) / 2e-4
			if math.Abs(num-sh.slope(tt)) > 1e-5 {
				t.Fatalf("%s: T' at %g: %g, numeric %g", sh.name, tt, sh.slope(tt), num)
			}
		}
		tr := sh.truth()
		t.Logf("%s: peak %.1f liqmin %v liq %.2f@%.1f eut %.2f@%.1f..%.2f@%.1f sol %.2f@%.1f", sh.name, tr.PourPeak.TempC, tr.LiquidusMin.OK,
			tr.Liquidus.TempC, tr.Liquidus.TimeS, tr.EutecticMin.TempC, tr.EutecticMin.TimeS, tr.EutecticMax.TempC, tr.EutecticMax.TimeS, tr.Solidus.TempC, tr.Solidus.TimeS)
	}
}
