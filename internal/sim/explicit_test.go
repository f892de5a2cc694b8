package sim

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// kineticsOf is the explicit form of a preset's eutectic law with its
// onset undercooling dropped (Curve's laws have none).
func kineticsOf(t *testing.T, p Params) Kinetics {
	t.Helper()
	m := p.withDefaults().model()
	return Kinetics{Eutectic: &Nucleation{A: m.eutecticLaw.A, N: m.eutecticLaw.N, Mu: m.eutecticLaw.Mu}, H: m.h, LagS: p.withDefaults().Logger.LagS}
}

// Curve is Simulate's noiseless view of the same model: with the kinetics
// set on the parameters, Simulate's clean curve and Curve agree reading for
// reading (to rounding), and the truth is the same; with Kinetics.Radial,
// likewise for the radial cup.
func TestCurveIsSimulatesModel(t *testing.T) {
	for _, c := range []struct {
		alloy  string
		radial bool
	}{{GreyIron, false}, {AlSi7Mg, false}, {GreyIron, true}, {DuctileIron, true}, {AlSi7Mg, true}} {
		alloy := c.alloy
		p := preset(t, alloy, 0.3)
		k := kineticsOf(t, p)
		q := p
		if c.radial {
			alloy += " radial"
			k.Radial = &Radial{}
			q.Cup, q.Radial = CupRadial, Radial{}
		}
		q.kinetics = &k
		q.DurationS = 200
		out := Simulate(q)
		got, tr, err := Curve(p, k, out.Time)
		if err != nil {
			t.Fatal(err)
		}
		worst := 0.0
		for i := range got {
			worst = math.Max(worst, math.Abs(got[i]-out.Clean[i]))
		}
		if worst > 1e-9 {
			t.Errorf("%s: Curve differs from Simulate's clean curve by up to %g °C", alloy, worst)
		}
		if tr.EutecticMin != out.Truth.EutecticMin || tr.Liquidus != out.Truth.Liquidus {
			t.Errorf("%s: truth %+v / %+v, Simulate's %+v / %+v", alloy, tr.EutecticMin, tr.Liquidus, out.Truth.EutecticMin, out.Truth.Liquidus)
		}
	}
}

// The nucleation and growth laws as published (Oldfield, Trans. ASM 59
// (1966) 945, recalled): the count of nuclei is set by the largest
// undercooling reached, N = A·ΔTⁿ, and a grain grows at u = μ·ΔT², so at a
// held undercooling its radius is μ·ΔT²·t. Checked on the model's own
// kernels to 1e-12 (relative), for n = 1, 2, 2.7.
func TestOldfieldLaws(t *testing.T) {
	for _, n := range []float64{1, 2, 2.7} {
		l := law{A: 3e6, N: n, Mu: 4e-7}
		maxDT := 0.0
		count := 0.0
		for _, dT := range []float64{0.5, 1.5, 1.2, 3, 2.9, 4} { // a rise, a dip (no births), a rise
			count += births(&l, dT, &maxDT)
		}
		if want := 3e6 * math.Pow(4, n); math.Abs(count-want) > 1e-12*want {
			t.Errorf("n %g: %g nuclei after undercooling to 4 K, want A·ΔTⁿ = %g", n, count, want)
		}
	}
	// Growth at a held 2 K for 10 s in 1000 steps: mean radius M1/M0.
	l := law{A: 1, N: 2, Mu: 4e-7}
	var g grains
	g.step(&l, 1e3, 0, 0)
	for range 1000 {
		g.step(&l, 0, 2, 0.01)
	}
	if r, want := g.m1/g.m0, 4e-7*4*10; math.Abs(r-want) > 1e-12*want {
		t.Errorf("radius after 10 s at 2 K: %g m, want μ·ΔT²·t = %g m", r, want)
	}
}

// A curve fixes only the product A·μ³ of the nucleation constant and the
// growth coefficient (the JMAK extended volume Σ N·R³ scales with it): A×8
// with μ/2 gives the same curve to rounding. This is why a fit reports
// A·μ³ (internal/forecast).
func TestCurveDependsOnAMu3(t *testing.T) {
	p := preset(t, GreyIron, 0.2)
	k := kineticsOf(t, p)
	times := make([]float64, 1500)
	for i := range times {
		times[i] = float64(i) / 10
	}
	a, _, err := Curve(p, k, times)
	if err != nil {
		t.Fatal(err)
	}
	k2 := k
	k2.Eutectic = &Nucleation{A: k.Eutectic.A * 8, N: k.Eutectic.N, Mu: k.Eutectic.Mu / 2}
	b, _, err := Curve(p, k2, times)
	if err != nil {
		t.Fatal(err)
	}
	for i := range a {
		if math.Abs(a[i]-b[i]) > 1e-6 {
			t.Fatalf("at %.1f s: %.9f vs %.9f °C", times[i], a[i], b[i])
		}
	}
}

// More eutectic nuclei raise the eutectic minimum and lower the
// recalescence (practice; docs/sources.md §2), also through Curve.
func TestCurveNucleationRaisesEutectic(t *testing.T) {
	p := preset(t, GreyIron, 0)
	k := kineticsOf(t, p)
	times := []float64{0, 200}
	prevMin, prevRec := math.Inf(-1), math.Inf(1)
	for _, f := range []float64{1, 10, 100, 1000} {
		kk := k
		kk.Eutectic = &Nucleation{A: k.Eutectic.A * f, N: 2, Mu: k.Eutectic.Mu}
		_, tr, err := Curve(p, kk, times)
		if err != nil {
			t.Fatal(err)
		}
		if !(tr.EutecticMin.TempC > prevMin && tr.Recalescence < prevRec) {
			t.Errorf("A×%g: eutectic min %.2f rec %.2f, want above %.2f and below %.2f", f, tr.EutecticMin.TempC, tr.Recalescence, prevMin, prevRec)
		}
		prevMin, prevRec = tr.EutecticMin.TempC, tr.Recalescence
	}
}

// The fade of an addition is exponential with the stated half-life,
// r = (pct/0.01)·2^(−t/T½): ln r falls linearly in t with slope −ln 2/T½
// (the exponential form reported for ferrosilicon inoculants; see
// docs/advice.md), and an addition multiplies A by Gain^r.
func TestAdditionFadesExponentially(t *testing.T) {
	a := Addition{Effect: EffectEutecticNuclei, Pct: 0.2, Gain: 1.6, HalfLifeMin: 8}
	for _, c := range []struct{ age, want float64 }{{0, 20}, {8, 10}, {16, 5}, {24, 2.5}, {4, 20 / math.Sqrt2}} {
		a.AgeMin = c.age
		if got := a.Remaining(); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("after %g min: %g fresh steps, want %g", c.age, got, c.want)
		}
	}
	p := preset(t, GreyIron, 0.1)
	base := p.withDefaults().model().eutecticLaw.A
	a.AgeMin = 8
	p.Additions = []Addition{a}
	if got, want := p.withDefaults().model().eutecticLaw.A, base*math.Pow(1.6, 10); math.Abs(got-want) > 1e-9*want {
		t.Errorf("A after the addition %g, want %g", got, want)
	}
	// A modifier lowers the Al-Si eutectic reference by Gain·r.
	q := preset(t, AlSi7Mg, 0.5)
	ref := q.withDefaults().model().eutectic
	q.Additions = []Addition{{Effect: EffectEutecticDepression, Pct: 0.1, Gain: 0.2, HalfLifeMin: 120}}
	if got := q.withDefaults().model().eutectic; math.Abs(ref-got-2) > 1e-9 {
		t.Errorf("modifier: eutectic reference lowered by %g °C, want 2", ref-got)
	}
	out := Simulate(p)
	found := false
	for _, m := range out.Meta {
		found = found || m.Key == "sim_addition" && strings.Contains(m.Value, "0.2 % eutectic-nuclei 8 min before the pour")
	}
	if !found {
		t.Errorf("the curve's metadata does not record the addition: %v", out.Meta)
	}
}

func TestCurveAndAdditionErrors(t *testing.T) {
	p := preset(t, GreyIron, 0.2)
	k := kineticsOf(t, p)
	for _, c := range []struct {
		name  string
		k     Kinetics
		times []float64
		want  string
	}{
		{"no times", k, []float64{1}, "at least 2"},
		{"before the pour", k, []float64{0, 1}, "not after the pour"},
		{"negative A", Kinetics{Eutectic: &Nucleation{A: -1, N: 2, Mu: 1e-7}, H: 50, LagS: 0.5}, []float64{0, 100}, "A = -1"},
		{"zero lag", Kinetics{H: 50}, []float64{0, 100}, "τ = 0"},
		{"huge exponent", Kinetics{Primary: &Nucleation{A: 1, N: 11, Mu: 1e-7}, H: 50, LagS: 0.5}, []float64{0, 100}, "above 10"},
	} {
		if _, _, err := Curve(p, c.k, c.times); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one naming %q", c.name, err, c.want)
		}
	}
	for _, c := range []struct {
		alloy string
		a     Addition
		want  string
	}{
		{GreyIron, Addition{Effect: EffectEutecticDepression, Pct: 0.1, Gain: 0.2, HalfLifeMin: 60}, "is for al-si7mg"},
		{GreyIron, Addition{Effect: EffectPrimaryNuclei, Pct: 0.1, Gain: 2, HalfLifeMin: 60}, "is for al-si7mg"},
		{GreyIron, Addition{Effect: EffectEutecticNuclei, Pct: 0.1, Gain: 0.5, HalfLifeMin: 8}, "at least 1"},
		{GreyIron, Addition{Effect: EffectEutecticNuclei, Pct: 9, Gain: 2, HalfLifeMin: 8}, "outside 0..5"},
		{GreyIron, Addition{Effect: EffectEutecticNuclei, Pct: 0.1, Gain: 2}, "half-life"},
		{GreyIron, Addition{Effect: "spice", Pct: 0.1, Gain: 2, HalfLifeMin: 8}, "unknown addition effect"},
	} {
		q := preset(t, c.alloy, 0.2)
		q.Additions = []Addition{c.a}
		if err := q.Validate(); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%+v: error %v, want one naming %q", c.a, err, c.want)
		}
	}
}

// A coarser step (Kinetics.StepS) gives the same points on iron and Al-Si
// cups, whose kinetics are slow, within 0.05 °C (their times within 1.5 s: a flat top's crossing moves), at a quarter
// of the work.
func TestCurveCoarseStep(t *testing.T) {
	for _, alloy := range []string{GreyIron, DuctileIron, AlSi7Mg} {
		p := preset(t, alloy, 0.2)
		k := kineticsOf(t, p)
		times := []float64{0, 300}
		_, fineTr, err := Curve(p, k, times)
		if err != nil {
			t.Fatal(err)
		}
		k.StepS = 0.02
		_, coarse, err := Curve(p, k, times)
		if err != nil {
			t.Fatal(err)
		}
		samePoints(t, alloy, fineTr, coarse, 0.05)
	}
	k := kineticsOf(t, preset(t, GreyIron, 0.2))
	k.StepS = 0.2
	if _, _, err := Curve(preset(t, GreyIron, 0.2), k, []float64{0, 100}); err == nil || !strings.Contains(err.Error(), "step 0.2 s") {
		t.Errorf("a 0.2 s step: %v", err)
	}
}

// At 20 ms, 30 ms and 50 ms, the steps a radial fit runs with, the points of the
// fit's 5-zone radial cup move by at most 0.1 °C from the simulator's 5 ms
// step (grey and ductile iron, Al-Si7Mg; a tolerance of our own, a fifth of
// the fit's 0.5 °C test of the points).
func TestCurveRadialCoarseStep(t *testing.T) {
	for _, alloy := range []string{GreyIron, DuctileIron, AlSi7Mg} {
		p := preset(t, alloy, 0.2)
		k := kineticsOf(t, p)
		k.Radial = &Radial{Zones: 5}
		times := []float64{0, 300}
		_, fine, err := Curve(p, k, times)
		if err != nil {
			t.Fatal(err)
		}
		for _, step := range []float64{0.02, 0.03, 0.05} {
			k.StepS = step
			_, coarse, err := Curve(p, k, times)
			if err != nil {
				t.Fatal(err)
			}
			samePoints(t, fmt.Sprintf("%s radial, 5 zones, step %g s", alloy, step), fine, coarse, 0.1)
		}
	}
}

// samePoints checks that the liquidus and the eutectic minimum and maximum
// of a run at the 5 ms step (fine) and at a coarser one agree within tolC
// and 1.5 s.
func samePoints(t *testing.T, what string, fine, coarse Truth, tolC float64) {
	t.Helper()
	for _, c := range []struct {
		name string
		a, b Point
	}{{"liquidus", fine.Liquidus, coarse.Liquidus}, {"eutectic min", fine.EutecticMin, coarse.EutecticMin}, {"eutectic max", fine.EutecticMax, coarse.EutecticMax}} {
		if c.a.OK != c.b.OK || math.Abs(c.a.TempC-c.b.TempC) > tolC || math.Abs(c.a.TimeS-c.b.TimeS) > 1.5 {
			t.Errorf("%s %s: %+v at 5 ms, %+v at the coarser step", what, c.name, c.a, c.b)
		}
	}
}

// BenchmarkCurve is one run of the fit's model: a grey-iron cup's first
// 150 s, at the simulator's 5 ms step and at the fit's 20 ms, lumped and
// as the radial cup of 5 zones a cup with a gradient is fitted with (at
// 50 ms in the fit).
func BenchmarkCurve(b *testing.B) {
	p, err := Preset(GreyIron, 0.1, 1)
	if err != nil {
		b.Fatal(err)
	}
	m := p.withDefaults().model()
	for _, c := range []struct {
		step  float64
		zones int
	}{{0, 0}, {0.02, 0}, {0, 5}, {0.02, 5}, {0.05, 5}} {
		k := Kinetics{Eutectic: &Nucleation{A: m.eutecticLaw.A, N: 2, Mu: m.eutecticLaw.Mu}, H: m.h, LagS: 0.5, StepS: c.step}
		name := fmt.Sprintf("step-%gms", 1000*max(c.step, stepS))
		if c.zones > 0 {
			k.Radial = &Radial{Zones: c.zones}
			name = fmt.Sprintf("radial-%d-zones-%s", c.zones, name)
		}
		b.Run(name, func(b *testing.B) {
			for b.Loop() {
				if _, _, err := Curve(p, k, []float64{0, 150}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
