package assess

import (
	"strings"
	"testing"

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
	if rec.LatentHeatFourierJPerKg != nil || rec.CoherencyC != nil || rec.FSAtCoherency != nil || rec.FSAtEutecticStart != nil {
		t.Errorf("two-thermocouple figures from one thermocouple: %v %v %v; eutectic start %v", rec.LatentHeatFourierJPerKg, rec.CoherencyC, rec.FSAtCoherency, rec.FSAtEutecticStart)
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
	p, err := sim.Preset(sim.AlSi7Mg, 0.6, 5)
	if err != nil {
		t.Fatal(err)
	}
	p.Cup = sim.CupRadial
	out := sim.Simulate(p)
	in := Input{File: "radial.csv", Alloy: sim.AlSi7Mg, Time: out.Time, Temp: out.Temp, Meta: out.Meta,
		Wall: out.Wall, Radii: solidpath.Geometry{WallMm: out.Truth.WallTCRadiusMm}}
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
	p, _ = sim.Preset(sim.PureAl, 0.5, 5)
	p.Cup = sim.CupRadial
	out = sim.Simulate(p)
	rec = Assess(Input{Alloy: sim.PureAl, Time: out.Time, Temp: out.Temp, Wall: out.Wall, Radii: solidpath.Geometry{WallMm: out.Truth.WallTCRadiusMm}})
	if rec.FSMethod != solidpath.MethodNewtonian || rec.LatentHeatFourierJPerKg != nil {
		t.Errorf("pure metal: fs_method %q, Fourier L %v", rec.FSMethod, rec.LatentHeatFourierJPerKg)
	}
}
