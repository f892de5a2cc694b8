package forecast

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"

	"github.com/undercool-foundry/undercool/internal/sim"
)

// Pair is one of the shop's own before/after pairs: a cup, an addition of
// Pct % of the ladle, and the re-sample poured DelayMin minutes after the
// addition, from the same ladle.
type Pair struct {
	Label         string
	Before, After Sample
	Pct, DelayMin float64
}

// PairEffect is the effect one pair shows: for a nucleation effect the
// rise of ln(A·μ³) from the before cup to the after cup, for a depression
// the fall of the eutectic reference, °C, with its standard uncertainty
// from both fits. Err says why a pair was left out.
type PairEffect struct {
	Label    string
	Effect   float64 // observed
	U        float64 // its standard uncertainty
	Steps    float64 // the addition in steps of 0.01 %
	DelayMin float64
	Fitted   float64 // the calibration's value for it
	Err      error
}

// Calibration is a treatment's gain and half-life fitted to pairs.
type Calibration struct {
	Treatment Treatment // the fitted Gain, GainU, HalfLifeMin, HalfLifeU in place
	// HalfLifeFitted is false where the pairs' delays are too alike to
	// tell a half-life: the table's is kept and only the gain fitted.
	HalfLifeFitted bool
	Used           int     // pairs that entered the fit
	Chi2PerDoF     float64 // the fit's reduced χ²
	Pairs          []PairEffect
}

// Calibrate fits the treatment's gain and fade half-life to the shop's
// pairs. Each before cup is fitted (Fit); its after cup is refitted with the
// melt's own parameters held (n, the references, the primary law) and only
// what the addition changes free (ln(A·μ³), or the eutectic reference for
// a modifier) with the new cup's thermal parameters (h, τ, the pour). The
// effects y_i then follow the fade model
//
//	y = g·(pct/0.01)·2^(−delay/T½)
//
// with g = ln Gain (nucleation) or Gain (depression), fitted by weighted
// least squares (gonum optimize.NelderMead on g and ln T½, weights 1/u²);
// their covariance is (JᵀWJ)⁻¹ scaled by the reduced χ² where that exceeds
// one. Delays spread over less than a minute leave the half-life as given.
func Calibrate(ctx context.Context, pairs []Pair, t Treatment) (Calibration, error) {
	cal := Calibration{Treatment: t}
	var ys, us, xs, ds []float64
	for _, p := range pairs {
		e := PairEffect{Label: p.Label, Steps: p.Pct / 0.01, DelayMin: p.DelayMin}
		e.Effect, e.U, e.Err = pairEffect(ctx, p, t)
		if ctx.Err() != nil {
			return cal, ctx.Err()
		}
		if e.Err == nil && !(e.U > 0) {
			e.Err = fmt.Errorf("%w: the effect's uncertainty could not be computed", ErrFit)
		}
		cal.Pairs = append(cal.Pairs, e)
		if e.Err == nil {
			ys, us, xs, ds = append(ys, e.Effect), append(us, e.U), append(xs, e.Steps), append(ds, e.DelayMin)
		}
	}
	cal.Used = len(ys)
	if cal.Used < 2 {
		return cal, fmt.Errorf("forecast: calibrate %s: %d usable pairs of %d, want at least 2", t.Name, cal.Used, len(pairs))
	}
	g0 := math.Log(t.Gain)
	if t.Effect == sim.EffectEutecticDepression {
		g0 = t.Gain
	}
	model := func(g, hl float64, i int) float64 { return g * xs[i] * math.Exp2(-ds[i]/hl) }
	chi2 := func(g, hl float64) float64 {
		s := 0.0
		for i := range ys {
			s += sq((ys[i] - model(g, hl, i)) / us[i])
		}
		return s
	}
	cal.HalfLifeFitted = slices.Max(ds)-slices.Min(ds) >= 1 && cal.Used >= 3
	g, hl := g0, t.HalfLifeMin
	if cal.HalfLifeFitted {
		res, err := optimize.Minimize(optimize.Problem{Func: func(x []float64) float64 {
			if x[1] < math.Log(0.5) || x[1] > math.Log(1e4) {
				return math.Inf(1)
			}
			return chi2(x[0], math.Exp(x[1]))
		}}, []float64{g0, math.Log(hl)}, nil, &optimize.NelderMead{})
		if err != nil && res == nil {
			return cal, fmt.Errorf("forecast: calibrate %s: %w", t.Name, err)
		}
		g, hl = res.X[0], math.Exp(res.X[1])
	} else {
		// g alone is linear: g = Σ w·y·f / Σ w·f², f = x·2^(−d/T½).
		var num, den float64
		for i := range ys {
			f := model(1, hl, i)
			num += ys[i] * f / sq(us[i])
			den += f * f / sq(us[i])
		}
		g = num / den
	}
	// Covariance of (g, ln T½) from the analytic Jacobian.
	npar := 1
	if cal.HalfLifeFitted {
		npar = 2
	}
	j := mat.NewDense(len(ys), npar, nil)
	for i := range ys {
		f := model(1, hl, i)
		j.Set(i, 0, f/us[i])
		if npar == 2 {
			j.Set(i, 1, g*f*math.Ln2*ds[i]/hl/us[i])
		}
	}
	var jtj mat.SymDense
	jtj.SymOuterK(1, j.T())
	var ch mat.Cholesky
	if !ch.Factorize(&jtj) {
		return cal, fmt.Errorf("forecast: calibrate %s: the pairs do not determine the gain and half-life (too alike)", t.Name)
	}
	var cov mat.SymDense
	if err := ch.InverseTo(&cov); err != nil {
		return cal, fmt.Errorf("forecast: calibrate %s: %w", t.Name, err)
	}
	c2 := chi2(g, hl)
	if dof := cal.Used - npar; dof > 0 {
		cal.Chi2PerDoF = c2 / float64(dof)
	}
	scale := math.Max(1, cal.Chi2PerDoF)
	ug := math.Sqrt(cov.At(0, 0) * scale)
	tr := &cal.Treatment
	if t.Effect == sim.EffectEutecticDepression {
		tr.Gain, tr.GainU = g, ug
	} else {
		tr.Gain, tr.GainU = math.Exp(g), math.Exp(g)*ug
	}
	tr.HalfLifeMin = hl
	if npar == 2 {
		tr.HalfLifeU = hl * math.Sqrt(cov.At(1, 1)*scale)
	}
	for i, k := 0, 0; i < len(cal.Pairs); i++ {
		if cal.Pairs[i].Err == nil {
			cal.Pairs[i].Fitted = model(g, hl, k)
			k++
		}
	}
	if tr.Effect != sim.EffectEutecticDepression && !(tr.Gain >= 1) {
		return cal, fmt.Errorf("forecast: calibrate %s: the pairs show no gain (fitted factor %.3g per 0.01 %%): the additions did not raise the nucleation", t.Name, tr.Gain)
	}
	return cal, nil
}

// pairEffect fits one pair and returns the effect it shows.
func pairEffect(ctx context.Context, p Pair, t Treatment) (effect, u float64, err error) {
	law := t.Law()
	before, err := Fit(ctx, p.Before, law)
	if err != nil {
		return 0, 0, fmt.Errorf("before cup: %w", err)
	}
	if !before.Converged {
		return 0, 0, fmt.Errorf("before cup: %w: the fit did not converge (%s)", ErrFit, before.Status)
	}
	k := parLnAMu3
	if t.Effect == sim.EffectEutecticDepression {
		k = parTE
	}
	after, err := refit(ctx, before, p.After, t, k, p.Pct/0.01)
	if err != nil {
		return 0, 0, fmt.Errorf("after cup: %w", err)
	}
	vb, ub := before.value(k)
	va, ua := after.value(k)
	effect = va - vb
	if k == parTE {
		effect = -effect
	}
	return effect, math.Hypot(ua, ub), nil
}

// value is a parameter's fitted value and standard uncertainty.
func (f *Fitted) value(k int) (v, u float64) {
	i := slices.Index(f.m.free, k)
	if i < 0 || f.cov == nil {
		return f.m.theta[k], math.NaN()
	}
	return f.m.theta[k], math.Sqrt(f.cov.At(i, i))
}

// refit fits the after cup of a pair with the melt's parameters from the
// before cup's fit held, and k (what the addition changes) free with the
// new cup's thermal parameters; steps is the addition in 0.01 % steps.
func refit(ctx context.Context, before *Fitted, s Sample, t Treatment, k int, steps float64) (*Fitted, error) {
	pb, err := newProblem(s, before.Law, false)
	if err != nil {
		return nil, err
	}
	m := &pb.m
	for _, j := range []int{parLnAMu3, parN, parLnMu, parTE, parTL, parLnAMu3P, parLnMuP} {
		m.theta[j] = before.m.theta[j]
	}
	m.primary = before.m.primary
	m.radial = before.m.radial // the same kind of cup
	pb.free = []int{k, parLnH, parLnTau, parPour, parPourAt}
	if err := pb.liquidFit(ctx); err != nil {
		return nil, err
	}
	pts := s.Points
	switch {
	case k == parTE:
		// The modifier moves the eutectic: start from the measured shift.
		if before.truth.EutecticMax.OK {
			m.theta[parTE] -= before.truth.EutecticMax.TempC - pts.EutecticMax.TempC
		}
	case before.Law == LawEutectic && pts.RecalescenceOK && pts.Recalescence > 0:
		err = pb.match(ctx, parLnAMu3, parTE, pts.Recalescence, pts.EutecticMax.TempC, func(tr sim.Truth) (float64, float64, bool) {
			return tr.Recalescence, tr.EutecticMax.TempC, tr.EutecticMin.OK && tr.EutecticMax.OK
		})
		m.theta[parTE] = before.m.theta[parTE] // the melt's reference is held
	case before.Law == LawPrimary && pts.LiquidusMin.OK && pts.LiquidusRecalescence > 0:
		err = pb.match(ctx, parLnAMu3, parTL, pts.LiquidusRecalescence, pts.Liquidus.TempC, func(tr sim.Truth) (float64, float64, bool) {
			return tr.Liquidus.TempC - tr.LiquidusMin.TempC, tr.Liquidus.TempC, tr.LiquidusMin.OK && tr.Liquidus.OK
		})
		m.theta[parTL] = before.m.theta[parTL]
	default:
		// No recalescence left: start from the effect the table expects.
		m.theta[parLnAMu3] += math.Log(t.Gain) * steps
	}
	if err != nil && !errors.Is(err, ErrFit) {
		return nil, err
	}
	f, err := pb.minimise(ctx)
	if err != nil {
		return nil, err
	}
	if !f.Converged {
		return nil, fmt.Errorf("%w: the fit did not converge (%s)", ErrFit, f.Status)
	}
	return f, nil
}
