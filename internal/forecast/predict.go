package forecast

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// Treatment is one of the shop's additions as the model applies it (from an
// inoculant table of the limits file; see limits.Inoculant).
type Treatment struct {
	Name   string     `json:"name"`
	Effect sim.Effect `json:"effect"`
	// Gain per 0.01 % added, fresh: the factor on the nucleation constant
	// A, or the °C the eutectic is lowered (a modifier).
	Gain float64 `json:"gain_per_0_01_pct"`
	// GainU is the standard uncertainty of Gain (from the shop's own
	// calibration); 0 takes Gain as exact.
	GainU       float64 `json:"gain_u"`
	HalfLifeMin float64 `json:"fade_half_life_min"`   // the effect halves in this many minutes
	HalfLifeU   float64 `json:"fade_half_life_u_min"` // its standard uncertainty, min (0: exact)
	MaxPct      float64 `json:"max_addition_pct"`     // the largest addition the shop allows, %
}

// Law is the nucleation law the treatment acts on.
func (t Treatment) Law() Law {
	if t.Effect == sim.EffectPrimaryNuclei {
		return LawPrimary
	}
	return LawEutectic
}

// remaining is r = (pct/0.01)·2^(−delay/half-life), the effect left at the
// pour counted in fresh steps of 0.01 %.
func (t Treatment) remaining(pct, delayMin float64) float64 {
	return sim.Addition{Pct: pct, AgeMin: delayMin, HalfLifeMin: t.HalfLifeMin}.Remaining()
}

// addition is the sim's addition that leaves r fresh steps at the pour.
func (t Treatment) addition(r float64) []sim.Addition {
	if r <= 0 {
		return nil
	}
	return []sim.Addition{{Effect: t.Effect, Pct: r * 0.01, Gain: t.Gain, HalfLifeMin: t.HalfLifeMin}}
}

// Coverage is the coverage factor of every stated uncertainty: U = k·u
// with k = 2, about 95 % for a normal distribution (JCGM 100:2008, the
// GUM, §6.2–6.3; recalled).
const Coverage = 2

// Uncertainty terms besides the fit's covariance.
const (
	// minReadingU is the smallest standard uncertainty of a point the
	// analysis reads off one curve, °C; it is taken as the curve's noise
	// where that is larger (the arrest tests hold eutectic points within
	// 0.5 °C at noise up to 0.3 °C, docs/testing.md).
	minReadingU = 0.05
	// changeU is the standard uncertainty of the model's predicted change
	// of a point, relative to the change: the form of the nucleation law
	// (N = A·ΔTⁿ, fitted on one cup and extrapolated to the nuclei an
	// addition brings) is itself uncertain. 5 % is the spread found on
	// simulated pairs whose law has an onset undercooling the fitted law
	// lacks (docs/advice.md, "Accuracy").
	changeU = 0.05
)

// Estimate is the model's prediction for one addition and delay: the
// record the sample would have (points, metrics, verdict), each metric the
// addition changes with its expanded uncertainty (k = 2).
type Estimate struct {
	AdditionPct float64
	DelayMin    float64
	Remaining   float64 // r, see Treatment
	Record      assess.Record
	// U is the expanded uncertainty (k = Coverage) of each metric the
	// addition changes, by metric key ("eutectic_min_c", ...).
	U map[string]float64
	// Worst and Best are the verdicts with every changed metric moved by
	// its U towards, and away from, the nearest limit.
	Worst, Best string
}

// predictor predicts for one fitted sample.
type predictor struct {
	f     *Fitted
	t     Treatment
	in    assess.Input
	res   arrest.Result // the measured points
	rec   assess.Record // the measured record
	entry *limits.Alloy
	// span is the model's run: the fit's window and a minute more (a
	// modifier's eutectic comes later), for a primary law 10 s more.
	span   []float64
	before [2]float64 // the fitted model's own points (no addition)
	// dBefore[i] are the model's points with parameter i stepped.
	dBefore [][2]float64
	runs    int
	// seen holds every run's points by its parameters and remaining
	// effect: the searches and estimates ask for the same runs again (the
	// no-addition runs of newPredictor, the coarse scan of each edge
	// search), and the model is deterministic.
	seen map[pointsKey]pointsRun
	// saved holds the no-addition run of each parameter vector kept before
	// its eutectic (sim.Saved), for an inoculant's or a modifier's runs:
	// they change only the eutectic, so they resume from it and skip the
	// cooling of the liquid and the primary freezing they share.
	saved map[[numPar]float64]*sim.Saved
}

// pointsKey and pointsRun are one run of predictor.points.
type pointsKey struct {
	th [numPar]float64
	r  float64
}

type pointsRun struct {
	p  [2]float64
	ok bool
}

// newPredictor prepares predictions for the fitted sample.
func newPredictor(f *Fitted, t Treatment, in assess.Input, res arrest.Result) (*predictor, error) {
	pr := &predictor{f: f, t: t, in: in, res: res, rec: assess.FromResult(in, res)}
	more := 60.0 // a modifier's eutectic comes later
	if f.Law == LawPrimary {
		// the primary arrest comes earlier, not later, with more nuclei,
		// and the window already runs 20 s past it: the model is causal,
		// so the points are those of the longer run
		more = 10
	}
	pr.span = []float64{f.times[0], f.times[len(f.times)-1] + more}
	book := in.Limits
	if book == nil {
		book = builtin
	}
	pr.entry = book.Resolve(in.Alloy).Entry
	if pr.entry == nil {
		return nil, fmt.Errorf("forecast: no limits for alloy %q", in.Alloy)
	}
	b, ok := pr.points(f.m.theta, 0)
	if !ok {
		return nil, fmt.Errorf("%w: the fitted model shows no arrest", ErrFit)
	}
	pr.before = b
	for _, k := range f.m.free {
		th := f.m.theta
		th[k] += parInfo[k].step
		p, ok := pr.points(th, 0)
		if !ok {
			return nil, fmt.Errorf("%w: the model loses its arrest near the fitted parameters", ErrFit)
		}
		pr.dBefore = append(pr.dBefore, p)
	}
	return pr, nil
}

// points runs the model with r fresh steps of the treatment and returns
// the two points the law shapes: the eutectic minimum and maximum, or the
// primary arrest's minimum and growth temperature.
func (pr *predictor) points(th [numPar]float64, r float64) ([2]float64, bool) {
	key := pointsKey{th, r}
	if run, ok := pr.seen[key]; ok {
		return run.p, run.ok
	}
	pr.runs++
	var run pointsRun
	var tr sim.Truth
	var err error
	switch sv := pr.saved[th]; {
	case pr.t.Law() != LawEutectic:
		_, tr, err = pr.f.m.curve(th, pr.t.addition(r), pr.span)
	case r == 0:
		if _, tr, sv, err = pr.f.m.curveSaved(th, nil, pr.span); err == nil {
			if pr.saved == nil {
				pr.saved = map[[numPar]float64]*sim.Saved{}
			}
			pr.saved[th] = sv
		}
	case sv != nil:
		_, tr, err = pr.f.m.curveFrom(sv, th, pr.t.addition(r), pr.span)
	default:
		_, tr, err = pr.f.m.curve(th, pr.t.addition(r), pr.span)
	}
	if err == nil {
		lo, top, ok := arrestPoints(pr.f.Law, tr)
		run = pointsRun{[2]float64{lo, top}, ok}
	}
	if pr.seen == nil {
		pr.seen = map[pointsKey]pointsRun{}
	}
	pr.seen[key] = run
	return run.p, run.ok
}

// result is the measured Result moved by the model's change of the two
// points (model after − model before): the delta keeps the measured
// reading and takes from the model only what the addition changes.
func (pr *predictor) result(d [2]float64, read [2]float64) arrest.Result {
	res := pr.res
	if pr.f.Law == LawPrimary {
		lo, top := res.LiquidusMin, res.Liquidus
		lo.TempC += d[0] + read[0]
		top.TempC += d[1] + read[1]
		if top.TempC <= lo.TempC {
			top.TempC = lo.TempC
		}
		res.Liquidus = top
		res.LiquidusMin = lo
		res.LiquidusRecalescence = top.TempC - lo.TempC
		if res.LiquidusRecalescence <= 0 {
			res.LiquidusMin = arrest.Point{}
			res.LiquidusRecalescence = 0
		}
		return res
	}
	lo, top := res.EutecticMin, res.EutecticMax
	lo.TempC += d[0] + read[0]
	top.TempC += d[1] + read[1]
	if top.TempC < lo.TempC {
		top.TempC = lo.TempC
	}
	res.EutecticMin, res.EutecticMax = lo, top
	res.Recalescence = top.TempC - lo.TempC
	return res
}

// metrics are the metric values of a predicted result.
func (pr *predictor) metrics(res arrest.Result) (assess.Record, map[string]float64) {
	rec := assess.FromResult(pr.in, res)
	v := map[string]float64{}
	for _, c := range rec.Checks {
		if c.Value != nil {
			v[c.Metric] = *c.Value
		}
	}
	return rec, v
}

// estimate predicts the record after r fresh steps, with the uncertainty
// of every metric the addition changes: the fit's covariance propagated
// through the model (forward differences), the gain's and the half-life's
// uncertainty, and the reading of the two measured points.
func (pr *predictor) estimate(pct, delayMin float64) (Estimate, error) {
	r := pr.t.remaining(pct, delayMin)
	e := Estimate{AdditionPct: pct, DelayMin: delayMin, Remaining: r, U: map[string]float64{}}
	th := pr.f.m.theta
	after, ok := pr.points(th, r)
	if !ok {
		return e, fmt.Errorf("%w: the model shows no arrest after the addition", ErrFit)
	}
	delta := func(a, b [2]float64) [2]float64 { return [2]float64{a[0] - b[0], a[1] - b[1]} }
	rec, base := pr.metrics(pr.result(delta(after, pr.before), [2]float64{}))
	e.Record = rec
	changed := pr.changed(base)
	// Gradients of every changed metric: one column per fitted parameter,
	// then ln Gain, the half-life and the two readings.
	free := pr.f.m.free
	cols := len(free) + 4
	grad := map[string][]float64{}
	for _, name := range changed {
		grad[name] = make([]float64, cols)
	}
	add := func(col int, res arrest.Result, step float64) {
		_, v := pr.metrics(res)
		for _, name := range changed {
			grad[name][col] = (v[name] - base[name]) / step
		}
	}
	for i, k := range free {
		t := th
		t[k] += parInfo[k].step
		a, ok := pr.points(t, r)
		if !ok {
			return e, fmt.Errorf("%w: the model loses its arrest near the fitted parameters", ErrFit)
		}
		add(i, pr.result(delta(a, pr.dBefore[i]), [2]float64{}), parInfo[k].step)
	}
	if r > 0 {
		// ln Gain and the half-life act through the remaining effect:
		// Gain^r = exp(r·ln Gain), so a step of ln Gain by δ is a step of r
		// by r·δ/ln Gain (a depression scales with Gain·r the same way).
		const dr = 0.02 // relative step of r
		a, ok := pr.points(th, r*(1+dr))
		if !ok {
			return e, fmt.Errorf("%w: the model shows no arrest after the addition", ErrFit)
		}
		_, v := pr.metrics(pr.result(delta(a, pr.before), [2]float64{}))
		lnGain := math.Log(pr.t.Gain)
		if pr.t.Effect == sim.EffectEutecticDepression {
			lnGain = 1 // ∂(Gain·r)/∂Gain·Gain = Gain·r: a relative step of Gain
		}
		for _, name := range changed {
			dmdr := (v[name] - base[name]) / (r * dr) // per unit of r
			grad[name][len(free)] = dmdr * r / lnGain // per unit of ln Gain
			// ∂r/∂T½ = r·ln 2·delay/T½²
			grad[name][len(free)+1] = dmdr * r * math.Ln2 * delayMin / (pr.t.HalfLifeMin * pr.t.HalfLifeMin)
		}
	}
	readU := math.Max(minReadingU, pr.f.NoiseC)
	for j := range 2 {
		var read [2]float64
		read[j] = readU
		add(len(free)+2+j, pr.result(delta(after, pr.before), read), readU)
	}
	// Variances: the fit's covariance for the parameters, independent
	// terms for the rest (the readings are in units of their own u).
	uLnGain := pr.t.GainU / pr.t.Gain
	// Each point: the reading of the measured cup and of the cup to come
	// (the estimate is of what that cup will read), and the model's misfit
	// of the arrest beyond the curve's noise.
	pointVar := 2*readU*readU + math.Max(0, sq(pr.f.EutecticRMSC)-sq(pr.f.NoiseC))
	_, measured := pr.metrics(pr.res)
	for _, name := range changed {
		g := grad[name]
		gv := mat.NewVecDense(len(free), g[:len(free)])
		var cg mat.VecDense
		cg.MulVec(pr.f.cov, gv)
		v := mat.Dot(gv, &cg)
		v += sq(g[len(free)]*uLnGain) + sq(g[len(free)+1]*pr.t.HalfLifeU)
		v += (sq(g[len(free)+2]) + sq(g[len(free)+3])) * pointVar
		v += sq(changeU * (base[name] - measured[name]))
		e.U[name] = Coverage * math.Sqrt(v)
	}
	e.Worst, e.Best = pr.verdictRange(rec, base, e.U)
	return e, nil
}

func sq(x float64) float64 { return x * x }

// changed lists the metrics whose value the law's points decide (those
// that move when the points move), in the limits' order.
func (pr *predictor) changed(base map[string]float64) []string {
	_, moved := pr.metrics(pr.result([2]float64{1, 1}, [2]float64{}))
	_, moved2 := pr.metrics(pr.result([2]float64{-1, 0}, [2]float64{}))
	var out []string
	for _, c := range pr.rec.Checks {
		v, ok := base[c.Metric]
		if !ok {
			continue
		}
		if moved[c.Metric] != v || moved2[c.Metric] != v {
			out = append(out, c.Metric)
		}
	}
	return out
}

// verdictRange is the verdict with every changed metric moved by its U
// towards the nearest limit (worst) and away from it (best).
func (pr *predictor) verdictRange(rec assess.Record, base map[string]float64, u map[string]float64) (worst, best string) {
	move := func(sign float64) string {
		s := limits.Sample{Values: map[string]float64{}, Why: map[string]string{}, Complete: !rec.Provisional}
		for _, c := range rec.Checks {
			v, ok := base[c.Metric]
			if !ok {
				s.Why[c.Metric] = c.Reason
				continue
			}
			if du, ok := u[c.Metric]; ok {
				v += sign * du * towardsLimit(c, v)
			}
			s.Values[c.Metric] = v
		}
		return pr.entry.Evaluate(s).Verdict
	}
	return move(1), move(-1)
}

// towardsLimit is −1 where the nearest limit of the check lies below v, +1
// where it lies above.
func towardsLimit(c limits.Check, v float64) float64 {
	lo, hi := math.Inf(-1), math.Inf(1)
	if c.Pass.Min != nil {
		lo = *c.Pass.Min
	}
	if c.Pass.Max != nil {
		hi = *c.Pass.Max
	}
	if math.IsInf(lo, -1) && math.IsInf(hi, 1) {
		return 0
	}
	if v-lo < hi-v {
		return -1
	}
	return 1
}

// margin is the smallest distance of a changed metric inside its pass
// band, °C (or the metric's unit), negative outside, with each metric moved
// by k times its uncertainty towards its nearest limit; +Inf when no
// changed metric has a band.
func margin(rec assess.Record, changed []string, u map[string]float64, k float64) float64 {
	g := math.Inf(1)
	for _, c := range rec.Checks {
		if c.Value == nil || !slices.Contains(changed, c.Metric) {
			continue
		}
		v := *c.Value
		du := k * u[c.Metric]
		if c.Pass.Min != nil {
			g = math.Min(g, v-du-*c.Pass.Min)
		}
		if c.Pass.Max != nil {
			g = math.Min(g, *c.Pass.Max-(v+du))
		}
	}
	return g
}
