package forecast

import (
	"context"
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// cup simulates a cup (SIMULATED) and returns its input and analysis.
func cup(t testing.TB, p sim.Params, alloy string) (assess.Input, arrest.Result, sim.Output) {
	t.Helper()
	o := sim.Simulate(p)
	in := assess.Input{Alloy: alloy, Time: o.Time, Temp: o.Temp, Meta: o.Meta}
	res := arrest.Analyze(o.Time, o.Temp, assess.Detect(in))
	return in, res, o
}

func preset(t testing.TB, alloy string, inoc float64, seed uint64) sim.Params {
	t.Helper()
	p, err := sim.Preset(alloy, inoc, seed)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// On a cup of the fitted model's own kind the fit finds the model's thermal
// constants back: the wall's h (55 W m⁻² K⁻¹ for iron in internal/sim) within
// 1 %, the thermocouple's τ within 5 %, the pour temperature within 1 °C,
// the graphite eutectic reference (Tst of the cup's Si and P) within
// 0.3 °C and the liquidus (Heine's TL of its CEL) within 0.5 °C; the
// residual is the curve's noise (within 20 %).
func TestFitRecoversTheModel(t *testing.T) {
	p := preset(t, sim.GreyIron, 0.2, 5)
	p.Logger.LagS = 0.6
	in, res, o := cup(t, p, "grey-iron")
	rec := assess.FromResult(in, res)
	chem := map[string]float64{"c": o.Params.C, "si": o.Params.Si, "p": o.Params.P}
	f, err := Fit(context.Background(), Sample{Time: in.Time, Temp: in.Temp, Alloy: sim.GreyIron, Chemistry: chem, Points: res}, LawEutectic)
	if err != nil {
		t.Fatal(err)
	}
	if !f.Converged {
		t.Errorf("fit not converged: %s", f.Status)
	}
	got := map[string]float64{}
	for _, q := range f.Params {
		got[q.Name] = q.Value
	}
	for _, c := range []struct {
		name      string
		want, tol float64
		rel       bool
	}{
		{"h", 55, 0.01, true}, {"tau", 0.6, 0.05, true}, {"pour_c", o.Params.PourC, 1, false},
		{"eutectic_ref_c", o.Truth.EutecticC, 0.3, false}, {"liquidus_ref_c", o.Truth.EquilibriumLiquidusC, 0.5, false},
	} {
		d := got[c.name] - c.want
		if c.rel {
			d /= c.want
		}
		if math.Abs(d) > c.tol {
			t.Errorf("fitted %s = %.4g, the model's %.4g (tolerance %g%s)", c.name, got[c.name], c.want, c.tol, map[bool]string{true: " relative"}[c.rel])
		}
	}
	if f.RMSC > 1.2*p.Logger.NoiseC || f.RMSC < 0.8*p.Logger.NoiseC {
		t.Errorf("RMS residual %.3f °C, the logger's noise %.3f °C", f.RMSC, p.Logger.NoiseC)
	}
	if math.Abs(f.truth.EutecticMin.TempC-*rec.EutecticMinC) > 0.2 {
		t.Errorf("fitted model's eutectic minimum %.2f °C, measured %.2f °C", f.truth.EutecticMin.TempC, *rec.EutecticMinC)
	}
}

// Where the model does not apply the prediction says why and carries no
// number.
func TestAdviseSaysWhyNot(t *testing.T) {
	grey := preset(t, sim.GreyIron, 0.1, 3)
	open := grey
	open.Fault = sim.FaultOpen
	white := preset(t, sim.WhiteIron, 0.5, 3)
	noTables := limits.Builtin()
	noTables.InoculantTables = nil
	for _, c := range []struct {
		name  string
		p     sim.Params
		alloy string
		book  *limits.Book
		opt   Options
		want  string
	}{
		{"a bad cup", open, "grey-iron", nil, Options{DelayMin: -1}, "not trustworthy"},
		{"no inoculant table", grey, "grey-iron", noTables, Options{DelayMin: -1}, "no inoculant table for alloy grey-iron"},
		{"white iron", white, "white-iron", nil, Options{DelayMin: -1}, "no inoculant table"},
		{"an unknown inoculant", grey, "grey-iron", nil, Options{Inoculant: "pixie-dust", DelayMin: -1}, "no inoculant \"pixie-dust\""},
		{"more than allowed", grey, "grey-iron", nil, Options{AdditionPct: 0.5, DelayMin: 3}, "more than the largest addition"},
		{"no alloy", grey, "", nil, Options{DelayMin: -1}, "no alloy"},
	} {
		in, res, _ := cup(t, c.p, c.alloy)
		in.Limits = c.book
		ps := Advise(context.Background(), in, res, c.opt)
		if len(ps) == 0 {
			t.Fatalf("%s: no prediction at all", c.name)
		}
		p := ps[0]
		if p.Applies || !strings.Contains(p.Why, c.want) || !strings.HasPrefix(p.Text, "no model estimate: ") || !p.ModelEstimate ||
			p.AdditionPct != nil || p.EutecticMinC != nil || p.HoldMaxMin != nil || p.Caution != Caution {
			t.Errorf("%s: %+v, want no numbers and a reason naming %q", c.name, p, c.want)
		}
	}
}

// A well inoculated cup needs no addition; a poor one gets one no larger
// than the shop allows, which the model then expects to pass with a margin,
// and a wait no longer than the fade allows.
func TestAdviseSearch(t *testing.T) {
	good := preset(t, sim.GreyIron, 0.9, 2)
	in, res, _ := cup(t, good, "grey-iron")
	ps := Advise(context.Background(), in, res, Options{DelayMin: -1})
	if p := ps[0]; !p.Applies || p.AdditionPct == nil || *p.AdditionPct != 0 || p.Verdict != "pass" || !strings.Contains(p.Text, "no fesi75-ca-ba needed") {
		t.Errorf("well inoculated cup: %s (%+v)", p.Text, p)
	}
	poor := preset(t, sim.GreyIron, 0.7, 2)
	poor.HoldMin = 20
	in, res, _ = cup(t, poor, "grey-iron")
	p := Advise(context.Background(), in, res, Options{DelayMin: -1})[0]
	table := builtin.InoculantTables["fesi75-ca-ba"]
	switch {
	case !p.Applies:
		t.Fatalf("poor cup: no prediction: %s", p.Why)
	case *p.AdditionPct <= 0 || *p.AdditionPct > table.MaxPct:
		t.Errorf("poor cup: addition %.2f %%, want more than 0 and at most %.2f %%", *p.AdditionPct, table.MaxPct)
	case p.VerdictU[0] != "pass" || p.Verdict != "pass":
		t.Errorf("poor cup: verdict %s, range %v, want a pass with a margin", p.Verdict, p.VerdictU)
	case p.HoldMaxMin == nil || *p.HoldMaxMin-*p.HoldMaxMinU < table.DelayMin-0.5 || *p.HoldMaxMin > table.DelayMin+3*table.HalfLifeMin:
		t.Errorf("poor cup: hold %v ± %v min with the usual delay %g min", p.HoldMaxMin, p.HoldMaxMinU, table.DelayMin)
	case !strings.Contains(p.Text, "if poured within") || !strings.HasPrefix(p.Text, "model estimate: +"):
		t.Errorf("poor cup: text %q", p.Text)
	}
	// Asking for less than the search advises gives no pass with a margin.
	q := Advise(context.Background(), in, res, Options{AdditionPct: math.Round(*p.AdditionPct*50) / 100, DelayMin: table.DelayMin})[0]
	if q.Applies && q.VerdictU[0] == "pass" {
		t.Errorf("half the advised addition also passes with a margin: %s", q.Text)
	}
	// A longer wait lowers the estimate (the addition fades).
	r := Advise(context.Background(), in, res, Options{AdditionPct: *p.AdditionPct, DelayMin: table.DelayMin + 2*table.HalfLifeMin})[0]
	if !r.Applies || *r.EutecticMinC >= *p.EutecticMinC {
		t.Errorf("two half-lives later the eutectic minimum is %v, at the usual delay %v", r.EutecticMinC, p.EutecticMinC)
	}
}

func TestFitRefusesCurvesWithoutRecalescence(t *testing.T) {
	p := preset(t, sim.PureAl, 0, 1)
	in, res, _ := cup(t, p, "pure-al")
	_, err := Fit(context.Background(), Sample{Time: in.Time, Temp: in.Temp, Alloy: sim.AlSi7Mg, Points: res}, LawPrimary)
	if !errors.Is(err, ErrFit) {
		t.Errorf("a cup without a recalescing primary arrest: %v, want ErrFit", err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	g := preset(t, sim.GreyIron, 0.2, 1)
	in, res, _ = cup(t, g, "grey-iron")
	if _, err := Fit(ctx, Sample{Time: in.Time, Temp: in.Temp, Alloy: sim.GreyIron, Points: res}, LawEutectic); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled fit: %v, want context.Canceled", err)
	}
}

// A SIMULATED cup with a gradient (internal/sim's default radial cup, 8
// zones, the wall freezing first): the lumped two-lump model misfits its
// arrest by more than a degree (the residual of the model's known misfit,
// docs/advice.md "Cups with a gradient"), so Fit refits it with the radial
// cup of FitZones zones, which fits it to the curve's noise (the arrest RMS
// within 20 % of it) and reproduces the measured eutectic minimum within
// 0.2 °C; the fit says which model it is.
func TestFitRadialCup(t *testing.T) {
	p := preset(t, sim.GreyIron, 0.2, 5)
	p.Cup = sim.CupRadial
	in, res, o := cup(t, p, "grey-iron")
	s := Sample{Time: in.Time, Temp: in.Temp, Alloy: sim.GreyIron,
		Chemistry: map[string]float64{"c": o.Params.C, "si": o.Params.Si, "p": o.Params.P}, Points: res}
	lumped, err := fitModel(context.Background(), s, LawEutectic, nil)
	if err != nil {
		t.Fatal(err)
	}
	if lumped.EutecticRMSC < 1 || quality(lumped, res) == "" {
		t.Errorf("the lumped model fits the radial cup's arrest to %.2f °C (noise %.2f °C): expected a misfit over 1 °C", lumped.EutecticRMSC, lumped.NoiseC)
	}
	f, err := Fit(context.Background(), s, LawEutectic)
	if err != nil {
		t.Fatal(err)
	}
	if f.Model != ModelRadial || summary(f).Model != ModelRadial {
		t.Fatalf("fitted with the %q model, want %q", f.Model, ModelRadial)
	}
	if why := quality(f, res); why != "" {
		t.Errorf("radial fit: %s", why)
	}
	if f.EutecticRMSC > 1.2*f.NoiseC {
		t.Errorf("radial fit: arrest RMS %.3f °C, the curve's noise %.3f °C", f.EutecticRMSC, f.NoiseC)
	}
	if d := f.truth.EutecticMin.TempC - res.EutecticMin.TempC; math.Abs(d) > 0.2 {
		t.Errorf("radial fit's eutectic minimum %.2f °C, measured %.2f °C", f.truth.EutecticMin.TempC, res.EutecticMin.TempC)
	}
	if f.Evaluations <= lumped.Evaluations {
		t.Errorf("%d model runs counted, the lumped fit alone took %d", f.Evaluations, lumped.Evaluations)
	}
}
