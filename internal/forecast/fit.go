package forecast

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/curve"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// Sample is a finished cup curve to fit, with what the analysis found on it.
type Sample struct {
	Time, Temp []float64 // s, °C, as recorded

	// Alloy is the sim's model of the alloy: sim.GreyIron, sim.DuctileIron
	// or sim.AlSi7Mg (see ModelAlloy).
	Alloy string
	// Chemistry is the analysis, wt % by lower-case element ("c", "si",
	// "p"; "si", "mg", "fe" for Al-Si); missing elements take the sim's
	// preset.
	Chemistry map[string]float64
	// Points are the characteristic points of the curve (arrest.Analyze).
	Points arrest.Result
}

// Fitted is the cup model fitted to one sample.
type Fitted struct {
	Law    Law
	Params []Param // the fitted parameters with their uncertainty

	// RMSC is the root-mean-square residual of the fit over its window, °C;
	// NoiseC the curve's own noise estimate, °C.
	RMSC, NoiseC float64
	// Model is the cup model fitted: ModelLumped, or ModelRadial (FitZones
	// zones) for a cup the lumped model misfits.
	Model string
	// EutecticRMSC is the RMS residual over the arrest the law shapes (from
	// 10 s before its minimum to the end of the window), °C.
	EutecticRMSC float64
	Readings     int // readings in the window
	Iterations   int // major iterations of the minimiser
	Evaluations  int // model runs
	// Converged says the fit is done (see the note in minimise: the
	// minimiser stopped by itself and a further step would change nothing
	// that matters); Status is its status in words.
	Converged bool
	Status    string

	m     model
	cov   *mat.SymDense // covariance of the free parameters
	times []float64     // the window on the model's clock (for predictions)
	truth sim.Truth     // the truth of the fitted model
}

// Param is one fitted parameter: its value and standard uncertainty in the
// parameter's own unit (for the constants fitted as logarithms, U is the
// uncertainty of the natural logarithm, a relative uncertainty).
type Param struct {
	Name  string  `json:"name"`
	Unit  string  `json:"unit"`
	Value float64 `json:"value"`
	// U is the standard uncertainty: of ln(value) for the constants fitted
	// as logarithms (a, mu, h, tau), else of the value itself.
	U   float64 `json:"u"`
	Log bool    `json:"log"`
	// Fixed parameters are not fitted (μ: see the note on A·μ³); A is
	// then derived from the fitted A·μ³ with U that of the product.
	Fixed bool `json:"fixed,omitempty"`
}

// Fit limits.
const (
	maxIterations = 30
	maxRuns       = 600
	// timingS is the timing uncertainty that the weight of a reading on a
	// steep part of the curve allows for, s: w = 1/(σ² + (σ_t·T')²) (the
	// effective-variance method for errors in the abscissa; Orear, Am. J.
	// Phys. 50 (1982) 912, recalled).
	timingS = 0.05
)

// ErrFit is the error of a fit that failed or fits badly: the sample gets
// no prediction.
var ErrFit = errors.New("the cup model could not be fitted")

// Fit fits the cup model's free parameters to the sample by weighted least
// squares: the nucleation law N = A·ΔTⁿ with the growth law u = μ·ΔT² of
// the given law (the eutectic's for an iron inoculant or an Al-Si
// modifier, the primary phase's for a grain refiner) — A·μ³ and n, for a
// curve fixes A and μ only as that product (see the parameter list) —,
// the cup wall's h, the thermocouple's τ, and as nuisance parameters the
// reference temperatures, the pour temperature and time, the lumped cup's
// core–shell conductance and, in a eutectic fit, the primary phase's A·μ³. The minimiser is
// gonum's optimize.Newton with the Gauss–Newton Hessian 2·JᵀWJ (J by forward
// differences, W the reading weights) and a backtracking (Armijo) line
// search; Newton's added multiple of the identity where the matrix is not
// positive definite makes it a Levenberg–Marquardt-type damping. The
// covariance is s²·(JᵀWJ)⁻¹ with s² the reduced χ² times the factor
// (1 + ρ)/(1 − ρ) for the lag-one autocorrelation ρ of the residuals
// (correlated misfit carries less information than white noise). See
// docs/advice.md.
//
// The model is first the lumped two-lump cup (fast); where that fit is too
// poor to predict from (quality: it misfits the arrest, does not converge
// or misses the arrest's points) or cannot be made at all, the cup is
// fitted again with the radial cup of FitZones zones
// (sim.Kinetics.Radial): a cup whose wall froze first shapes its centre's
// arrest with the wall's latent heat, which two lumps sharing one count of
// nuclei cannot make (docs/advice.md, "Cups with a gradient"). The fit
// good enough to predict from is returned, else the one that misfits the
// arrest less; Fitted.Model says which model it is.
func Fit(ctx context.Context, s Sample, law Law) (*Fitted, error) {
	f, err := fitModel(ctx, s, law, nil)
	if err == nil && quality(f, s.Points) == "" {
		return f, nil
	}
	if cerr := ctx.Err(); cerr != nil {
		return nil, cerr
	}
	if err != nil && !errors.Is(err, ErrFit) {
		return nil, err
	}
	g, gerr := fitModel(ctx, s, law, &sim.Radial{Zones: FitZones})
	switch {
	case gerr != nil && ctx.Err() != nil:
		return nil, gerr
	case gerr != nil && err != nil:
		return nil, err // the lumped model's reason comes first
	case gerr != nil:
		return f, nil
	case err != nil:
		return g, nil
	}
	runs := f.Evaluations + g.Evaluations // every model run of the sample
	if quality(g, s.Points) == "" || g.EutecticRMSC < f.EutecticRMSC {
		f = g
	}
	f.Evaluations = runs
	return f, nil
}

// FitZones is the number of zones of the radial cup a cup with a gradient
// is fitted with: the radial simulator's fewest, about 3 ms a run for the
// window of an iron cup (docs/performance.md, "The model's advice").
const FitZones = 5

// Models named in Fitted.Model.
const (
	ModelLumped = "lumped"
	ModelRadial = "radial"
)

// fitModel is Fit with one model: the lumped cup (radial nil) or the
// radial cup of those parameters.
func fitModel(ctx context.Context, s Sample, law Law, radial *sim.Radial) (*Fitted, error) {
	pb, err := newProblem(s, law, true)
	if err != nil {
		return nil, err
	}
	pb.m.radial = radial
	if err := pb.start(ctx); err != nil {
		return nil, err
	}
	return pb.minimise(ctx)
}

// problem is one fit in progress.
type problem struct {
	s     Sample
	m     model
	times []float64 // the window, model clock
	temps []float64 // despiked readings
	w     []float64 // weights
	noise float64
	arrT  float64 // model time where the arrest the law shapes begins (for EutecticRMSC)
	// settledT is the model time 3 s after the pour peak: the RMS residual
	// is taken after it (the pour transient is weighted down, see weights).
	settledT float64
	// liquidEnd is the number of readings before the first arrest (the
	// liquid cooling); free the parameters of the full fit; n the readings
	// the model is run on.
	liquidEnd int
	free      []int
	n         int
	runs      int

	// cache of the last Jacobian
	jx   []float64
	jac  *mat.Dense
	res0 []float64
	// the last model run (residuals): the line search's accepted point is
	// where the next Jacobian starts
	lastTh  [numPar]float64
	lastN   int
	lastRes []float64
	lastTr  sim.Truth
	// saved is the minimiser's last own run of a eutectic fit (not a
	// Jacobian column's) kept before its eutectic (sim.Saved), at savedTh
	// over savedN readings: the Jacobian's columns of the eutectic law
	// (ln(A·μ³), n) resume from it.
	saved   *sim.Saved
	savedTh [numPar]float64
	savedN  int
}

// eutecticOnly reports whether parameter k of the model acts only on the
// eutectic law (a step of it leaves the run before the eutectic as it was).
func (m *model) eutecticOnly(k int) bool {
	return m.law == LawEutectic && (k == parLnAMu3 || k == parN || k == parLnMu)
}

// ModelAlloy is the sim's alloy model for an alloy family and name: the
// name itself when the sim knows it, else grey iron for the iron family and
// Al-Si7Mg for aluminium; "" where the cup model does not apply.
func ModelAlloy(family arrest.Family, name string) string {
	switch name {
	case sim.GreyIron, sim.DuctileIron, sim.AlSi7Mg:
		return name
	}
	switch family {
	case arrest.FamilyIron:
		return sim.GreyIron
	case arrest.FamilyAluminum:
		return sim.AlSi7Mg
	}
	return ""
}

// newProblem sets up the fit of the sample; with needRec the arrest the law
// shapes must recalesce (a fit of the law from one curve needs it; a refit
// after an addition, with the melt's other parameters known, does not).
func newProblem(s Sample, law Law, needRec bool) (*problem, error) {
	base, err := sim.Preset(s.Alloy, 0, 1)
	if err != nil {
		return nil, fmt.Errorf("forecast: %w", err)
	}
	if len(s.Time) != len(s.Temp) || len(s.Time) < 50 {
		return nil, fmt.Errorf("forecast: %d readings: too few to fit", len(s.Time))
	}
	pts := s.Points
	if !pts.PourPeak.OK {
		return nil, fmt.Errorf("%w: no pour peak", ErrFit)
	}
	var end, arr float64 // end of the window and start of the arrest, curve clock
	switch law {
	case LawEutectic:
		if !pts.EutecticMin.OK || !pts.EutecticMax.OK {
			return nil, fmt.Errorf("%w: no eutectic arrest", ErrFit)
		}
		if needRec && (!pts.RecalescenceOK || pts.Recalescence <= 0) {
			return nil, fmt.Errorf("%w: the eutectic shows no recalescence to fit the nucleation law to", ErrFit)
		}
		end, arr = pts.EutecticMax.TimeS+20, pts.EutecticMin.TimeS-10
	case LawPrimary:
		if !pts.Liquidus.OK {
			return nil, fmt.Errorf("%w: no primary (liquidus) arrest", ErrFit)
		}
		if needRec && (!pts.LiquidusMin.OK || pts.LiquidusRecalescence <= 0) {
			return nil, fmt.Errorf("%w: the primary arrest shows no recalescence to fit the nucleation law to", ErrFit)
		}
		end, arr = pts.Liquidus.TimeS+20, pts.Liquidus.TimeS-15
	default:
		return nil, fmt.Errorf("forecast: unknown law %q", law)
	}
	ch := s.Chemistry
	get := func(el string, def float64) float64 {
		if v, ok := ch[el]; ok && v > 0 {
			return v
		}
		return def
	}
	if s.Alloy == sim.AlSi7Mg {
		base.Si, base.Mg, base.Fe = get("si", base.Si), get("mg", 0.35), get("fe", 0.12)
	} else {
		base.C, base.Si, base.P = get("c", base.C), get("si", base.Si), get("p", base.P)
	}
	// The readings before the pour give the room temperature; the first
	// reading 50 °C above it, less half a second, the pour.
	t, x := s.Time, s.Temp
	x0 := x[0]
	k0 := slices.IndexFunc(x, func(v float64) bool { return v > x0+50 })
	if k0 < 0 || t[k0] > pts.PourPeak.TimeS {
		return nil, fmt.Errorf("%w: no rise of the pour found", ErrFit)
	}
	amb := x0
	if k0 > 0 {
		amb = median(x[:k0])
	}
	base.AmbientC = math.Min(math.Max(amb, 1), 60)
	pourAt := t[k0] - 0.5
	// The model's clock puts the pour at 5 s.
	shift := 5 - pourAt
	lo := max(0, slices.IndexFunc(t, func(v float64) bool { return v >= pourAt-3 }))
	hi := slices.IndexFunc(t, func(v float64) bool { return v > end })
	if hi < 0 {
		return nil, fmt.Errorf("%w: the recording ends before the arrest is over", ErrFit)
	}
	pb := &problem{s: s}
	pb.times = make([]float64, hi-lo)
	for i := range pb.times {
		pb.times[i] = t[lo+i] + shift
	}
	raw := x[lo:hi]
	noise, _ := curve.Noise(nil, x[k0+int(10*float64(len(t))/(t[len(t)-1]-t[0])):hi])
	pb.noise = math.Max(noise, 0.01)
	pb.temps, _ = curve.Despike(nil, raw, 3, pb.noise)
	pb.w = weights(pb.times, pb.temps, pb.noise)
	pb.arrT = arr + shift

	m := &pb.m
	m.base, m.law, m.shift = base, law, shift
	th := &m.theta
	def := base
	// Reference growth coefficients and starting values (the sim's
	// constants, internal/sim kinetics.go): grey eutectic μ 8×10⁻⁷,
	// ductile 10⁻⁷, Al-Si eutectic 4×10⁻⁶, α-Al 1.5×10⁻⁵, austenite
	// 3×10⁻⁶ m s⁻¹ K⁻²; h 55 (iron) and 50 W m⁻² K⁻¹ (Al-Si).
	mu, h, muP, aP := 8e-7, 55.0, 3e-6, 1e10
	switch {
	case s.Alloy == sim.DuctileIron:
		mu = 1e-7
	case s.Alloy == sim.AlSi7Mg && law == LawPrimary:
		mu, h = 1.5e-5, 50
	case s.Alloy == sim.AlSi7Mg:
		mu, h, muP, aP = 4e-6, 50, 1.5e-5, 3e9
	}
	th[parN], th[parLnMu] = 2, math.Log(mu)
	th[parLnAMu3] = math.Log(1e6) + 3*th[parLnMu]
	th[parLnMuP] = math.Log(muP)
	th[parLnAMu3P] = math.Log(aP) + 3*th[parLnMuP]
	th[parLnH], th[parLnTau] = math.Log(h), math.Log(0.5)
	th[parPour], th[parPourAt] = pts.PourPeak.TempC+5, 5
	switch {
	case s.Alloy == sim.AlSi7Mg:
		th[parTE] = sim.AlSiUnmodifiedEutecticC(def.Si, def.Mg, def.Fe)
		if pts.EutecticMax.OK {
			th[parTE] = pts.EutecticMax.TempC + 1
		}
	default:
		th[parTE], _ = sim.IronEutecticsC(s.Alloy, def.Si, def.P)
		if pts.EutecticMax.OK {
			th[parTE] = pts.EutecticMax.TempC + 4
		}
	}
	// Without a primary arrest the liquidus is put below the eutectic: the
	// model then freezes no primary phase.
	th[parTL] = 1
	if pts.Liquidus.OK {
		th[parTL] = pts.Liquidus.TempC + 3
		if s.Alloy == sim.AlSi7Mg {
			th[parTL] = pts.Liquidus.TempC + 1.5
		}
	}
	pb.free = []int{parLnAMu3, parN, parLnH, parLnTau, parTE, parPour, parPourAt, parLnK}
	if law == LawPrimary {
		pb.free = []int{parLnAMu3, parN, parLnH, parLnTau, parPour, parPourAt, parLnK}
	}
	if pts.Liquidus.OK {
		pb.free = append(pb.free, parTL)
		if law == LawEutectic {
			m.primary = true
			pb.free = append(pb.free, parLnAMu3P)
		}
	}
	pb.n = len(pb.times)
	pb.settledT = pts.PourPeak.TimeS + 3 + shift
	first := pts.EutecticMax.TempC
	if pts.Liquidus.OK {
		first = pts.Liquidus.TempC
	}
	pb.liquidEnd = slices.IndexFunc(pb.times, func(v float64) bool { return v > pb.settledT })
	for pb.liquidEnd >= 0 && pb.liquidEnd < len(pb.temps) && pb.temps[pb.liquidEnd] > first+4 {
		pb.liquidEnd++
	}
	return pb, nil
}

// weights are 1/(σ² + (σ_t·T')²) with T' the central difference of the
// readings.
func weights(t, x []float64, noise float64) []float64 {
	w := make([]float64, len(x))
	for i := range x {
		a, b := max(i-1, 0), min(i+1, len(x)-1)
		d := 0.0
		if t[b] > t[a] {
			d = (x[b] - x[a]) / (t[b] - t[a])
		}
		e := timingS * d
		w[i] = 1 / (noise*noise + e*e)
	}
	return w
}

func median(x []float64) float64 {
	s := slices.Clone(x)
	slices.Sort(s)
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

// residuals runs the model at th and writes √w·(model − reading) into dst.
// The last run is kept: asked again for the same parameters and readings,
// it is copied, not run.
func (pb *problem) residuals(dst []float64, th [numPar]float64) ([]float64, sim.Truth, error) {
	return pb.residualsFrom(dst, th, nil, pb.m.law == LawEutectic)
}

// residualsFrom is residuals resumed from the saved run from where the
// run differs from it only in the eutectic law (sim.Saved.Curve), and,
// with save set, keeping the run before the eutectic in pb.saved.
func (pb *problem) residualsFrom(dst []float64, th [numPar]float64, from *sim.Saved, save bool) ([]float64, sim.Truth, error) {
	if pb.lastRes != nil && pb.lastN == pb.n && pb.lastTh == th {
		return append(dst[:0], pb.lastRes...), pb.lastTr, nil
	}
	pb.runs++
	var y []float64
	var tr sim.Truth
	var err error
	switch {
	case from != nil:
		y, tr, err = pb.m.curveFrom(from, th, nil, pb.times[:pb.n])
	case save:
		var sv *sim.Saved
		if y, tr, sv, err = pb.m.curveSaved(th, nil, pb.times[:pb.n]); err == nil {
			pb.saved, pb.savedTh, pb.savedN = sv, th, pb.n
		}
	default:
		y, tr, err = pb.m.curve(th, nil, pb.times[:pb.n])
	}
	if err != nil {
		return nil, tr, err
	}
	dst = dst[:0]
	for i, v := range y {
		dst = append(dst, math.Sqrt(pb.w[i])*(v-pb.temps[i]))
	}
	pb.lastTh, pb.lastN, pb.lastTr = th, pb.n, tr
	pb.lastRes = append(pb.lastRes[:0], dst...)
	return dst, tr, nil
}

func sumSq(r []float64) float64 {
	s := 0.0
	for _, v := range r {
		s += v * v
	}
	return s
}

// start finds a starting point in steps. First the thermal parameters (h,
// τ, the pour temperature and time) are fitted to the liquid cooling before
// the first arrest, where the kinetics play no part. Then each nucleation
// law is set so that the model's recalescence matches the measured one (the
// primary arrest's first, where it recalesces and its law is fitted), and
// the reference temperature so that the arrest's maximum does:
// recalescence falls as A·μ³ grows, so a bracketed regula falsi (Illinois)
// in ln(A·μ³) finds it in a few runs.
func (pb *problem) start(ctx context.Context) error {
	if err := pb.liquidFit(ctx); err != nil {
		return err
	}
	pts := pb.s.Points
	primary := func(tr sim.Truth) (rec, top float64, ok bool) {
		return tr.Liquidus.TempC - tr.LiquidusMin.TempC, tr.Liquidus.TempC, tr.LiquidusMin.OK && tr.Liquidus.OK
	}
	eutectic := func(tr sim.Truth) (rec, top float64, ok bool) {
		return tr.Recalescence, tr.EutecticMax.TempC, tr.EutecticMin.OK && tr.EutecticMax.OK
	}
	if pb.m.law == LawPrimary {
		return pb.match(ctx, parLnAMu3, parTL, pts.LiquidusRecalescence, pts.Liquidus.TempC, primary)
	}
	if pb.m.primary && pts.LiquidusMin.OK && pts.LiquidusRecalescence > 0 {
		if err := pb.match(ctx, parLnAMu3P, parTL, pts.LiquidusRecalescence, pts.Liquidus.TempC, primary); err != nil {
			return err
		}
	}
	return pb.match(ctx, parLnAMu3, parTE, pts.Recalescence, pts.EutecticMax.TempC, eutectic)
}

// liquidFit fits the thermal parameters (h, τ, the pour temperature and
// time) to the liquid cooling before the first arrest, where there are
// more than 20 readings of it: the first step of a fit's start. A line
// search that stops short (the minimum within the model's roughness, see
// minLineStep) leaves them where it stopped; that is no error.
func (pb *problem) liquidFit(ctx context.Context) error {
	n := pb.liquidEnd
	if n <= 20 {
		return nil
	}
	if res, err := pb.gaussNewton(ctx, []int{parLnH, parLnTau, parPour, parPourAt}, n, 5); res == nil {
		return err
	}
	return nil
}

// match sets the law's ln(A·μ³) (theta[lnA]) so that the model's
// recalescence read by read is wantRec, and shifts theta[ref] so that its
// arrest maximum is wantMax (twice, as the two interact a little).
func (pb *problem) match(ctx context.Context, lnA, ref int, wantRec, wantMax float64, read func(sim.Truth) (rec, top float64, ok bool)) error {
	th := &pb.m.theta
	// f(ln A·μ³) = model recalescence − measured; a model without the
	// arrest in the window has not frozen enough: too few nuclei (f > 0).
	eval := func(x float64) (f, top float64) {
		t := *th
		t[lnA] = x
		pb.runs++
		_, tr, err := pb.m.curve(t, nil, pb.times)
		if err != nil {
			return math.NaN(), 0
		}
		rec, top, ok := read(tr)
		if !ok {
			return wantRec, 0
		}
		return rec - wantRec, top
	}
	for range 2 {
		if err := ctx.Err(); err != nil {
			return err
		}
		lo, fLo, hi, fHi, ok := pb.bracket(eval, lnA, th[lnA])
		if !ok {
			return fmt.Errorf("%w: the model cannot reach the measured recalescence of %.2f °C", ErrFit, wantRec)
		}
		x, top := lo, 0.0
		side := 0
		for range 12 {
			x = (lo*fHi - hi*fLo) / (fHi - fLo)
			var f float64
			f, top = eval(x)
			if math.IsNaN(f) || math.Abs(f) < 0.02 {
				break
			}
			if f > 0 {
				lo, fLo = x, f
				if side == 1 {
					fHi /= 2
				}
				side = 1
			} else {
				hi, fHi = x, f
				if side == -1 {
					fLo /= 2
				}
				side = -1
			}
		}
		th[lnA] = x
		if top == 0 {
			break
		}
		d := wantMax - top
		th[ref] += d
		if math.Abs(d) < 0.3 {
			break
		}
	}
	return nil
}

// bracket steps parameter par from x by two decades at a time until f
// changes sign.
func (pb *problem) bracket(eval func(float64) (float64, float64), par int, x float64) (lo, fLo, hi, fHi float64, ok bool) {
	const step = 2 * math.Ln10
	f, _ := eval(x)
	if math.IsNaN(f) {
		return 0, 0, 0, 0, false
	}
	dir := 1.0
	if f < 0 {
		dir = -1
	}
	for range 7 {
		y := x + dir*step
		if y < bounds[par][0] || y > bounds[par][1] {
			return 0, 0, 0, 0, false
		}
		g, _ := eval(y)
		if math.IsNaN(g) {
			return 0, 0, 0, 0, false
		}
		if (f > 0) != (g > 0) {
			if dir > 0 {
				return x, f, y, g, true
			}
			return y, g, x, f, true
		}
		x, f = y, g
	}
	return 0, 0, 0, 0, false
}

// gaussNewton fits the parameters free to the first n readings of the
// window (Gauss–Newton through gonum's Newton method, see Fit) and leaves
// the result in the model's parameter vector.
func (pb *problem) gaussNewton(ctx context.Context, free []int, n, iterations int) (*optimize.Result, error) {
	m := &pb.m
	m.free = free
	pb.n, pb.jac = n, nil
	dim := len(free)
	x0 := make([]float64, dim)
	for i, j := range free {
		x0[i] = m.theta[j]
	}
	var work []float64
	prob := optimize.Problem{
		Func: func(x []float64) float64 {
			r, _, err := pb.residuals(work, m.set(x))
			if err != nil {
				return math.Inf(1)
			}
			work = r
			return sumSq(r)
		},
		Grad: func(grad, x []float64) {
			j, r := pb.jacobian(x)
			if j == nil {
				for i := range grad {
					grad[i] = math.NaN()
				}
				return
			}
			g := mat.NewVecDense(dim, grad)
			g.MulVec(j.T(), mat.NewVecDense(len(r), r))
			g.ScaleVec(2, g)
		},
		Hess: func(h *mat.SymDense, x []float64) {
			j, _ := pb.jacobian(x)
			if j == nil {
				for a := range dim {
					for b := a; b < dim; b++ {
						h.SetSym(a, b, math.NaN())
					}
				}
				return
			}
			h.SymOuterK(2, j.T())
		},
		Status: func() (optimize.Status, error) {
			if err := ctx.Err(); err != nil {
				return optimize.Failure, err
			}
			if pb.runs > maxRuns {
				return optimize.FunctionEvaluationLimit, nil
			}
			return optimize.NotTerminated, nil
		},
	}
	settings := &optimize.Settings{
		MajorIterations: iterations,
		Converger:       &optimize.FunctionConverge{Relative: 1e-5, Iterations: 2},
	}
	method := &optimize.Newton{Linesearcher: &optimize.Backtracking{MinimumStepSize: minLineStep}}
	res, err := optimize.Minimize(prob, x0, settings, method)
	if cerr := ctx.Err(); cerr != nil {
		return nil, cerr
	}
	if res == nil {
		return nil, fmt.Errorf("%w: %v", ErrFit, err)
	}
	m.theta = m.set(res.X)
	return res, err
}

// minimise runs the full fit over the window and computes the covariance.
func (pb *problem) minimise(ctx context.Context) (*Fitted, error) {
	m := &pb.m
	res, err := pb.gaussNewton(ctx, pb.free, len(pb.times), maxIterations)
	if res == nil {
		return nil, err
	}
	f := &Fitted{Law: m.law, m: *m, times: pb.times, Iterations: res.MajorIterations, Status: res.Status.String(), Model: ModelLumped}
	if m.radial != nil {
		f.Model = ModelRadial
	}
	if err != nil {
		f.Status += ": " + err.Error()
	}
	th := m.theta
	r, tr, rerr := pb.residuals(nil, th)
	if rerr != nil {
		return nil, fmt.Errorf("%w: %v", ErrFit, rerr)
	}
	f.truth = tr
	f.Readings = len(r)
	f.NoiseC = pb.noise
	var ss, sse, nn, ne float64
	for i, v := range r {
		if pb.times[i] < pb.settledT || pb.w[i] == 0 {
			continue
		}
		d := v / math.Sqrt(pb.w[i])
		ss += d * d
		nn++
		if pb.times[i] >= pb.arrT {
			sse += d * d
			ne++
		}
	}
	if nn > 0 {
		f.RMSC = math.Sqrt(ss / nn)
	}
	if ne > 0 {
		f.EutecticRMSC = math.Sqrt(sse / ne)
	}
	j, _ := pb.jacobian(res.X)
	if j == nil {
		return nil, fmt.Errorf("%w: the model cannot be run near the fitted parameters", ErrFit)
	}
	f.Evaluations = pb.runs
	cov, step, d, cerr := covariance(j, r, len(pb.free))
	if cerr != nil {
		return nil, cerr
	}
	f.cov = cov
	// Converged: the minimiser stopped by itself (its relative-change test,
	// or a line search that found no lower point within the model's
	// numerical resolution: χ² is rough on the scale of its time steps),
	// not on a budget, and the Gauss–Newton step left from here would move
	// the parameters by less than their expanded uncertainty (k = 2: its
	// predicted lowering of χ², in units of the residual variance, is below
	// 4) or, where the rough χ² keeps it larger, would move the fitted
	// arrest's two points by less than 0.1 °C (one more model run).
	f.Converged = res.Status != optimize.IterationLimit && res.Status != optimize.FunctionEvaluationLimit
	f.Status += fmt.Sprintf(" (remaining step %.2g σ", math.Sqrt(step))
	if f.Converged && step >= Coverage*Coverage {
		moved := math.Inf(1)
		t := th
		for i, k := range pb.free {
			t[k] -= d[i]
		}
		if a, b, ok := arrestPoints(m.law, tr); ok {
			if _, tr2, err := pb.m.curve(t, nil, pb.times); err == nil {
				if a2, b2, ok := arrestPoints(m.law, tr2); ok {
					moved = math.Max(math.Abs(a2-a), math.Abs(b2-b))
				}
			}
		}
		pb.runs++
		f.Evaluations = pb.runs
		f.Converged = moved < maxStepMove
		if math.IsInf(moved, 1) {
			f.Status += ", out of the parameters' range"
		} else {
			f.Status += fmt.Sprintf(", moving the arrest by %.2g °C", moved)
		}
	}
	f.Status += ")"
	for i, k := range pb.free {
		pi := parInfo[k]
		v := th[k]
		if pi.log {
			v = math.Exp(v)
		}
		f.Params = append(f.Params, Param{Name: pi.name, Unit: pi.unit, Value: v, U: math.Sqrt(cov.At(i, i)), Log: pi.log})
		if k == parLnAMu3 {
			f.Params = append(f.Params,
				Param{Name: "a", Unit: "m⁻³ K⁻ⁿ", Value: math.Exp(th[parLnAMu3] - 3*th[parLnMu]), U: math.Sqrt(cov.At(i, i)), Log: true},
				Param{Name: "mu", Unit: "m s⁻¹ K⁻²", Value: math.Exp(th[parLnMu]), Log: true, Fixed: true})
		}
	}
	return f, nil
}

// jacobian is J = ∂r/∂x by forward differences, cached for the last x.
func (pb *problem) jacobian(x []float64) (*mat.Dense, []float64) {
	if pb.jac != nil && slices.Equal(x, pb.jx) {
		return pb.jac, pb.res0
	}
	m := &pb.m
	th := m.set(x)
	r0, _, err := pb.residuals(nil, th)
	if err != nil {
		return nil, nil
	}
	j := mat.NewDense(len(r0), len(x), nil)
	var ri []float64
	for c, k := range m.free {
		t := th
		h := parInfo[k].step
		t[k] += h
		if !inBounds(t) {
			h = -h
			t[k] = th[k] + h
		}
		// a column of the eutectic law resumes from the run at th
		var from *sim.Saved
		if m.eutecticOnly(k) && pb.saved != nil && pb.savedTh == th && pb.savedN == pb.n {
			from = pb.saved
		}
		ri, _, err = pb.residualsFrom(ri, t, from, false)
		if err != nil {
			return nil, nil
		}
		for r := range r0 {
			j.Set(r, c, (ri[r]-r0[r])/h)
		}
	}
	pb.jx, pb.jac, pb.res0 = slices.Clone(x), j, r0
	return j, r0
}

// maxStepMove bounds how far a further Gauss–Newton step may move the
// fitted arrest's points for the fit to count as converged, °C.
const maxStepMove = 0.1

// arrestPoints are the two points the law shapes on a truth.
func arrestPoints(law Law, tr sim.Truth) (lo, top float64, ok bool) {
	if law == LawPrimary {
		if !tr.Liquidus.OK {
			return 0, 0, false
		}
		lo = tr.Liquidus.TempC
		if tr.LiquidusMin.OK {
			lo = tr.LiquidusMin.TempC
		}
		return lo, tr.Liquidus.TempC, true
	}
	return tr.EutecticMin.TempC, tr.EutecticMax.TempC, tr.EutecticMin.OK && tr.EutecticMax.OK
}

// covariance is s²·(1 + ρ)/(1 − ρ)·(JᵀJ)⁻¹ for the weighted residuals r,
// with the Gauss–Newton step d = (JᵀJ)⁻¹Jᵀr left (the parameters move by
// −d) and its predicted lowering of χ² in units of s² (rᵀJ(JᵀJ)⁻¹Jᵀr/s²:
// the squared length of the step in standard uncertainties).
func covariance(j *mat.Dense, r []float64, n int) (*mat.SymDense, float64, []float64, error) {
	m := len(r)
	if m <= n {
		return nil, 0, nil, fmt.Errorf("%w: %d readings for %d parameters", ErrFit, m, n)
	}
	s2 := sumSq(r) / float64(m-n)
	var num, den float64
	for i := range r {
		den += r[i] * r[i]
		if i > 0 {
			num += r[i] * r[i-1]
		}
	}
	rho := 0.0
	if den > 0 {
		rho = math.Min(math.Max(num/den, 0), 0.98)
	}
	s2 *= (1 + rho) / (1 - rho)
	var jtj mat.SymDense
	jtj.SymOuterK(1, j.T())
	var ch mat.Cholesky
	if !ch.Factorize(&jtj) {
		return nil, 0, nil, fmt.Errorf("%w: the parameters are not determined by the curve (singular normal matrix)", ErrFit)
	}
	var g, d mat.VecDense
	g.MulVec(j.T(), mat.NewVecDense(m, r))
	if err := ch.SolveVecTo(&d, &g); err != nil {
		return nil, 0, nil, fmt.Errorf("%w: %v", ErrFit, err)
	}
	step := mat.Dot(&g, &d) / s2
	var inv mat.SymDense
	if err := ch.InverseTo(&inv); err != nil {
		return nil, 0, nil, fmt.Errorf("%w: %v", ErrFit, err)
	}
	inv.ScaleSym(s2, &inv)
	return &inv, step, d.RawVector().Data, nil
}

// minLineStep is the shortest fraction of the Gauss–Newton step the line
// search tries. The model integrates in finite steps, so its χ² is rough
// on a fine scale: where no step down to 1/128 of the Gauss–Newton step
// lowers χ² (eight model runs, halving each time), the minimum lies within
// that roughness and the search stops there (gonum's "linesearch: failed
// to converge"); whether the fit has converged is then the remaining-step
// test of minimise. Gonum's default, 1e-20, took some thirty runs more a
// fit, halving the step down to 1e-11 of it without a change of χ² in its
// sixth digit.
const minLineStep = 1.0 / 128
