package arrest

import (
	"fmt"
	"math"
	"testing"
)

// Constructed curves (not measured, not simulated) for the rule that a
// later recalescence outranks an earlier one (outranks, docs/analysis.md
// "What counts as the eutectic"): the earlier must have fallen below its
// minimum again and the later must rise more than twice as much. The
// expected points are the zero crossings of the exact T' at the knots named,
// independent of the detector.
type outrankCase struct {
	sh       *shape
	from, to int // knots: T' crosses − → + between from−1 and from, + → − between from and to
}

func outrankCases() []outrankCase {
	seq := knotSeq
	return []outrankCase{
		{
			// the cup wall's arrest lifts the centre's T' just above zero
			// (a rise of about 0.13 °C, knot 3), the curve then cools 8 °C
			// further before the centre's own eutectic recalesces by about
			// 3 °C (knot 6): the second is the eutectic
			sh: &shape{name: "ductile iron, hypereutectic, wall shoulder just above zero, then the centre's own recalescence (constructed)",
				family: FamilyIron, anchorT: 90, anchorC: 1150, pre: 3,
				knots: seq(knot{4, -3.0}, [2]float64{40, -2.2}, [2]float64{8, 0.08}, [2]float64{8, -0.3}, [2]float64{25, -0.3},
					[2]float64{10, 0.9}, [2]float64{10, -0.05}, [2]float64{60, -0.1}, [2]float64{8, -3.4}, [2]float64{matched(8, 3.3, 1.1), -2.3}, [2]float64{100, -1.7})},
			from: 6, to: 7,
		},
		{
			// the same with a larger first rise (T' up to 0.2 °C/s, about
			// 0.6 °C) and the fall after it too shallow to stand out of a
			// noisy T' (−0.1 °C/s, under the prominence at 0.2 °C of
			// noise): the curve has cooled some 4 °C below the first
			// minimum when the centre's own eutectic recalesces, which
			// reopens the search as a deeper fall would
			sh: &shape{name: "ductile iron, hypereutectic, wall shoulder just above zero, shallow fall, then the centre's own recalescence (constructed)",
				family: FamilyIron, anchorT: 90, anchorC: 1150, pre: 3,
				knots: seq(knot{4, -3.0}, [2]float64{40, -2.2}, [2]float64{8, 0.2}, [2]float64{8, -0.1}, [2]float64{40, -0.1},
					[2]float64{10, 0.9}, [2]float64{10, -0.05}, [2]float64{60, -0.1}, [2]float64{8, -3.4}, [2]float64{matched(8, 3.3, 1.1), -2.3}, [2]float64{100, -1.7})},
			from: 6, to: 7,
		},
		{
			// a plateau wobbling about zero: two recalescences of like
			// size (T' up to 0.1 °C/s each; T rises 0.35 and 0.55 °C, the
			// second from 2 °C lower): the first stays
			sh: &shape{name: "grey iron, hypereutectic, plateau with two like recalescences (constructed)",
				family: FamilyIron, anchorT: 70, anchorC: 1150, pre: 3,
				knots: seq(knot{4, -3.0}, [2]float64{44, -2.2}, [2]float64{12, 0.1}, [2]float64{8, -0.1}, [2]float64{20, -0.1},
					[2]float64{8, 0.1}, [2]float64{8, -0.05}, [2]float64{60, -0.1}, [2]float64{8, -3.4}, [2]float64{matched(8, 3.3, 1.1), -2.3}, [2]float64{100, -1.7})},
			from: 3, to: 4,
		},
	}
}

func TestLaterRecalescenceOutranks(t *testing.T) {
	for _, c := range outrankCases() {
		k := c.sh.knots
		lo, hi := c.sh.zero(k[c.from-1].t, k[c.from].t), c.sh.zero(k[c.from].t, k[c.to].t)
		wantMin, wantMax := c.sh.temp(lo), c.sh.temp(hi)
		logs := []sampling{{rate: 10, noise: 0.05, seed: 1}, {rate: 10, noise: 0.2, seed: 2}, {rate: 25, noise: 0.1, seed: 3}}
		if c.from > 3 {
			// a coarse, noisy logger too; on the wobbling plateau it does
			// not resolve the first recalescence, 0.35 °C, at all (the
			// detector before the rule neither): there the rule has nothing
			// to decide
			logs = append(logs, sampling{rate: 5, noise: 0.25, quant: 0.25, seed: 4})
		}
		for _, s := range logs {
			label := fmt.Sprintf("%s at %g Hz, noise %g", c.sh.name, s.rate, s.noise)
			tt, v := c.sh.sample(s)
			r := Analyze(tt, v, Options{Family: c.sh.family})
			// the issue 12 tolerance of the eutectic points, ±0.6 °C
			if !r.EutecticMin.OK || math.Abs(r.EutecticMin.TempC-wantMin) > 0.6 || math.Abs(r.EutecticMax.TempC-wantMax) > 0.6 {
				t.Errorf("%s: eutectic %.2f → %.2f °C (ok %v), want %.2f → %.2f", label, r.EutecticMin.TempC, r.EutecticMax.TempC, r.EutecticMin.OK, wantMin, wantMax)
			}
			if !r.Solidus.OK || len(r.Problems) > 0 {
				t.Errorf("%s: solidus %+v, problems %v", label, r.Solidus, r.Problems)
			}
			// live: a confirmed point never changes, and the end is the
			// offline answer
			var a Analyzer
			seen := map[string]Point{}
			for n := 1; n <= len(tt); n += 3 {
				lr := a.Analyze(tt[:n], v[:n], Options{Family: c.sh.family, Live: true})
				for name, p := range livePoints(&lr) {
					if old, ok := seen[name]; ok && p != old {
						t.Fatalf("%s: confirmed %s changed at reading %d: %+v -> %+v", label, name, n, old, p)
					} else if !ok && p.OK && !p.Provisional {
						seen[name] = p
					}
				}
			}
			if f := a.Analyze(tt, v, Options{Family: c.sh.family}); f.EutecticMin != r.EutecticMin || f.EutecticMax != r.EutecticMax || f.Solidus != r.Solidus {
				t.Errorf("%s: final live answer differs from offline", label)
			}
		}
	}
}
