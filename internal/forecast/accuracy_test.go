package forecast

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// pairCase is one simulated before/after pair: a poorly inoculated (or
// faded) ladle's cup, then the same melt after a known addition and delay,
// poured into a new cup (its own pour temperature, metal mass and noise).
type pairCase struct {
	label         string
	before, after sim.Params
	pct, delay    float64
	table         *limits.Inoculant
	alloy         string // the limits alloy
}

// newPair draws a pair from the seeded generator. The melt: chemistry and
// pour within the usual ranges of docs/sources.md §2–§3, inoculation 0–0.4
// faded over 15–40 min (a poorly treated ladle; a grain refiner's melt is
// refined 0–0.2 and held 30–60 min, as the refiner fades slowly), a logger
// of 5 or 10 Hz with 0.03–0.1 °C noise and a 0.3–0.8 s thermocouple. The
// addition: from a twentieth of the allowed one up to the allowed one, the
// delay 1–12 min (1–20 min for a grain refiner). cup and radial select both
// cups' model: sim.CupLumped or, held out, sim.CupRadial with those
// parameters.
func newPair(rng *rand.Rand, alloy string, table *limits.Inoculant, cup sim.CupKind, radial sim.Radial, seed uint64) pairCase {
	u := func(lo, hi float64) float64 { return lo + (hi-lo)*rng.Float64() }
	x, hold := u(0, 0.4), u(15, 40)
	if table.Effect == limits.EffectPrimaryNuclei {
		x, hold = u(0, 0.2), u(30, 60)
	}
	p, err := sim.Preset(alloy, x, seed)
	if err != nil {
		panic(err)
	}
	p.HoldMin = hold
	p.Cup, p.Radial = cup, radial
	switch alloy {
	case sim.GreyIron:
		p.C, p.Si, p.P, p.PourC = u(3.2, 3.5), u(1.8, 2.3), u(0.02, 0.06), u(1310, 1380)
	case sim.DuctileIron:
		p.C, p.Si, p.P, p.PourC = u(3.5, 3.7), u(2.3, 2.7), u(0.02, 0.04), u(1330, 1390)
	case sim.AlSi7Mg:
		p.Si, p.PourC = u(6.6, 7.4), u(700, 740)
		if table.Effect == limits.EffectEutecticDepression {
			p.Modification = u(0, 0.3)
		}
	}
	p.CupMassKg *= u(0.9, 1.1)
	p.Logger.RateHz = []float64{5, 10}[rng.IntN(2)]
	p.Logger.NoiseC = u(0.03, 0.1)
	p.Logger.LagS = u(0.3, 0.8)
	c := pairCase{before: p, table: table, alloy: alloy}
	c.pct = math.Round(u(0.05, 1)*table.MaxPct*100) / 100
	c.delay = math.Round(u(1, 12))
	if table.Effect == limits.EffectPrimaryNuclei {
		c.delay = math.Round(u(1, 20))
	}
	a := p
	a.Seed = seed + 1_000_003
	a.PourC += u(-10, 10)
	a.CupMassKg *= u(0.97, 1.03)
	a.HoldMin += c.delay
	a.Additions = []sim.Addition{{Effect: sim.Effect(table.Effect), Pct: c.pct, AgeMin: c.delay, Gain: table.Gain, HalfLifeMin: table.HalfLifeMin}}
	c.after = a
	c.label = fmt.Sprintf("%s seed %d +%.2f %% %s after %g min", alloy, seed, c.pct, table.Name, c.delay)
	return c
}

// outcome is one pair's prediction against the after cup's reading.
type outcome struct {
	ok                  bool // a prediction was made
	why                 string
	pred, u, meas       float64 // the headline metric
	vPred, vMeas        string
	verdictRange        []string
	predRec, measRec    float64 // recalescence (iron)
	metric              string
	applies, measurable bool
}

func runPair(t *testing.T, c pairCase) outcome {
	t.Helper()
	b := sim.Simulate(c.before)
	in := assess.Input{Alloy: c.alloy, Time: b.Time, Temp: b.Temp, Meta: b.Meta}
	res := arrest.Analyze(b.Time, b.Temp, assess.Detect(in))
	ps := Advise(context.Background(), in, res, Options{Inoculant: c.table.Name, AdditionPct: c.pct, DelayMin: c.delay})
	if len(ps) != 1 {
		t.Fatalf("%s: %d predictions, want 1", c.label, len(ps))
	}
	p := ps[0]
	a := sim.Simulate(c.after)
	rec := assess.Assess(assess.Input{Alloy: c.alloy, Time: a.Time, Temp: a.Temp, Meta: a.Meta})
	o := outcome{ok: p.Applies, why: p.Why, vPred: p.Verdict, vMeas: rec.Verdict, verdictRange: p.VerdictU}
	key := headline(TreatmentOf(c.table))
	o.metric = key
	for _, m := range p.Metrics {
		if m.Metric == key {
			o.pred, o.u = m.Value, m.U
		}
	}
	for _, ch := range rec.Checks {
		if ch.Metric == key && ch.Value != nil {
			o.meas, o.measurable = *ch.Value, true
		}
	}
	return o
}

// TestHeldOutPairs is the accuracy check. On simulated pairs (a
// poorly inoculated cup, then the same melt after a known addition and
// delay, in a new cup) the headline figure predicted from the first cup —
// the eutectic minimum for an iron inoculant — must lie within 1.5 °C of
// the one the analysis reads on the second cup, and within its stated
// expanded uncertainty, in at least 90 % of the cases of each set; the
// predicted verdict must agree in at least 90 % of all the cases (per set
// it is printed: a verdict flips where the after cup lands a few tenths of
// a degree from a band edge, so a set of a few pairs says little). For aluminium the headline is the
// α-Al recalescence after a grain refiner (within 0.3 °C) and the eutectic
// depression after a modifier (within 1.0 °C), tolerances of our own
// choosing, a fraction of their pass bands' scale. The pairs are lumped
// cups (the fitted model's own kind) and, held out, radial cups
// (internal/sim) nearly lumped and with the default conductivities: where
// the two-lump fit misfits a cup's arrest it must say so and predict
// nothing, and every prediction it does make is held to the same
// tolerances. Strong-gradient cups with a chill shell (sim.StrongGradient,
// grey iron and Al-Si7Mg) are beyond the fitted radial cup, which has no
// chill shell: they are not held to a rate of predictions, and a refusal
// must name the fit. The error distribution is printed. UNDERCOOL_ADVICE_PAIRS=N
// runs N pairs per set (a larger sweep by hand); the race detector and
// -short run two sets of two.
func TestHeldOutPairs(t *testing.T) {
	n := 8
	quick := raceBuild || testing.Short()
	if quick {
		n = 2
	}
	sweep := false // a larger sweep by hand: every set gets n pairs
	if v, err := strconv.Atoi(os.Getenv("UNDERCOOL_ADVICE_PAIRS")); err == nil && v > 0 {
		n, sweep = v, true
	}
	iron := builtin.InoculantTables["fesi75-ca-ba"]
	refiner := builtin.InoculantTables["altib-rod"]
	modifier := builtin.InoculantTables["alsr-master"]
	nearly := func(a string) sim.Radial { return sim.NearlyLumped(a) }
	// outside: predictions whose verdict range (from the stated
	// uncertainty) does not hold the measured verdict
	var predicted, asked, agreed, judged, outside int
	plain := func(string) sim.Radial { return sim.Radial{} }
	for _, set := range []struct {
		name   string
		alloy  string
		table  *limits.Inoculant
		cup    sim.CupKind
		radial func(string) sim.Radial
		tol    float64
		// applies: the fit must predict at least 90 % of the pairs; quick:
		// the set runs under the race detector and -short too; loose: its
		// predictions are printed but not held to the tolerance and the
		// stated uncertainty (a known bias, docs/advice.md "Limits").
		applies, quick, loose bool
	}{
		{"grey iron, lumped cups", sim.GreyIron, iron, sim.CupLumped, nil, 1.5, true, true, false},
		{"grey iron, nearly lumped radial cups (held out)", sim.GreyIron, iron, sim.CupRadial, nearly, 1.5, true, true, false},
		{"grey iron, radial cups (held out)", sim.GreyIron, iron, sim.CupRadial, plain, 1.5, true, false, false},
		{"ductile iron, nearly lumped radial cups (held out)", sim.DuctileIron, iron, sim.CupRadial, nearly, 1.5, true, false, false},
		{"ductile iron, radial cups (held out)", sim.DuctileIron, iron, sim.CupRadial, plain, 1.5, true, false, false},
		{"Al-Si7Mg grain refiner, nearly lumped radial cups (held out)", sim.AlSi7Mg, refiner, sim.CupRadial, nearly, 0.3, true, false, false},
		{"Al-Si7Mg grain refiner, radial cups (held out)", sim.AlSi7Mg, refiner, sim.CupRadial, plain, 0.3, true, false, true},
		{"Al-Si7Mg modifier, nearly lumped radial cups (held out)", sim.AlSi7Mg, modifier, sim.CupRadial, nearly, 1.0, true, false, false},
		{"Al-Si7Mg modifier, radial cups (held out)", sim.AlSi7Mg, modifier, sim.CupRadial, plain, 1.0, true, false, false},
		{"grey iron, strong-gradient radial cups with a chill shell (held out)", sim.GreyIron, iron, sim.CupRadial, sim.StrongGradient, 1.5, false, false, false},
		{"Al-Si7Mg grain refiner, strong-gradient radial cups with a chill shell (held out)", sim.AlSi7Mg, refiner, sim.CupRadial, sim.StrongGradient, 0.3, false, false, false},
		{"Al-Si7Mg modifier, strong-gradient radial cups with a chill shell (held out)", sim.AlSi7Mg, modifier, sim.CupRadial, sim.StrongGradient, 1.0, false, false, false},
	} {
		if quick && !set.quick {
			continue
		}
		pairs := n
		switch {
		case !set.applies:
			pairs = max(1, n/2)
		case !sweep && set.radial != nil && set.radial(set.alloy) == (sim.Radial{}):
			pairs = max(1, n/2) // the default radial cups: two fits a cup (Fit), a slower test
		}
		rng := rand.New(rand.NewPCG(17, 1))
		var errs []float64
		within, covered, agree, made := 0, 0, 0, 0
		var lines []string
		for i := range pairs {
			var r sim.Radial
			if set.radial != nil {
				r = set.radial(set.alloy)
			}
			c := newPair(rng, set.alloy, set.table, set.cup, r, uint64(100+i))
			o := runPair(t, c)
			if !o.ok {
				lines = append(lines, fmt.Sprintf("  %s: no prediction: %s", c.label, o.why))
				if !strings.Contains(o.why, "fit") {
					t.Errorf("%s: no prediction, and the reason %q does not name the fit", c.label, o.why)
				}
				continue
			}
			if !o.measurable {
				lines = append(lines, fmt.Sprintf("  %s: the after cup gives no %s", c.label, o.metric))
				continue
			}
			made++
			e := o.pred - o.meas
			errs = append(errs, math.Abs(e))
			if math.Abs(e) <= set.tol {
				within++
			}
			if math.Abs(e) <= o.u {
				covered++
			}
			if o.vPred == o.vMeas {
				agree++
			} else if !slices.Contains(o.verdictRange, o.vMeas) {
				outside++
			}
			lines = append(lines, fmt.Sprintf("  %s: predicted %.2f ± %.2f, measured %.2f, error %+.2f; verdict %s (range %v) vs %s",
				c.label, o.pred, o.u, o.meas, e, o.vPred, o.verdictRange, o.vMeas))
		}
		slices.Sort(errs)
		q := func(f float64) float64 {
			if len(errs) == 0 {
				return math.NaN()
			}
			return errs[min(len(errs)-1, int(f*float64(len(errs))))]
		}
		t.Logf("%s: %d pairs, %d predicted; |error| median %.2f, p90 %.2f, max %.2f; within %.1f %d/%d, within U %d/%d, verdict agrees %d/%d\n%s",
			set.name, pairs, made, q(0.5), q(0.9), q(1), set.tol, within, made, covered, made, agree, made, strings.Join(lines, "\n"))
		for _, c := range []struct {
			what string
			k    int
		}{{"within the tolerance", within}, {"within the stated uncertainty", covered}} {
			if c.k*10 < made*9 && !set.loose {
				t.Errorf("%s: %d of %d predictions %s, want at least 90 %%", set.name, c.k, made, c.what)
			}
		}
		agreed, judged = agreed+agree, judged+made
		if set.applies {
			predicted, asked = predicted+made, asked+pairs
		}
	}
	t.Logf("all sets: %d of %d pairs predicted where the model applies; the verdict agrees in %d of %d predictions", predicted, asked, agreed, judged)
	if predicted*10 < asked*9 {
		t.Errorf("only %d of %d pairs got a prediction where the model applies, want at least 90 %%", predicted, asked)
	}
	switch {
	case judged >= 10 && agreed*10 < judged*9:
		t.Errorf("the verdict agrees in %d of %d predictions, want at least 90 %%", agreed, judged)
	case judged < 10 && outside > 0:
		// a handful of pairs (the race detector, -short) cannot test a
		// rate; each verdict that differs must then lie in the predicted range
		t.Errorf("%d of %d predicted verdicts differ from the measured one beyond their stated range", outside, judged)
	}
}
