package arrest

import (
	"fmt"
	"reflect"
	"testing"

	"github.com/undercool-foundry/undercool/internal/sim"
)

// livePoints lists a result's settled values by name, for the
// never-changes check.
func livePoints(r *Result) map[string]Point {
	return map[string]Point{
		"pour_peak": r.PourPeak, "liquidus_min": r.LiquidusMin, "liquidus": r.Liquidus,
		"eutectic_min": r.EutecticMin, "eutectic_max": r.EutecticMax, "solidus": r.Solidus,
	}
}

// Live use: every prefix (two curves) or every 7th prefix (the others) of
// noisy constructed curves through one
// Analyzer (incremental) and, for every 50th, through a fresh Analyze. A
// point once reported confirmed (not Provisional) never changes (exactly:
// the same arithmetic on the same readings) nor becomes provisional again,
// the incremental and fresh answers agree, and the final live answer
// deep-equals the offline one.
func TestLiveSettledPointsNeverChange(t *testing.T) {
	sh := shapes()
	for c := range 2 * len(sh) {
		s := sh[c%len(sh)]
		rate := []float64{4, 10, 25}[(c+c/len(sh))%3]
		tt, v := s.sample(sampling{rate: rate, phase: 0.3, noise: 0.25, spikeP: 1.0 / 500, spikeLo: 10, spikeHi: 40, quant: 0.25, seed: uint64(77 + c), tailS: 0})
		label := fmt.Sprintf("%s at %g Hz", s.name, rate)
		offline := Analyze(tt, v, Options{Family: s.family})
		var a Analyzer
		seen := map[string]Point{}
		completeAt := -1
		var last Result
		step := 7
		if c < 2 {
			step = 1 // every prefix
		}
		for k := 1; k <= len(tt); k += step {
			if k+step > len(tt) {
				k = len(tt)
			}
			r := a.Analyze(tt[:k], v[:k], Options{Family: s.family, Live: true})
			for name, p := range livePoints(&r) {
				old, ok := seen[name]
				switch {
				case ok && !p.OK:
					t.Fatalf("%s: %s vanished at reading %d", label, name, k)
				case ok && p != old:
					t.Fatalf("%s: %s changed at reading %d: %+v -> %+v", label, name, k, old, p)
				case !ok && p.OK && !p.Provisional:
					seen[name] = p
				}
			}
			if r.Complete && completeAt < 0 {
				completeAt = k
			}
			if completeAt >= 0 && !r.Complete {
				t.Fatalf("%s: Complete went back to false at %d", label, k)
			}
			if k%50 == 1 {
				fresh := Analyze(tt[:k], v[:k], Options{Family: s.family, Live: true})
				if !reflect.DeepEqual(fresh, r) {
					t.Fatalf("%s: incremental and fresh analyses of %d readings differ:\n%+v\n%+v", label, k, r, fresh)
				}
			}
			last = r
		}
		final := a.Analyze(tt, v, Options{Family: s.family})
		if !reflect.DeepEqual(final, offline) {
			t.Fatalf("%s: final live answer differs from offline:\n%+v\n%+v", label, final, offline)
		}
		last.Problems, offline.Problems = nil, nil
		if !reflect.DeepEqual(last, offline) {
			t.Fatalf("%s: last live (Live option) answer differs from offline:\n%+v\n%+v", label, last, offline)
		}
		if !offline.Complete {
			t.Fatalf("%s: offline not complete: %v", label, offline.Problems)
		}
		t.Logf("%s: complete after %d of %d readings (%.0f s after the end of freezing)", label, completeAt, len(tt),
			tt[completeAt-1]-offline.Solidus.TimeS)
	}
}

// Reset starts a new curve, and an Analyzer reused for it answers as a
// fresh one; so it does, without Reset, for other options or a curve
// shorter than the one it has seen.
func TestAnalyzerResetStartsANewCurve(t *testing.T) {
	sh := shapes()
	t1, v1 := sh[0].sample(sampling{rate: 10, noise: 0.1, seed: 1})
	t2, v2 := sh[4].sample(sampling{rate: 10, noise: 0.1, seed: 2})
	var a Analyzer
	a.Extend(t1, v1, Options{Family: sh[0].family})
	a.Reset()
	got := a.Extend(t2, v2, Options{Family: sh[4].family})
	if want := Analyze(t2, v2, Options{Family: sh[4].family}); !reflect.DeepEqual(got, want) {
		t.Fatalf("reused Analyzer differs from a fresh one:\n%+v\n%+v", got, want)
	}
	// the same length, one earlier reading changed: a new curve, said so
	v3 := append([]float64(nil), v2...)
	v3[len(v3)/2] += 0.5
	a.Reset()
	got = a.Extend(t2, v3, Options{Family: sh[4].family})
	if want := Analyze(t2, v3, Options{Family: sh[4].family}); !reflect.DeepEqual(got, want) {
		t.Fatalf("changed reading not picked up after Reset")
	}
	// other options, and a shorter curve, start afresh by themselves
	got = a.Extend(t2, v3, Options{Family: sh[0].family})
	if want := Analyze(t2, v3, Options{Family: sh[0].family}); !reflect.DeepEqual(got, want) {
		t.Fatalf("new options did not start afresh")
	}
	got = a.Extend(t1[:500], v1[:500], Options{Family: sh[0].family})
	if want := Analyze(t1[:500], v1[:500], Options{Family: sh[0].family}); !reflect.DeepEqual(got, want) {
		t.Fatalf("a shorter curve did not start afresh")
	}
}

// Live use on simulated radial cups (internal/sim, simulated, not
// measured), strong gradient and nearly lumped, where the wall freezing
// first puts a shoulder before the centre's eutectic: every 3rd prefix
// through one Analyzer. A point shown provisional may move or vanish; a
// confirmed one never changes; the final answer equals the offline one and
// has no provisional point.
func TestLiveRadialCups(t *testing.T) {
	provisional := 0
	for i, c := range []struct {
		alloy      string
		inoc, modf float64
		strong     bool
	}{{sim.GreyIron, 0.1, 0, true}, {sim.GreyIron, 0.2, 0, true}, {sim.DuctileIron, 0.5, 0, true}, {sim.AlSi7Mg, 0.1, 0.8, true},
		{sim.WhiteIron, 0.5, 0, true}, {sim.GreyIron, 0.5, 0, false}, {sim.AlSi7Mg, 0.5, 0.3, false}} {
		p, err := sim.Preset(c.alloy, c.inoc, uint64(40+i))
		if err != nil {
			t.Fatal(err)
		}
		p.Modification, p.Cup, p.Radial = c.modf, sim.CupRadial, sim.NearlyLumped(c.alloy)
		if c.strong {
			p.Radial = sim.StrongGradient(c.alloy)
		}
		p.Logger.RateHz, p.Logger.NoiseC = []float64{5, 10, 20}[i%3], 0.1
		out := sim.Simulate(p)
		opt := Options{Family: familyOf(c.alloy)}
		label := fmt.Sprintf("%s inoc %.1f radial strong=%v", c.alloy, c.inoc, c.strong)
		offline := Analyze(out.Time, out.Temp, opt)
		var a Analyzer
		seen := map[string]Point{}
		live := opt
		live.Live = true
		for k := 1; k <= len(out.Time); k += 3 {
			r := a.Analyze(out.Time[:k], out.Temp[:k], live)
			for name, pt := range livePoints(&r) {
				old, ok := seen[name]
				switch {
				case ok && pt != old:
					t.Fatalf("%s: confirmed %s changed at reading %d: %+v -> %+v", label, name, k, old, pt)
				case !ok && pt.OK && !pt.Provisional:
					seen[name] = pt
				case pt.Provisional:
					provisional++
				}
			}
		}
		final := a.Analyze(out.Time, out.Temp, opt)
		if !reflect.DeepEqual(final, offline) {
			t.Fatalf("%s: final live answer differs from offline:\n%+v\n%+v", label, final, offline)
		}
		for name, pt := range livePoints(&final) {
			if pt.Provisional {
				t.Errorf("%s: offline %s is provisional", label, name)
			}
		}
		if !offline.Complete || offline.Invalid() {
			t.Errorf("%s: offline not complete or invalid: %v", label, offline.Problems)
		}
	}
	t.Logf("%d provisional points shown along the way", provisional)
}
