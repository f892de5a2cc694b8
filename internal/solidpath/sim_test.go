package solidpath

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// The methods on SIMULATED cups (internal/sim), against the latent heat the
// model released and the fraction solid it knows.

// simCase draws one seeded cup of the given alloy: chemistry, treatment,
// pour, cup mass and logger vary over the ranges of the simulator's own
// regression suite (internal/sim recovery_test.go), without faults.
func simCase(alloy string, seed uint64) sim.Params {
	r := rand.New(rand.NewPCG(16, seed))
	u := func(lo, hi float64) float64 { return lo + (hi-lo)*r.Float64() }
	p, err := sim.Preset(alloy, r.Float64(), r.Uint64())
	if err != nil {
		panic(err)
	}
	switch alloy {
	case sim.GreyIron, sim.DuctileIron, sim.WhiteIron:
		// Hypoeutectic with the liquidus 10–40 °C above the graphite
		// eutectic, as the simulator's suite draws them (a liquidus closer
		// to the eutectic is a case for the point finder, not for these
		// methods).
		p.Si, p.P = u(1.6, 2.8), u(0.01, 0.08)
		tst, _ := sim.IronEutecticsC(alloy, p.Si, p.P)
		tl := tst + u(10, 40)
		p.C = (1669-tl)/124 - p.Si/4 - p.P/2 // Heine's TL = 1669 − 124·CEL, as the simulator uses
		p.PourC = u(1300, 1420)
		p.HoldMin = u(0, 20)
	case sim.AlSi7Mg:
		p.Si = u(6.5, 7.5)
		p.Modification = r.Float64()
		p.PourC = u(690, 760)
	case sim.PureAl:
		p.PourC = u(690, 740)
	case sim.PureZn:
		p.PourC = u(450, 490)
	}
	p.CupMassKg *= u(0.85, 1.2)
	p.Logger = sim.Logger{
		RateHz: []float64{5, 8, 10, 20, 50}[r.IntN(5)],
		NoiseC: 0.2 * r.Float64(),
		QuantC: []float64{0, 0.01, 0.1}[r.IntN(3)],
		MainsC: 0.05 * r.Float64(),
		LagS:   u(0.3, 1),
	}
	if r.Float64() < 0.3 {
		p.Logger.SpikeRate, p.Logger.SpikeMinC, p.Logger.SpikeMaxC = 1.0/500, 10, 40
	}
	return p
}

func family(alloy string) arrest.Family {
	switch alloy {
	case sim.WhiteIron:
		return arrest.FamilyWhite
	case sim.AlSi7Mg:
		return arrest.FamilyAluminum
	case sim.GreyIron, sim.DuctileIron:
		return arrest.FamilyIron
	}
	return arrest.FamilyPure // the check cups
}

// truthEvents are the events of the model's own points (the noiseless
// curve read with the definitions of docs/analysis.md), so that a method is
// judged apart from the point finder.
func truthEvents(tr sim.Truth) Events {
	at := func(p sim.Point) float64 {
		if !p.OK {
			return math.NaN()
		}
		return p.TimeS
	}
	ev := Events{PourS: at(tr.PourPeak), ArrestS: math.NaN(), EutecticS: at(tr.EutecticMin), EndS: at(tr.Solidus)}
	for _, p := range []sim.Point{tr.LiquidusMin, tr.Liquidus, tr.EutecticMin} {
		if p.OK {
			ev.ArrestS = p.TimeS
			break
		}
	}
	return ev
}

// spread summarises errors: count, median, the 90th percentile of the
// absolute error and the extremes.
func spread(xs []float64) string {
	if len(xs) == 0 {
		return "none"
	}
	s := slices.Clone(xs)
	slices.Sort(s)
	abs := make([]float64, len(s))
	for i, v := range s {
		abs[i] = math.Abs(v)
	}
	slices.Sort(abs)
	return fmt.Sprintf("n=%d  min %+.4f  median %+.4f  |p90| %.4f  max %+.4f", len(s), s[0], s[len(s)/2], abs[len(abs)*9/10], s[len(s)-1])
}

// lumpedCases is how many cups of each alloy the lumped-cup test draws.
const lumpedCases = 12

// The Newtonian method on the lumped cup (core and shell, the simulator's
// default), with the model's own c. The model's cup is close to the
// method's one temperature; the bias left is the extra heat the cold cup
// wall takes up in the first tens of seconds after the pour (the model's
// wall-soaking term, docs/simulator.md), which no zero curve from the solid
// stretch can see: it reads L low, as the method's known bias in sand cups
// (memory, docs/sources.md §5), by that term's share of the freezing. The
// alloys (iron, Al-Si) must come within ±5 % (measured −3 … +3 %); the
// pure-metal check cups, whose plateaus begin a few seconds after a
// low-superheat pour, within −16 … +3 % (measured down to −15 % for
// silver, whose 107 s plateau starts 10 s after the pour). Once with the
// model's own points as events, once with the point finder's (the whole
// pipeline, same tolerance).
func TestNewtonianOnLumpedCups(t *testing.T) {
	var byTruth, byFinder []float64
	for _, alloy := range sim.Alloys {
		var errs []float64
		for i := range lumpedCases {
			p := simCase(alloy, uint64(i))
			out := sim.Simulate(p)
			// the model's own c (internal/sim, docs/sources.md §6)
			opt := Options{SpecificHeat: out.Truth.SpecificHeatJPerKgK, AmbientC: p.AmbientC}
			want := out.Truth.LatentJPerKg
			for k, ev := range []Events{truthEvents(out.Truth), EventsOf(arrest.Analyze(out.Time, out.Temp, arrest.Options{Family: family(alloy)}))} {
				path, err := Newtonian(out.Time, out.Temp, ev, opt)
				if err != nil {
					t.Errorf("%s seed %d (events %d): %v", alloy, i, k, err)
					continue
				}
				e := path.LatentJPerKg/want - 1
				lo, hi := -0.05, 0.05
				if family(alloy) == arrest.FamilyPure {
					lo, hi = -0.16, 0.03
				}
				if e < lo || e > hi {
					t.Errorf("%s seed %d (events %d): L %.0f J/kg, the model released %.0f (%+.1f %%)", alloy, i, k, path.LatentJPerKg, want, 100*e)
				}
				if k == 0 {
					byTruth, errs = append(byTruth, e), append(errs, e)
				} else {
					byFinder = append(byFinder, e)
				}
			}
		}
		t.Logf("%-13s Newtonian L error (relative), model's events: %s", alloy, spread(errs))
	}
	t.Logf("all alloys, model's events: %s", spread(byTruth))
	t.Logf("all alloys, point finder's events: %s", spread(byFinder))
}

// Outside check: the latent heat of fusion of pure aluminium, 397 kJ/kg
// (10.71 kJ/mol over 26.98 g/mol; CRC Handbook of Chemistry and Physics,
// memory, docs/sources.md §4), from a simulated pure-aluminium cup read with
// the stated c = 1180 J/(kg K) (liquid aluminium, memory, docs/sources.md
// §6), within 8 % (the method's bias on the simulated cup, see above).
func TestPureAluminiumLatentHeat(t *testing.T) {
	const crc = 397e3
	for seed := range uint64(5) {
		p, err := sim.Preset(sim.PureAl, 0.5, seed)
		if err != nil {
			t.Fatal(err)
		}
		out := sim.Simulate(p)
		r := arrest.Analyze(out.Time, out.Temp, arrest.Options{Family: arrest.FamilyPure})
		path, err := Newtonian(out.Time, out.Temp, EventsOf(r), Options{SpecificHeat: 1180})
		if err != nil {
			t.Fatal(err)
		}
		e := path.LatentJPerKg/crc - 1
		t.Logf("seed %d: %.1f kJ/kg with c = %.0f J/(kg K) (%+.1f %% from 397 kJ/kg)", seed, path.LatentJPerKg/1000, path.SpecificHeat, 100*e)
		if math.Abs(e) > 0.08 {
			t.Errorf("seed %d: %.1f kJ/kg, want 397 kJ/kg ± 8 %%", seed, path.LatentJPerKg/1000)
		}
	}
}
