package assess

import (
	"bytes"
	"math"
	"reflect"
	"slices"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sim"
	"github.com/undercool-foundry/undercool/internal/solidpath"
)

// simulatedInput is a SIMULATED cup of the alloy (internal/sim preset).
func simulatedInput(t *testing.T, alloy string) (Input, sim.Output) {
	t.Helper()
	p, err := sim.Preset(alloy, 0.6, 3)
	if err != nil {
		t.Fatal(err)
	}
	out := sim.Simulate(p)
	return Input{File: alloy + ".csv", Alloy: alloy, Time: out.Time, Temp: out.Temp, Meta: out.Meta}, out
}

// The record carries the solidification path of a one-thermocouple cup:
// the Newtonian fs at the points and the apparent latent heat with its c,
// within the method's ±8 % on the simulated cup (internal/solidpath,
// TestNewtonianOnLumpedCups); the two-thermocouple figures are null with
// the reason.
func TestSolidificationOneThermocouple(t *testing.T) {
	in, out := simulatedInput(t, sim.AlSi7Mg)
	rec := Assess(in)
	if rec.FSMethod != "newtonian" {
		t.Fatalf("fs_method %q, want newtonian", rec.FSMethod)
	}
	near(t, "specific heat", rec.SpecificHeatJPerKgK, 1180, 0)
	near(t, "apparent latent heat", rec.LatentHeatNewtonianJPerKg, out.Truth.LatentJPerKg, 0.08*out.Truth.LatentJPerKg)
	near(t, "fs at the end of freezing", rec.FSAtEndOfFreezing, 1, 0.02)
	// Al-Si7 freezes about half its mass as primary α-Al before the eutectic
	// (lever rule 0.51, Scheil 0.49 for 7 % Si: docs/sources.md §5,
	// computed): a wide band, the point is the wiring.
	near(t, "fs at the eutectic minimum", rec.FSAtEutecticMin, 0.5, 0.15)
	if rec.FSAtEutecticMin != nil && rec.FSAtEutecticMax != nil && *rec.FSAtEutecticMax < *rec.FSAtEutecticMin {
		t.Errorf("fs falls from %g at the eutectic minimum to %g at its maximum", *rec.FSAtEutecticMin, *rec.FSAtEutecticMax)
	}
	if rec.LatentHeatFourierJPerKg != nil || rec.CoherencyC != nil || rec.FSAtCoherency != nil {
		t.Errorf("two-thermocouple figures from one thermocouple: %v %v %v", rec.LatentHeatFourierJPerKg, rec.CoherencyC, rec.FSAtCoherency)
	}
	// the eutectic start comes before the minimum: fs no higher there
	if rec.FSAtEutecticStart == nil || rec.FSAtEutecticMin == nil || *rec.FSAtEutecticStart > *rec.FSAtEutecticMin {
		t.Errorf("fs at the eutectic start %v, at the minimum %v: want both, the start no higher", rec.FSAtEutecticStart, rec.FSAtEutecticMin)
	}
	// The path behind the figures, worked out again from the curve and the
	// record, gives the same fs (at the record's resolution, round.go).
	path, err := SolidPath(Input{File: in.File, Time: in.Time, Temp: in.Temp}, rec)
	if err != nil || rec.EutecticMinS == nil {
		t.Fatalf("SolidPath: %v", err)
	}
	if got := path.At(*rec.EutecticMinS); roundFigure("fs_at_eutectic_min", got) != *rec.FSAtEutecticMin || path.Method != rec.FSMethod {
		t.Errorf("SolidPath: %s fs %g at the eutectic minimum, the record %s %g", path.Method, got, rec.FSMethod, *rec.FSAtEutecticMin)
	}
	m := jsonFields(t, rec)
	for _, k := range []string{"fs_method", "fs_at_liquidus", "fs_at_eutectic_start", "fs_at_eutectic_min", "fs_at_eutectic_max",
		"fs_at_end_of_freezing", "latent_heat_newtonian_j_per_kg", "latent_heat_fourier_j_per_kg", "specific_heat_j_per_kg_k",
		"coherency_c", "coherency_s", "fs_at_coherency"} {
		v, ok := m[k]
		if !ok {
			t.Errorf("JSON lacks %q", k)
		}
		if k == "latent_heat_fourier_j_per_kg" && v != nil {
			t.Errorf("%s = %v, want null", k, v)
		}
	}
}

// A limit can be set on the new figures like on any metric, and a figure
// that cannot be computed says why.
func TestSolidificationLimits(t *testing.T) {
	in, _ := simulatedInput(t, sim.AlSi7Mg)
	book := limits.Builtin()
	lo, hi := 0.9, 0.95
	a := book.Alloys[sim.AlSi7Mg]
	a.Metrics["fs_at_eutectic_min"] = &limits.Limit{PassMin: &lo, PassMax: &hi, Low: "Consider checking the silicon content."}
	a.Metrics["fs_at_coherency"] = &limits.Limit{PassMin: &lo, Missing: "A two-thermocouple cup gives this figure."}
	if err := book.Validate(); err != nil {
		t.Fatal(err)
	}
	in.Limits = book
	rec := Assess(in)
	var got []string
	for _, c := range rec.Checks {
		got = append(got, c.Metric+":"+c.Status)
	}
	joined := strings.Join(got, " ")
	if !strings.Contains(joined, "fs_at_eutectic_min:") || !strings.Contains(joined, "fs_at_coherency:") {
		t.Fatalf("checks %s lack the fs metrics", joined)
	}
	if !has(rec.Advice, "Consider checking the silicon content.") {
		t.Errorf("fs at the eutectic minimum %v is below 0.9 but the advice is %q", *rec.FSAtEutecticMin, rec.Advice)
	}
	if !has(rec.Reasons, "one thermocouple") && !has(rec.Advice, "two-thermocouple cup") {
		t.Errorf("no reason for the missing coherency: %q / %q", rec.Reasons, rec.Advice)
	}
}

// A pure metal has no default specific heat: its c comes from the limits
// entry (the shipped pure-al sets 1180 J/(kg K)); without it the latent
// heat is null and says why, fs stays.
func TestSolidificationSpecificHeat(t *testing.T) {
	in, _ := simulatedInput(t, sim.PureAl)
	rec := Assess(in)
	near(t, "pure-al c", rec.SpecificHeatJPerKgK, 1180, 0)
	near(t, "pure-al latent heat (397 kJ/kg, CRC Handbook, memory; the Newtonian ±8 %)", rec.LatentHeatNewtonianJPerKg, 397e3, 0.08*397e3)
	book := limits.Builtin()
	book.Alloys[sim.PureAl].Reference.SpecificHeatJPerKgK = nil
	in.Limits = book
	rec = Assess(in)
	if rec.LatentHeatNewtonianJPerKg != nil || rec.SpecificHeatJPerKgK != nil || rec.FSAtEndOfFreezing == nil {
		t.Errorf("without c: L %v, c %v, fs at the end %v", rec.LatentHeatNewtonianJPerKg, rec.SpecificHeatJPerKgK, rec.FSAtEndOfFreezing)
	}
	bad := -3.0
	book.Alloys[sim.PureAl].Reference.SpecificHeatJPerKgK = &bad
	if err := book.Validate(); err == nil || !strings.Contains(err.Error(), "specific_heat_j_per_kg_k") {
		t.Errorf("a negative specific heat validates: %v", err)
	}
}

// A two-thermocouple cup (a SIMULATED radial Al-Si cup with its wall
// thermocouple): fs from the Fourier path, its latent heat within the
// method's ±12 % (internal/solidpath, TestOnRadialCups), the coherency
// point and its fs; SolidPath gives the same Fourier path.
func TestSolidificationTwoThermocouples(t *testing.T) {
	in, out := radialInput(t, 5)
	rec := Assess(in)
	if rec.FSMethod != solidpath.MethodFourier {
		t.Fatalf("fs_method %q with two thermocouples", rec.FSMethod)
	}
	l := out.Truth.LatentJPerKg
	near(t, "Fourier latent heat", rec.LatentHeatFourierJPerKg, l, 0.12*l)
	near(t, "Newtonian latent heat", rec.LatentHeatNewtonianJPerKg, l, 0.06*l)
	if rec.CoherencyC == nil || rec.CoherencyS == nil || rec.FSAtCoherency == nil || rec.LiquidusS == nil || rec.EutecticMinS == nil {
		t.Fatalf("coherency %v at %v s, fs %v", rec.CoherencyC, rec.CoherencyS, rec.FSAtCoherency)
	}
	if *rec.CoherencyS <= *rec.LiquidusS-10 || *rec.CoherencyS >= *rec.EutecticMinS || *rec.FSAtCoherency >= *rec.FSAtEutecticMin {
		t.Errorf("coherency at %.1f s (fs %.3f) is not in the primary freezing (liquidus %.1f s, eutectic %.1f s at fs %.3f)",
			*rec.CoherencyS, *rec.FSAtCoherency, *rec.LiquidusS, *rec.EutecticMinS, *rec.FSAtEutecticMin)
	}
	path, err := SolidPath(in, rec)
	switch {
	case err != nil:
		t.Errorf("SolidPath: %v", err)
	case path.Method != solidpath.MethodFourier || roundFigure("fs_at_eutectic_min", path.At(*rec.EutecticMinS)) != *rec.FSAtEutecticMin:
		t.Errorf("SolidPath: method %s, fs at the eutectic minimum %v, the record %g", path.Method, path.At(*rec.EutecticMinS), *rec.FSAtEutecticMin)
	}
	// A pure metal with a wall thermocouple: no Fourier figure, and why.
	p, _ := sim.Preset(sim.PureAl, 0.5, 5)
	p.Cup = sim.CupRadial
	out = sim.Simulate(p)
	rec = Assess(Input{Alloy: sim.PureAl, Time: out.Time, Temp: out.Temp, Wall: out.Wall, Radii: solidpath.Geometry{WallMm: out.Truth.WallTCRadiusMm}})
	if rec.FSMethod != solidpath.MethodNewtonian || rec.LatentHeatFourierJPerKg != nil {
		t.Errorf("pure metal: fs_method %q, Fourier L %v", rec.FSMethod, rec.LatentHeatFourierJPerKg)
	}
}

// radialInput is a SIMULATED radial Al-Si cup with its wall thermocouple.
func radialInput(t *testing.T, seed uint64) (Input, sim.Output) {
	t.Helper()
	p, err := sim.Preset(sim.AlSi7Mg, 0.6, seed)
	if err != nil {
		t.Fatal(err)
	}
	p.Cup = sim.CupRadial
	out := sim.Simulate(p)
	return Input{File: "radial.csv", Alloy: sim.AlSi7Mg, Time: out.Time, Temp: out.Temp, Meta: out.Meta,
		Wall: out.Wall, Radii: solidpath.Geometry{WallMm: out.Truth.WallTCRadiusMm}}, out
}

// withGap is the input with the wall thermocouple's readings from..to s
// missing (NaN, as a curve file's empty wall_tc_c cells read).
func withGap(in Input, from, to float64) Input {
	in.Wall = slices.Clone(in.Wall)
	for i, s := range in.Time {
		if s >= from && s <= to {
			in.Wall[i] = math.NaN()
		}
	}
	return in
}

// A wall thermocouple that faults or goes silent does not spoil the
// centre's figures: the Newtonian path and the points are those of the
// cup with one thermocouple; the Fourier figures come from the stretch the
// wall thermocouple read where that holds the whole freezing (a reading
// missing at the very end), else they are null, and the record says why.
func TestSolidificationWallGaps(t *testing.T) {
	full, _ := radialInput(t, 5)
	one := full
	one.Wall = nil
	centre := Assess(one)
	two := Assess(full)
	if two.LatentHeatFourierJPerKg == nil || two.EutecticMinS == nil {
		t.Fatal("the cup without gaps has no Fourier latent heat")
	}

	// The last reading without a wall value (the recording stopped between
	// the two channels' lines): the Fourier figures stay, from the stretch.
	last := full.Time[len(full.Time)-1]
	rec := Assess(withGap(full, last, last))
	if rec.LatentHeatFourierJPerKg == nil || rec.FSMethod != solidpath.MethodFourier {
		t.Fatalf("a gap at the last reading loses the Fourier path: %v", rec.Warnings)
	}
	near(t, "Fourier L without the last wall reading", rec.LatentHeatFourierJPerKg, *two.LatentHeatFourierJPerKg, 0.001**two.LatentHeatFourierJPerKg)
	if !has(rec.Warnings, "the Fourier figures come from the stretch it read") {
		t.Errorf("no warning of the stretch: %q", rec.Warnings)
	}

	// The wall thermocouple silent from halfway through the eutectic on.
	book := limits.Builtin()
	lo := 100e3
	book.Alloys[sim.AlSi7Mg].Metrics["latent_heat_fourier_j_per_kg"] = &limits.Limit{PassMin: &lo}
	gap := withGap(full, *two.EutecticMinS+10, last)
	gap.Limits = book
	rec = Assess(gap)
	if rec.LatentHeatFourierJPerKg != nil || rec.CoherencyC == nil && rec.FSMethod == solidpath.MethodFourier {
		t.Errorf("a wall thermocouple gone silent in the eutectic: Fourier L %v, fs by %s", rec.LatentHeatFourierJPerKg, rec.FSMethod)
	}
	if rec.FSMethod != solidpath.MethodNewtonian || !reflect.DeepEqual(rec.LatentHeatNewtonianJPerKg, centre.LatentHeatNewtonianJPerKg) ||
		!reflect.DeepEqual(rec.FSAtEutecticMin, centre.FSAtEutecticMin) || !reflect.DeepEqual(rec.EutecticMinC, centre.EutecticMinC) {
		t.Errorf("the centre's figures changed: fs by %s, L %v (one thermocouple %v), fs at the eutectic minimum %v (%v)",
			rec.FSMethod, ptr(rec.LatentHeatNewtonianJPerKg), ptr(centre.LatentHeatNewtonianJPerKg), ptr(rec.FSAtEutecticMin), ptr(centre.FSAtEutecticMin))
	}
	if !has(rec.Warnings, "the wall thermocouple has no reading at") || !has(rec.Warnings, "are not computed") {
		t.Errorf("no warning of the gap: %q", rec.Warnings)
	}
	why := ""
	for _, c := range rec.Checks {
		if c.Metric == "latent_heat_fourier_j_per_kg" {
			why = c.Reason
		}
	}
	if !strings.Contains(why, "the wall thermocouple has no reading at") {
		t.Errorf("the Fourier latent heat's check says %q", why)
	}

	// No radius for the wall thermocouple: no Fourier figure, and why; the
	// coherency point needs none.
	norad := full
	norad.Radii = solidpath.Geometry{}
	norad.Limits = book
	rec = Assess(norad)
	why = ""
	for _, c := range rec.Checks {
		if c.Metric == "latent_heat_fourier_j_per_kg" {
			why = c.Reason
		}
	}
	if rec.LatentHeatFourierJPerKg != nil || !strings.Contains(why, "radius is not given (tc_wall_radius_mm") || !reflect.DeepEqual(rec.CoherencyC, two.CoherencyC) {
		t.Errorf("no radius: Fourier L %v, reason %q, coherency %v (%v with the radius)", rec.LatentHeatFourierJPerKg, why, ptr(rec.CoherencyC), ptr(two.CoherencyC))
	}
}

// A two-thermocouple cup read from its curve file (CurveInput: the
// wall_tc_c column and the radii in the metadata) gives the record of the
// same readings passed directly.
func TestCurveInputTwoThermocouples(t *testing.T) {
	_, out := radialInput(t, 5)
	var b bytes.Buffer
	if err := curvefile.WriteCurve(&b, out.Curve("radial.csv")); err != nil {
		t.Fatal(err)
	}
	c, err := curvefile.Read(&b, "radial.csv")
	if err != nil {
		t.Fatal(err)
	}
	in, notes := CurveInput("radial.csv", c)
	if len(notes) > 0 || in.Wall == nil || in.Radii.WallMm != math.Round(out.Truth.WallTCRadiusMm*100)/100 || in.Alloy != sim.AlSi7Mg {
		t.Fatalf("CurveInput: notes %q, wall %d readings, radii %+v, alloy %q", notes, len(in.Wall), in.Radii, in.Alloy)
	}
	direct := Input{File: "radial.csv", Alloy: sim.AlSi7Mg, Time: c.Time, Temp: c.Temp, Meta: c.Meta, Wall: in.Wall, Radii: in.Radii}
	if got, want := Assess(in), Assess(direct); !reflect.DeepEqual(got, want) || got.LatentHeatFourierJPerKg == nil {
		t.Errorf("from the file: Fourier L %v, coherency %v; directly: %v, %v", ptr(got.LatentHeatFourierJPerKg), ptr(got.CoherencyC),
			ptr(want.LatentHeatFourierJPerKg), ptr(want.CoherencyC))
	}
	// A wall column that is not numbers leaves the wall out, and says so.
	for i := range c.Extra {
		if c.Extra[i].Name == curvefile.ColumnWall {
			c.Extra[i].Values = slices.Clone(c.Extra[i].Values)
			c.Extra[i].Values[7] = "hot"
		}
	}
	in, notes = CurveInput("radial.csv", c)
	if in.Wall != nil || len(notes) != 1 || !strings.Contains(notes[0], `reading 8 (0.7 s): "hot"`) {
		t.Errorf("a bad wall column: wall %v, notes %q", in.Wall != nil, notes)
	}
}

func ptr(p *float64) any {
	if p == nil {
		return nil
	}
	return *p
}

// The Fourier method's parabola check reaches the record: a SIMULATED
// strong-gradient grey-iron cup (a chill shell at the wall,
// sim.StrongGradient) whose shell recalesces before the centre's eutectic
// gets the warning that its two-thermocouple fs up to the eutectic may read
// low, exactly when the path's Zero.Inflow is above solidpath.MaxInflow; a
// sand cup does not (docs/solidification.md). Poorly and well inoculated
// melts, two seeds each: the check must fire on at least one.
func TestSolidificationParabolaCheck(t *testing.T) {
	const warning = "the wall thermocouple read above the centre before the eutectic"
	fired := 0
	for _, inoc := range []float64{0.1, 0.9} {
		for seed := range uint64(2) {
			p, err := sim.Preset(sim.GreyIron, inoc, seed)
			if err != nil {
				t.Fatal(err)
			}
			p.Cup, p.Radial = sim.CupRadial, sim.StrongGradient(sim.GreyIron)
			out := sim.Simulate(p)
			in := Input{File: "chill.csv", Alloy: sim.GreyIron, Time: out.Time, Temp: out.Temp, Meta: out.Meta,
				Wall: out.Wall, Radii: solidpath.Geometry{WallMm: out.Truth.WallTCRadiusMm}}
			rec := Assess(in)
			path, err := SolidPath(in, rec)
			if err != nil || path.Method != solidpath.MethodFourier {
				t.Fatalf("inoculation %.1f seed %d: %v (%v)", inoc, seed, err, path)
			}
			fails := path.Zero.Inflow > solidpath.MaxInflow
			if fails {
				fired++
			}
			if has(rec.Warnings, warning) != fails {
				t.Errorf("inoculation %.1f seed %d: inflow %.4f (limit %.2f), warnings %q", inoc, seed, path.Zero.Inflow, solidpath.MaxInflow, rec.Warnings)
			}
			t.Logf("inoculation %.1f seed %d: inflow %.4f, warned %v", inoc, seed, path.Zero.Inflow, fails)
		}
	}
	if fired == 0 {
		t.Error("the check fired on no chill-shell cup")
	}
	in, _ := radialInput(t, 1)
	if rec := Assess(in); has(rec.Warnings, warning) {
		t.Errorf("a sand cup warned: %q", rec.Warnings)
	}
}
