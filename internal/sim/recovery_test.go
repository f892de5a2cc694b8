package sim

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/errdist"
)

// The analysis core's main regression suite: internal/arrest on SIMULATED
// cups of every family, both cup kinds and many logger qualities, against
// the truth read off the noiseless centre curve (docs/analysis.md's
// definitions, Truth). The lumped cup is the two-lump model; the radial cup
// (CupRadial) ranges from nearly lumped to a strong gradient (10–20 °C from
// the wall to the centre while freezing, the wall freezing first, so the
// centre's T' may show a shoulder before its own eutectic). Accuracy
// (issue 12): eutectic minimum, maximum and recalescence within 0.6 °C,
// liquidus within 1.5 °C, end of freezing within 4 °C, with white noise
// ≤ 0.3 °C, one-in-500 spikes of 10–40 °C, quantisation to 0.25 °C and
// 4–50 Hz; a point is null exactly where the truth is null, and every cup
// whose recording a fault cuts short (open thermocouple, pulled early) is
// invalid. A short pour is a check on the cup that the limits make
// (sample_check, docs/faults.md), not the detector.

const recoveryCases = 240

// recoverySeeds are the seed sets the suite draws its cases from, each
// recoveryCases cups of each kind: 2026 the set the detector was first
// measured on, the others drawn later so that a change tuned to one set's
// cases shows on the rest (issue 12: on three fresh sets 14, 11 and 10
// radial checks lay outside where the first held 7).
var recoverySeeds = []uint64{2026, 3001, 4001, 5001}

// lumpedBudget and radialBudget are how many checks over all seed sets may
// lie outside their tolerances: the counts last measured, so that the suite
// fails on any regression while the rest are worked off. On the first set
// alone: 176 radial checks before the detector learnt to pick each arrest
// by what it is, then 27, then 22 once the end of freezing is placed on the
// shortest window that resolves its dip and a pour barely above its first
// arrest is confirmed, then 11 once a later recalescence outranks a
// shoulder that just crossed zero, in the truth and the detector alike,
// then 7 once the end of freezing's bottom is also located on a window two
// thirds as long; the lumped cups there have none. Over the four sets 4
// lumped and 22 radial (per set: 0/6, 1/7, 0/5, 3/4), then 3 and 18 (0/5,
// 1/6, 0/4, 2/3) once the end of freezing after a sharp fall is followed
// down to five-sample windows (TestSharpEndOfFreezingAtFewReadingsASecond),
// then 3 and 10 (0/1, 1/2, 0/4, 2/3) once an arrest search that begins on
// a plateau the pour fell straight onto starts inside that arrest
// (TestPureMetalPouredOntoItsPlateau), then 3 and 11 (0/1, 1/2, 0/5, 2/3)
// once the arrest search judges T' against the noise of the readings so
// far while no noise block after the pour has ended (earlyNoise): a 4 Hz
// Al-Si liquidus 3 s after the search began had been found only because
// the noise was taken as 0 there. Most of them are short pours, which the
// cup check on the pour judges invalid. They are listed with -v;
// docs/analysis.md ("Accuracy on simulated cups") says what they are.
const (
	lumpedBudget = 3
	radialBudget = 11
)

// recoveryAlloys are the alloys the suite draws from.
var recoveryAlloys = []string{GreyIron, DuctileIron, AlSi7Mg, WhiteIron, PureAl, PureZn}

// recoveryCase draws case i of seed set seed: one lumped cup and logger.
func recoveryCase(seed uint64, i int) Params {
	return drawCase(rand.New(rand.NewPCG(seed, uint64(i))), recoveryAlloys[i%len(recoveryAlloys)])
}

// radialCase draws case i of seed set seed: one radial cup and logger (its
// own seeds, seed+1): a third nearly lumped, a third strong gradient, a
// third in between (radialBetween).
func radialCase(seed uint64, i int) Params {
	r := rand.New(rand.NewPCG(seed+1, uint64(i)))
	alloy := recoveryAlloys[i%len(recoveryAlloys)]
	u := r.Float64()
	switch r.IntN(3) {
	case 0:
		u = 0
	case 1:
		u = 1
	}
	p := drawCase(r, alloy)
	p.Cup, p.Radial = CupRadial, radialBetween(alloy, u)
	return p
}

// radialBetween interpolates the radial cup from NearlyLumped (u = 0) to
// StrongGradient (u = 1): geometrically in the wall's heat-transfer
// coefficient, the conductivities and the wall's nuclei factor, linearly
// in the chill shell's thickness.
func radialBetween(alloy string, u float64) Radial {
	n, s := NearlyLumped(alloy), StrongGradient(alloy)
	m := Params{Alloy: alloy}.material()
	geo := func(a, b float64) float64 { return a * math.Pow(b/a, u) }
	r := Radial{
		Zones:      defaultZones,
		WallHW:     geo(m.h, s.WallHW),
		LiquidK:    geo(n.LiquidK, s.LiquidK),
		SolidK:     geo(n.SolidK, s.SolidK),
		WallNuclei: geo(1, s.WallNuclei),
		ShellFrac:  u * s.ShellFrac,
	}
	if u >= 0.5 {
		r.Zones = s.Zones
	}
	return r
}

// drawCase draws the melt, cup and logger of one case from r.
func drawCase(r *rand.Rand, alloy string) Params {
	p, err := Preset(alloy, r.Float64(), r.Uint64())
	if err != nil {
		panic(err)
	}
	switch alloy {
	case GreyIron, DuctileIron, WhiteIron:
		p.Si, p.P = uniform(r, 1.6, 2.8), uniform(r, 0.01, 0.08)
		tst, _ := IronEutecticsC(alloy, p.Si, p.P)
		ceLine := (ironLiquidusIntercept - tst) / ironLiquidusSlope // eutectic CEL
		cel := ceLine - uniform(r, 10, 40)/ironLiquidusSlope        // hypoeutectic, liquidus 10–40 °C above Tst
		if alloy != WhiteIron && r.Float64() < 0.3 {
			cel = ceLine + uniform(r, 0.08, 0.3) // hypereutectic: no liquidus arrest
		}
		p.C = cel - p.Si/4 - p.P/2
		p.PourC = uniform(r, 1300, 1420)
		p.HoldMin = uniform(r, 0, 20)
	case AlSi7Mg:
		p.Si = uniform(r, 6.5, 7.5)
		p.Modification = r.Float64()
		p.PourC = uniform(r, 690, 760)
	case PureAl:
		p.PourC = uniform(r, 690, 740)
	case PureZn:
		p.PourC = uniform(r, 450, 490)
	}
	p.CupMassKg *= uniform(r, 0.85, 1.2)
	rates := []float64{4, 5, 8, 10, 16, 20, 25, 40, 50}
	p.Logger = Logger{
		RateHz: rates[r.IntN(len(rates))],
		NoiseC: 0.3 * r.Float64(),
		QuantC: []float64{0, 0.01, 0.1, 0.25}[r.IntN(4)],
		MainsC: 0.05 * r.Float64(),
		LagS:   uniform(r, 0.3, 1),
	}
	if r.Float64() < 0.5 {
		p.Logger.SpikeRate, p.Logger.SpikeMinC, p.Logger.SpikeMaxC = 1.0/500, 10, 40
	}
	switch x := r.Float64(); {
	case x < 0.05:
		p.Fault = FaultPulledEarly
	case x < 0.1:
		p.Fault = FaultOpen
	case x < 0.13:
		p.Fault = FaultShortPour
	}
	return p
}

func arrestFamily(alloy string) arrest.Family {
	switch alloy {
	case WhiteIron:
		return arrest.FamilyWhite
	case AlSi7Mg:
		return arrest.FamilyAluminum
	case PureAl, PureZn:
		return arrest.FamilyPure
	}
	return arrest.FamilyIron
}

type pointCheck struct {
	errdist.Point // name, tolerance (0: logged, not checked), errors and disagreeing nulls
	truth         func(*Truth) (float64, bool)
	got           func(*arrest.Result) (float64, bool)
}

// recoveryChecks are the points the suite compares, with their tolerances.
func recoveryChecks() []*pointCheck {
	return []*pointCheck{
		{Point: errdist.Point{Name: "pour_peak"}, truth: func(t *Truth) (float64, bool) { return t.PourPeak.TempC, t.PourPeak.OK },
			got: func(r *arrest.Result) (float64, bool) { return r.PourPeak.TempC, r.PourPeak.OK }},
		{Point: errdist.Point{Name: "liquidus_min"}, truth: func(t *Truth) (float64, bool) { return t.LiquidusMin.TempC, t.LiquidusMin.OK },
			got: func(r *arrest.Result) (float64, bool) { return r.LiquidusMin.TempC, r.LiquidusMin.OK }},
		{Point: errdist.Point{Name: "liquidus", Tol: 1.5}, truth: func(t *Truth) (float64, bool) { return t.Liquidus.TempC, t.Liquidus.OK },
			got: func(r *arrest.Result) (float64, bool) { return r.Liquidus.TempC, r.Liquidus.OK }},
		{Point: errdist.Point{Name: "eutectic_start"}, truth: func(t *Truth) (float64, bool) { return t.EutecticStart.TempC, t.EutecticStart.OK },
			got: func(r *arrest.Result) (float64, bool) { return r.EutecticStart.TempC, r.EutecticStart.OK }},
		{Point: errdist.Point{Name: "eutectic_min", Tol: 0.6}, truth: func(t *Truth) (float64, bool) { return t.EutecticMin.TempC, t.EutecticMin.OK },
			got: func(r *arrest.Result) (float64, bool) { return r.EutecticMin.TempC, r.EutecticMin.OK }},
		{Point: errdist.Point{Name: "eutectic_max", Tol: 0.6}, truth: func(t *Truth) (float64, bool) { return t.EutecticMax.TempC, t.EutecticMax.OK },
			got: func(r *arrest.Result) (float64, bool) { return r.EutecticMax.TempC, r.EutecticMax.OK }},
		{Point: errdist.Point{Name: "recalescence", Tol: 0.6}, truth: func(t *Truth) (float64, bool) { return t.Recalescence, t.EutecticMin.OK && t.EutecticMax.OK },
			got: func(r *arrest.Result) (float64, bool) { return r.Recalescence, r.RecalescenceOK }},
		{Point: errdist.Point{Name: "solidus", Tol: 4}, truth: func(t *Truth) (float64, bool) { return t.Solidus.TempC, t.Solidus.OK },
			got: func(r *arrest.Result) (float64, bool) { return r.Solidus.TempC, r.Solidus.OK }},
		// the times, logged: on a flat plateau a point far along it reads
		// the right temperature at the wrong time
		{Point: errdist.Point{Name: "eutectic_min_s"}, truth: func(t *Truth) (float64, bool) { return t.EutecticMin.TimeS, t.EutecticMin.OK },
			got: func(r *arrest.Result) (float64, bool) { return r.EutecticMin.TimeS, r.EutecticMin.OK }},
		{Point: errdist.Point{Name: "eutectic_max_s"}, truth: func(t *Truth) (float64, bool) { return t.EutecticMax.TimeS, t.EutecticMax.OK },
			got: func(r *arrest.Result) (float64, bool) { return r.EutecticMax.TimeS, r.EutecticMax.OK }},
		{Point: errdist.Point{Name: "solidus_s"}, truth: func(t *Truth) (float64, bool) { return t.Solidus.TimeS, t.Solidus.OK },
			got: func(r *arrest.Result) (float64, bool) { return r.Solidus.TimeS, r.Solidus.OK }},
	}
}

func TestRecoveryOfSimulatedTruth(t *testing.T) {
	stride := 1
	if raceBuild || testing.Short() {
		stride = 5 // all families still (6 alloys, 5 coprime); the full 240 run without -race and -short
	}
	for _, kind := range []struct {
		name   string
		draw   func(uint64, int) Params
		budget int
	}{{"lumped", recoveryCase, lumpedBudget}, {"radial", radialCase, radialBudget}} {
		t.Run(kind.name, func(t *testing.T) {
			checks := recoveryChecks()
			var failures []string
			perSet := map[uint64]int{}
			var az arrest.Analyzer
			n, faults := 0, 0
			for _, seed := range recoverySeeds {
				for i := 0; i < recoveryCases; i += stride {
					n++
					p := kind.draw(seed, i)
					out := Simulate(p)
					if err := soundTruth(p, out.Truth); err != "" {
						t.Errorf("seed %d case %d %s %s: the simulated truth itself is unsound: %s", seed, i, p.Alloy, p.Fault, err)
					}
					tm, temp := out.Time, out.Temp
					if out.Open != nil { // the logger's open-circuit readings never reach the core
						k := slices.Index(out.Open, true)
						tm, temp = tm[:k], temp[:k]
					}
					az.Reset()
					res := az.Analyze(tm, temp, arrest.Options{Family: arrestFamily(p.Alloy)})
					desc := fmt.Sprintf("%s seed %d case %d %s inoc %.2f mod %.2f %s %g Hz noise %.2f q %g spikes %g lag %.2f%s:", kind.name, seed, i, p.Alloy, p.Inoculation, p.Modification, p.Fault, p.Logger.RateHz, p.Logger.NoiseC, p.Logger.QuantC, p.Logger.SpikeRate, p.Logger.LagS, radialDesc(p))
					before := len(failures)
					if p.Fault == FaultOpen || p.Fault == FaultPulledEarly {
						faults++
						if !res.Invalid() {
							failures = append(failures, fmt.Sprintf("%s a faulty cup not flagged invalid (problems %v)", desc, res.Problems))
						}
					}
					// a recording that stops while the eutectic is unsettled has
					// no maximum (or no eutectic) in the truth; from the noisy
					// readings the detector may settle one (cutPlateau), and the
					// result is invalid either way
					cut := !out.Truth.EutecticMax.OK
					for _, c := range checks {
						want, wok := c.truth(&out.Truth)
						got, gok := c.got(&res)
						miss, null := c.Add(got, gok, want, wok)
						if miss != "" && !(null && cut && (!wok && strings.HasPrefix(c.Name, "eutectic") || c.Name == "recalescence")) {
							failures = append(failures, desc+" "+miss)
						}
					}
					perSet[seed] += len(failures) - before
				}
			}
			logErrors(t, fmt.Sprintf("%d SIMULATED %s cups over %d seed sets (%d cut short by a fault)", n, kind.name, len(recoverySeeds), faults), checks)
			sets := make([]string, len(recoverySeeds))
			for k, seed := range recoverySeeds {
				sets[k] = fmt.Sprintf("%d: %d", seed, perSet[seed])
			}
			t.Logf("%d checks outside the tolerances on %d %s cups (budget %d; per seed set %s)", len(failures), n, kind.name, kind.budget, strings.Join(sets, ", "))
			for _, f := range failures {
				t.Log(f)
			}
			if len(failures) > kind.budget {
				show := failures[:min(len(failures), 25)]
				t.Errorf("%d failed checks on %d %s cups, more than the budget %d; first %d:\n%s", len(failures), n, kind.name, kind.budget, len(show), strings.Join(show, "\n"))
			}
		})
	}
}

// radialDesc describes a radial cup's parameters for a failure message.
func radialDesc(p Params) string {
	if p.Cup != CupRadial {
		return ""
	}
	r := p.Radial
	return fmt.Sprintf(" radial zones %d wall h %.0f k %.0f/%.0f nuclei %.3g shell %.2f", r.Zones, r.WallHW, r.LiquidK, r.SolidK, r.WallNuclei, r.ShellFrac)
}

// logErrors prints the distribution of arrest − truth per point
// (errdist.Row): the median and 95th percentile of |error|, the extremes of
// the signed error and the nulls that disagree.
func logErrors(t *testing.T, title string, checks []*pointCheck) {
	t.Helper()
	t.Logf("%s; arrest − truth in °C (rows ending _s: in s):", title)
	t.Log(errdist.Header())
	for _, c := range checks {
		t.Log(c.Row())
	}
}

// soundTruth checks that a case's truth is what its physics promises:
// a pour peak always, a eutectic unless the recording stops while it is
// still unsettled (recalescing, or T' above zero by less than the rise that
// makes a recalescence), a liquidus exactly where the
// chemistry is hypoeutectic, and an end of freezing unless the recording
// stops early.
func soundTruth(p Params, tr Truth) string {
	hypo := tr.EquilibriumLiquidusC != 0
	stops := p.Fault == FaultOpen || p.Fault == FaultPulledEarly
	switch {
	case !tr.PourPeak.OK:
		return "no pour peak"
	case !stops && (!tr.EutecticMin.OK || !tr.EutecticMax.OK):
		return "no eutectic"
	case tr.Liquidus.OK != hypo:
		return fmt.Sprintf("liquidus %v for a hypoeutectic alloy %v", tr.Liquidus.OK, hypo)
	case tr.Solidus.OK == stops:
		return fmt.Sprintf("solidus %v with the recording stopping early %v", tr.Solidus.OK, stops)
	}
	return ""
}

// The end of freezing after a fall sharper than the T' window resolves,
// logged at 4–5 Hz: four cups of the suite (a lumped white-iron cup whose
// T' drops to −4.3 °C/s within a second and stays there, three radial cups
// whose centre falls 10–23 °C/s in a few nearly equal steps) read 4.3–5.4
// °C low, a reading or more late, before solidusPoint followed a sharp
// fall down to five-sample windows and steepestStep took a noisier cliff.
// Each must lie within the suite's 4 °C of the truth.
func TestSharpEndOfFreezingAtFewReadingsASecond(t *testing.T) {
	for _, c := range []struct {
		kind string
		draw func(uint64, int) Params
		seed uint64
		i    int
	}{
		{"lumped", recoveryCase, 5001, 195},
		{"radial", radialCase, 3001, 239},
		{"radial", radialCase, 4001, 106},
		{"radial", radialCase, 5001, 123},
	} {
		p := c.draw(c.seed, c.i)
		out := Simulate(p)
		res := arrest.Analyze(out.Time, out.Temp, arrest.Options{Family: arrestFamily(p.Alloy)})
		want := out.Truth.Solidus
		label := fmt.Sprintf("%s seed %d case %d %s at %g Hz, noise %.2f °C", c.kind, c.seed, c.i, p.Alloy, p.Logger.RateHz, p.Logger.NoiseC)
		if !res.Solidus.OK || !want.OK {
			t.Errorf("%s: end of freezing found %v, truth found %v", label, res.Solidus.OK, want.OK)
			continue
		}
		if e := res.Solidus.TempC - want.TempC; math.Abs(e) > 4 {
			t.Errorf("%s: end of freezing %.2f °C at %.2f s, truth %.2f °C at %.2f s (error %+.2f, tolerance 4 °C)", label, res.Solidus.TempC, res.Solidus.TimeS, want.TempC, want.TimeS, e)
		} else {
			t.Logf("%s: end of freezing %+.2f °C from the truth", label, e)
		}
	}
}

// Iron cups logged once a second (below the suite's 4–50 Hz; seed set 7007,
// drawn for a trial of slow loggers): the liquidus must lie within the
// suite's 1.5 °C of the truth. Case 102 (no spikes): while no 16-reading
// noise block after the pour had ended, the arrest search took the noise
// as 0 and read the wobble of T' on the cooling liquid as the liquidus,
// 131 °C high (earlyNoise). Case 144: an 11 °C spike on the liquid's
// 2.7 °C/s slope was missed by the median test and read 102 °C high
// (curve.SpikeAt now also weighs the neighbours' mean).
func TestSlowLoggerLiquidus(t *testing.T) {
	for _, c := range []struct {
		i      int
		spikes bool
	}{{102, false}, {144, true}} {
		p := recoveryCase(7007, c.i)
		p.Logger.RateHz = 1
		if !c.spikes {
			p.Logger.SpikeRate = 0
		}
		out := Simulate(p)
		res := arrest.Analyze(out.Time, out.Temp, arrest.Options{Family: arrestFamily(p.Alloy)})
		want := out.Truth.Liquidus
		label := fmt.Sprintf("seed 7007 case %d %s at 1 Hz, noise %.2f °C, spikes %v", c.i, p.Alloy, p.Logger.NoiseC, c.spikes)
		if !want.OK || !res.Liquidus.OK || math.Abs(res.Liquidus.TempC-want.TempC) > 1.5 {
			t.Errorf("%s: liquidus %+v, truth %+v (tolerance 1.5 °C)", label, res.Liquidus, want)
			continue
		}
		t.Logf("%s: liquidus %+.2f °C from the truth", label, res.Liquidus.TempC-want.TempC)
	}
}
