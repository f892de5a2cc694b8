package solidpath

import (
	"maps"
	"math"
	"slices"
	"testing"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// The methods on SIMULATED radial cups (internal/sim CupRadial: annular
// zones with conduction between them, the wall freezing first, a second
// thermocouple at 0.8 R). Three kinds: the default sand cup, a nearly
// lumped one and the strong-gradient cup with a chill shell at the wall
// (docs/simulator.md). Truth: the latent heat the model released, and at
// the eutectic start the fraction solid where the centre thermocouple sits
// (Output.CentreFractionSolid, the Fourier method's own quantity) and the
// mass-averaged one (the whole cup's).
//
// Tolerances (docs/solidification.md, "Measured accuracy"):
//   - Newtonian L: ±6 % on the sand and nearly lumped cups, −15 … +3 % on
//     the strong-gradient cups (it reads the chill shell's early heat low,
//     the method's known bias);
//   - Fourier L: ±14 % on the sand and nearly lumped cups (−13.4 % on one
//     nearly lumped Al-Si cup of six seeds; the published
//     accuracy of the method is about ±10 %, memory; here the error is the
//     linear a(fs) of the centre against the zones' own conductivities
//     between the thermocouples, and the axial losses through the cup's
//     bottom and open top, which a radial Laplacian cannot see: with one
//     conductivity for liquid and solid the error falls below 2 %); on the
//     strong-gradient cups its chill shell breaks the parabolic field and L
//     reads up to 35 % high (asserted as that bound);
//   - Fourier fs at the eutectic start within 0.05 of the centre's (the
//     issue's tolerance) on every cup whose parabola check passes
//     (Zero.Inflow ≤ MaxInflow). A cup where the check fails (the wall
//     thermocouple read above the centre before the eutectic: a chill shell
//     recalescing first) is asserted within 0.15 and counted; the check
//     must fail on no sand or nearly lumped cup. Measured over six seeds:
//     it fails on the strong-gradient grey and ductile iron cups whose
//     shell recalesces before the centre's eutectic (9 of 12; Inflow
//     0.034–0.047, fs 0.06–0.115 low) and passes on every other cup
//     (Inflow ≤ 0.0043; fs −0.049 … +0.044). The same cups are also run
//     with the point finder's events (the record's pipeline, whose end of
//     the primary freezing is the eutectic minimum) and the Fourier fs at
//     its eutectic start and minimum printed, split by the check.
func TestOnRadialCups(t *testing.T) {
	kinds := []struct {
		name   string
		radial func(string) sim.Radial
	}{
		{"sand cup", func(string) sim.Radial { return sim.Radial{} }},
		{"nearly lumped", sim.NearlyLumped},
		{"strong gradient", sim.StrongGradient},
	}
	const seeds = 6
	for _, k := range kinds {
		var eN, eF, dF, dN, inPass, inFail, dPass, dFail []float64
		byFinder := map[string][]float64{}
		for _, alloy := range []string{sim.GreyIron, sim.DuctileIron, sim.AlSi7Mg, sim.WhiteIron} {
			for seed := range uint64(seeds) {
				p := simCase(alloy, seed)
				p.Cup, p.Radial = sim.CupRadial, k.radial(alloy)
				out := sim.Simulate(p)
				tr := out.Truth
				ev := truthEvents(tr)
				ev.EutecticS = tr.EutecticStart.TimeS
				es := tr.EutecticStart.TimeS
				s := Analyze(Cup{Time: out.Time, Centre: out.Temp, Wall: out.Wall, Geometry: Geometry{WallMm: tr.WallTCRadiusMm},
					Events: ev, Options: Options{SpecificHeat: tr.SpecificHeatJPerKgK, AmbientC: p.AmbientC}})
				if s.Newtonian == nil || s.Fourier == nil {
					t.Errorf("%s, %s seed %d: %v; %v", k.name, alloy, seed, s.NewtonianErr, s.FourierErr)
					continue
				}
				checkPath(t, *s.Newtonian)
				checkPath(t, *s.Fourier)
				strong := k.name == "strong gradient"
				n := s.Newtonian.LatentJPerKg/tr.LatentJPerKg - 1
				f := s.Fourier.LatentJPerKg/tr.LatentJPerKg - 1
				centre := interp(out.Time, out.CentreFractionSolid, es)
				d := s.Fourier.At(es) - centre
				eN, eF, dF = append(eN, n), append(eF, f), append(dF, d)
				dN = append(dN, s.Newtonian.At(es)-tr.FractionSolid.EutecticStart)
				nLo, nHi, fTol, fsTol := -0.06, 0.06, 0.14, 0.05
				if strong {
					nLo, nHi = -0.15, 0.03
				}
				// The whole pipeline as the record runs it: the point finder's
				// events, whose end of the primary freezing is the eutectic
				// minimum; printed, split by its own check.
				pf := Analyze(Cup{Time: out.Time, Centre: out.Temp, Wall: out.Wall, Geometry: Geometry{WallMm: tr.WallTCRadiusMm},
					Events: EventsOf(arrest.Analyze(out.Time, out.Temp, arrest.Options{Family: family(alloy)})), Options: Options{SpecificHeat: tr.SpecificHeatJPerKgK, AmbientC: p.AmbientC}})
				if pf.Fourier == nil {
					t.Errorf("%s, %s seed %d, the point finder's events: %v", k.name, alloy, seed, pf.FourierErr)
				} else {
					for _, pt := range pf.Fourier.Points {
						if pt.Key == KeyEutecticStart || pt.Key == KeyEutecticMin {
							e := pt.FS - interp(out.Time, out.CentreFractionSolid, pt.TimeS)
							key := pt.Key + map[bool]string{true: ", check fails", false: ", check passes"}[pf.Fourier.Zero.Inflow > MaxInflow]
							byFinder[key] = append(byFinder[key], e)
						}
					}
				}
				if in := s.Fourier.Zero.Inflow; in > MaxInflow {
					fsTol, inFail, dFail = 0.15, append(inFail, in), append(dFail, d)
					if !strong {
						t.Errorf("%s, %s seed %d: the parabola check fails (inflow %.4f) on a cup without a chill shell", k.name, alloy, seed, in)
					}
				} else {
					inPass, dPass = append(inPass, in), append(dPass, d)
				}
				if n < nLo || n > nHi {
					t.Errorf("%s, %s seed %d: Newtonian L %+.1f %% from the model's %.0f J/kg", k.name, alloy, seed, 100*n, tr.LatentJPerKg)
				}
				if (!strong && math.Abs(f) > fTol) || (strong && (f > 0.35 || f < -fTol)) {
					t.Errorf("%s, %s seed %d: Fourier L %+.1f %% from the model's %.0f J/kg", k.name, alloy, seed, 100*f, tr.LatentJPerKg)
				}
				if math.Abs(d) > fsTol {
					t.Errorf("%s, %s seed %d: Fourier fs at the eutectic start %.3f, the centre's %.3f (±%.2f)", k.name, alloy, seed, s.Fourier.At(es), centre, fsTol)
				}
			}
		}
		t.Logf("%-15s Newtonian L error (relative): %s", k.name, spread(eN))
		t.Logf("%-15s Fourier L error (relative):   %s", k.name, spread(eF))
		t.Logf("%-15s Fourier fs at the eutectic start − the centre's: %s", k.name, spread(dF))
		t.Logf("%-15s Newtonian fs at the eutectic start − the whole cup's: %s", k.name, spread(dN))
		t.Logf("%-15s parabola check passes: inflow %s; Fourier fs error there %s", k.name, spread(inPass), spread(dPass))
		t.Logf("%-15s parabola check fails:  inflow %s; Fourier fs error there %s", k.name, spread(inFail), spread(dFail))
		for _, key := range slices.Sorted(maps.Keys(byFinder)) {
			t.Logf("%-15s point finder's events, Fourier fs error at the %s: %s", k.name, key, spread(byFinder[key]))
		}
	}
}

// The coherency search on simulated Al-Si radial cups. The model has no
// dendrite network (a zone's conductivity changes smoothly with its fs), so
// it holds no coherency truth; what is checked is that the point the
// criterion finds lies inside the centre's primary freezing, with its fs
// between 0 and the fs at the eutectic start, and that the search with the
// point finder's events finds the same point within 1 s.
func TestCoherencyOnRadialCups(t *testing.T) {
	for seed := range uint64(4) {
		p := simCase(sim.AlSi7Mg, seed)
		p.Cup = sim.CupRadial
		out := sim.Simulate(p)
		tr := out.Truth
		ev := truthEvents(tr)
		ev.EutecticS = tr.EutecticStart.TimeS
		cup := Cup{Time: out.Time, Centre: out.Temp, Wall: out.Wall, Geometry: Geometry{WallMm: tr.WallTCRadiusMm},
			Events: ev, Options: Options{SpecificHeat: tr.SpecificHeatJPerKgK}, Coherency: true}
		s := Analyze(cup)
		if s.Coherency == nil || s.Fourier == nil {
			t.Fatalf("seed %d: %v; %v", seed, s.CoherencyErr, s.FourierErr)
		}
		c := s.Coherency
		if c.TimeS <= s.Fourier.StartS || c.TimeS >= tr.EutecticStart.TimeS || !(c.FS > 0) || c.FS >= s.Fourier.At(tr.EutecticStart.TimeS) || c.DeltaC >= 0 {
			t.Errorf("seed %d: coherency %+v outside the primary freezing (%.1f–%.1f s)", seed, *c, s.Fourier.StartS, tr.EutecticStart.TimeS)
		}
		cup.Events = EventsOf(arrest.Analyze(out.Time, out.Temp, arrest.Options{Family: arrest.FamilyAluminum}))
		if s2 := Analyze(cup); s2.Coherency == nil || math.Abs(s2.Coherency.TimeS-c.TimeS) > 1 {
			t.Errorf("seed %d: with the point finder's events %+v (%v), with the model's %.1f s", seed, s2.Coherency, s2.CoherencyErr, c.TimeS)
		}
		t.Logf("seed %d: coherency at %.1f s, %.1f °C, T_w − T_c %.2f °C, fs %.3f (eutectic start at fs %.3f)", seed, c.TimeS, c.TempC, c.DeltaC, c.FS, s.Fourier.At(tr.EutecticStart.TimeS))
	}
}
