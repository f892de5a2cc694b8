package forecast

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// plan is the outcome of the searches for one treatment.
type plan struct {
	est     Estimate // at the advised (or asked) addition
	changed []string // the metrics the addition changes
	needed  bool     // the sample does not pass with a margin as it is
	asked   bool     // the addition was asked for, not searched
	// reach: the advised addition reaches a pass with a margin; edge: the
	// estimate passes at all within the allowed range.
	reach, edge bool
	edgeR       float64   // remaining effect at the pass edge, in 0.01 % steps
	edgeRU      float64   // its expanded uncertainty
	edgeEst     *Estimate // the estimate at the edge
	pctU        float64   // expanded uncertainty of the addition that reaches the edge, %
	hold, holdU float64   // the longest wait from the addition to the pour, min, and its U
	holdOK      bool
	others      []string // metrics out of their pass band that the addition does not change
}

// steps is the number of steps of the coarse scan before the bisection, and
// bisections the halvings of the bracket.
const (
	steps      = 6
	bisections = 9
)

// nominal is the margin of the estimate after r fresh steps without its
// uncertainty (one model run).
func (pr *predictor) nominal(r float64, changed []string, u map[string]float64, k float64) (float64, bool) {
	a, ok := pr.points(pr.f.m.theta, r)
	if !ok {
		return 0, false
	}
	rec, _ := pr.metrics(pr.result([2]float64{a[0] - pr.before[0], a[1] - pr.before[1]}, [2]float64{}))
	return margin(rec, changed, u, k), true
}

// pct is the addition that leaves r fresh steps after delay minutes.
func (pr *predictor) pct(r, delay float64) float64 {
	return r * 0.01 * math.Exp2(delay/pr.t.HalfLifeMin)
}

// edgeSearch finds the smallest remaining effect r in [0, rMax] at which
// the estimate, moved by k times the uncertainties u, enters the pass band
// of every changed metric: a coarse scan, then bisection. It also returns
// the margin's slope there (per step of r).
func (pr *predictor) edgeSearch(rMax float64, changed []string, u map[string]float64, k float64) (r, slope float64, found bool, err error) {
	g := func(r float64) (float64, error) {
		v, ok := pr.nominal(r, changed, u, k)
		if !ok {
			return 0, fmt.Errorf("%w: the model shows no arrest after the addition", ErrFit)
		}
		return v, nil
	}
	lo, gLo := 0.0, 0.0
	if gLo, err = g(0); err != nil {
		return 0, 0, false, err
	}
	if gLo >= 0 {
		return 0, 0, true, nil
	}
	hi, gHi := 0.0, 0.0
	for i := 1; i <= steps; i++ {
		x := rMax * float64(i) / steps
		v, err := g(x)
		if err != nil {
			return 0, 0, false, err
		}
		if v >= 0 {
			hi, gHi = x, v
			break
		}
		lo, gLo = x, v
	}
	if hi == 0 {
		return 0, 0, false, nil
	}
	for range bisections {
		mid := (lo + hi) / 2
		v, err := g(mid)
		if err != nil {
			return 0, 0, false, err
		}
		if v >= 0 {
			hi, gHi = mid, v
		} else {
			lo, gLo = mid, v
		}
	}
	// The crossing by linear interpolation inside the last bracket.
	r = hi
	if gHi != gLo {
		r = lo + (0-gLo)*(hi-lo)/(gHi-gLo)
	}
	return r, (gHi - gLo) / (hi - lo), true, nil
}

// bindingU is the uncertainty of the metric closest to its pass limit.
func bindingU(rec assess.Record, changed []string, u map[string]float64) float64 {
	best, bu := math.Inf(1), 0.0
	for _, c := range rec.Checks {
		if c.Value == nil || !slices.Contains(changed, c.Metric) {
			continue
		}
		v := *c.Value
		for _, d := range []float64{boundDist(c.Pass.Min, v, 1), boundDist(c.Pass.Max, v, -1)} {
			if d < best {
				best, bu = d, u[c.Metric]
			}
		}
	}
	return bu
}

func boundDist(b *float64, v, sign float64) float64 {
	if b == nil {
		return math.Inf(1)
	}
	return sign * (v - *b)
}

// search finds the smallest allowed addition that reaches a pass with a
// margin (every changed metric inside its pass band by at least its
// uncertainty), and how long the ladle may then wait.
func (pr *predictor) search(delay float64) (plan, error) {
	var pl plan
	e0, err := pr.estimate(0, delay)
	if err != nil {
		return pl, err
	}
	_, base := pr.metrics(pr.res)
	pl.changed = pr.changed(base)
	pl.others = pr.others(pl.changed)
	if margin(e0.Record, pl.changed, e0.U, 1) >= 0 {
		pl.est, pl.reach, pl.edge = e0, true, true
		return pl, nil
	}
	pl.needed = true
	rMax := pr.t.remaining(pr.t.MaxPct, delay)
	if err := pr.findEdge(&pl, rMax, delay); err != nil {
		return pl, err
	}
	if !pl.edge {
		pl.est, err = pr.estimate(pr.t.MaxPct, delay)
		return pl, err
	}
	// With the uncertainty at the edge held fixed, the smallest r whose
	// estimate stays in the band by its uncertainty; then the addition in
	// whole 0.01 % steps, checked with its own uncertainty.
	u := map[string]float64{}
	if pl.edgeEst != nil {
		u = pl.edgeEst.U
	}
	rRec, _, found, err := pr.edgeSearch(rMax, pl.changed, u, 1)
	if err != nil {
		return pl, err
	}
	if !found {
		rRec = rMax
	}
	pct := math.Min(math.Ceil(pr.pct(rRec, delay)*100-1e-9)/100, pr.t.MaxPct)
	for {
		if pl.est, err = pr.estimate(pct, delay); err != nil {
			return pl, err
		}
		pl.reach = margin(pl.est.Record, pl.changed, pl.est.U, 1) >= 0
		if pl.reach || pct+0.01 > pr.t.MaxPct+1e-9 {
			break
		}
		pct = math.Round((pct+0.01)*100) / 100
	}
	pr.holdTime(&pl)
	return pl, nil
}

// at predicts for an asked addition, with the hold time where it passes.
func (pr *predictor) at(pct, delay float64) (plan, error) {
	var pl plan
	var err error
	if pl.est, err = pr.estimate(pct, delay); err != nil {
		return pl, err
	}
	_, base := pr.metrics(pr.res)
	pl.changed = pr.changed(base)
	pl.others = pr.others(pl.changed)
	pl.needed, pl.asked = true, true
	pl.reach = margin(pl.est.Record, pl.changed, pl.est.U, 1) >= 0
	if err := pr.findEdge(&pl, pr.t.remaining(pr.t.MaxPct, delay), delay); err != nil {
		return pl, err
	}
	pr.holdTime(&pl)
	return pl, nil
}

// findEdge finds the remaining effect at the pass edge and its uncertainty:
// the binding metric's U divided by the margin's slope in r.
func (pr *predictor) findEdge(pl *plan, rMax, delay float64) error {
	r, slope, found, err := pr.edgeSearch(rMax, pl.changed, nil, 0)
	if err != nil || !found {
		return err
	}
	pl.edge, pl.edgeR = true, r
	if r == 0 || slope <= 0 {
		return nil
	}
	e, err := pr.estimate(pr.pct(r, delay), delay)
	if err != nil {
		return err
	}
	pl.edgeEst = &e
	pl.edgeRU = bindingU(e.Record, pl.changed, e.U) / slope
	pl.pctU = pr.pct(pl.edgeRU, delay)
	return nil
}

// holdTime is the time from the addition until the remaining effect of the
// advised addition falls to the pass edge: r(t) = pct/0.01·2^(−t/T½) =
// r_edge, so t = T½·log₂(pct/(0.01·r_edge)). Its uncertainty is the
// shortening when the edge lies at r_edge + U(r_edge) (taken on the short
// side, where the log is steeper), with the half-life's in quadrature.
func (pr *predictor) holdTime(pl *plan) {
	if !pl.edge || pl.edgeR <= 0 || pl.est.AdditionPct <= 0 {
		return
	}
	q := pl.est.AdditionPct / (0.01 * pl.edgeR)
	if q < 1 {
		return
	}
	hl := pr.t.HalfLifeMin
	pl.hold = hl * math.Log2(q)
	short := hl * math.Log2(pl.est.AdditionPct/(0.01*(pl.edgeR+pl.edgeRU)))
	pl.holdU = math.Hypot(pl.hold-short, math.Log2(q)*Coverage*pr.t.HalfLifeU)
	pl.holdOK = true
}

// others lists the metrics of the measured record outside their pass band
// that the addition does not change.
func (pr *predictor) others(changed []string) []string {
	var out []string
	for _, c := range pr.rec.Checks {
		bad := c.Status == limits.StatusFail || c.Status == limits.StatusMarginal || c.Status == limits.StatusMissing && c.Required
		if bad && !slices.Contains(changed, c.Metric) {
			out = append(out, fmt.Sprintf("%s (%s)", c.Label, c.Status))
		}
	}
	return out
}

// fill writes the plan into the prediction and words it as advice.
func (p *Prediction) fill(pl plan, t Treatment) {
	e := pl.est
	r := e.Record
	p.AdditionPct, p.DelayMin, p.MaxAdditionPc = num(round(e.AdditionPct, 3)), num(e.DelayMin), num(t.MaxPct)
	if pl.needed && pl.pctU > 0 {
		p.AdditionPctU = num(round(pl.pctU, 3))
	}
	if r.EutecticMinC != nil {
		p.EutecticMinC = num(round(*r.EutecticMinC, 2))
		if u, ok := e.U["eutectic_min_c"]; ok {
			p.EutecticMinCU = num(round(u, 2))
		}
	}
	if r.RecalescenceC != nil {
		p.RecalescenceC = num(round(*r.RecalescenceC, 2))
		if u, ok := e.U["recalescence_c"]; ok {
			p.RecalescenceCU = num(round(u, 2))
		}
	}
	p.Verdict = r.Verdict
	p.VerdictU = []string{e.Worst, e.Best}
	if pl.holdOK {
		p.HoldMaxMin, p.HoldMaxMinU = num(round(pl.hold, 1)), num(round(pl.holdU, 1))
	}
	for _, c := range r.Checks {
		if c.Value == nil || !slices.Contains(pl.changed, c.Metric) {
			continue
		}
		p.Metrics = append(p.Metrics, PredictedMetric{Metric: c.Metric, Label: c.Label, Value: round(*c.Value, 3),
			U: round(e.U[c.Metric], 3), Unit: c.Unit, Status: c.Status})
	}
	p.Text = text(pl, t)
}

// headline is the metric the advice names: the eutectic minimum for an
// inoculant, the α-Al recalescence for a grain refiner, the eutectic
// depression for a modifier.
func headline(t Treatment) string {
	switch t.Effect {
	case sim.EffectPrimaryNuclei:
		return "alpha_recalescence_c"
	case sim.EffectEutecticDepression:
		return "eutectic_depression_c"
	}
	return "eutectic_min_c"
}

// text words the plan as advice.
func text(pl plan, t Treatment) string {
	e := pl.est
	what := "eutectic minimum"
	value := "?"
	key := headline(t)
	for _, c := range e.Record.Checks {
		if c.Metric == key && c.Value != nil {
			what = c.Label
			value = fmt.Sprintf("%s ± %s %s", fmtNum(*c.Value), fmtU(e.U[key]), c.Unit)
		}
	}
	if key == "eutectic_min_c" && e.Record.EutecticMinC != nil {
		what = "eutectic minimum"
		value = fmt.Sprintf("%s ± %s °C", fmtNum(*e.Record.EutecticMinC), fmtU(e.U[key]))
	}
	verdict := e.Record.Verdict
	if e.Worst != e.Best {
		verdict = e.Worst + " to " + e.Best
	}
	var b strings.Builder
	b.WriteString("model estimate: ")
	switch {
	case !pl.needed:
		fmt.Fprintf(&b, "no %s needed: %s %s (%s)", t.Name, what, value, verdict)
	case !pl.edge && e.AdditionPct >= t.MaxPct-1e-9:
		fmt.Fprintf(&b, "even the largest allowed addition, +%.2f %% %s, leaves the %s at %s (%s); consider other measures with the metallurgist", e.AdditionPct, t.Name, what, value, verdict)
	default:
		fmt.Fprintf(&b, "+%.2f %% %s → %s %s (%s)", e.AdditionPct, t.Name, what, value, verdict)
		switch within := math.Floor(pl.hold - pl.holdU); {
		case pl.reach && pl.holdOK && within >= 1:
			fmt.Fprintf(&b, " if poured within %.0f min of the addition", within)
		case pl.reach && pl.holdOK:
			b.WriteString(", but it fades out of the pass band within a minute")
		default:
			fmt.Fprintf(&b, " if poured %g min after the addition", e.DelayMin)
		}
		switch {
		case !pl.reach && pl.asked:
			b.WriteString(": not a pass with a margin")
		case !pl.reach:
			b.WriteString(": not a pass with a margin within the largest allowed addition")
		}
	}
	if len(pl.others) > 0 {
		fmt.Fprintf(&b, "; the verdict also rests on %s, which this addition does not change", strings.Join(pl.others, ", "))
	}
	b.WriteString(". Consider it against the shop's written practice.")
	return b.String()
}

func fmtNum(v float64) string {
	if math.Abs(v) >= 100 {
		return fmt.Sprintf("%.0f", v)
	}
	return fmt.Sprintf("%.1f", v)
}

// fmtU rounds an uncertainty up, to whole degrees above 1.5 and to tenths
// below.
func fmtU(u float64) string {
	if u >= 1.5 {
		return fmt.Sprintf("%.0f", math.Ceil(u))
	}
	return fmt.Sprintf("%.1f", math.Ceil(u*10)/10)
}
