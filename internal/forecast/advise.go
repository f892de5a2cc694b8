package forecast

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// Options steer Advise.
type Options struct {
	// Inoculant picks the addition by its table name; "" advises on every
	// addition the limits file lists for the alloy.
	Inoculant string
	// AdditionPct asks about this addition (% of the ladle); 0 searches
	// for the smallest allowed addition that reaches a pass with a margin.
	AdditionPct float64
	// DelayMin is the time from the addition to the pour, min; a negative
	// value takes the inoculant table's delay_min.
	DelayMin float64
}

// Prediction is the model's advice on one addition for one sample: the
// JSON object "prediction" of `undercool analyze --json --advise`. Every
// number is a model estimate; every *_u is its expanded uncertainty
// (k = 2, about 95 %). Where the model does not apply, Applies is false,
// Why says why, and no number is given.
type Prediction struct {
	ModelEstimate bool   `json:"model_estimate"` // always true: this is a model estimate, not a measurement
	Applies       bool   `json:"applies"`
	Why           string `json:"why,omitempty"`
	Text          string `json:"text"` // the advice in words
	Inoculant     string `json:"inoculant,omitempty"`
	Effect        string `json:"effect,omitempty"`

	AdditionPct   *float64 `json:"addition_pct"`
	AdditionPctU  *float64 `json:"addition_pct_u"`
	MaxAdditionPc *float64 `json:"max_addition_pct"`
	DelayMin      *float64 `json:"delay_min"`

	EutecticMinC   *float64 `json:"eutectic_min_c"`
	EutecticMinCU  *float64 `json:"eutectic_min_c_u"`
	RecalescenceC  *float64 `json:"recalescence_c"`
	RecalescenceCU *float64 `json:"recalescence_c_u"`
	Verdict        string   `json:"verdict,omitempty"`
	// VerdictU is the verdict range within the uncertainty: the verdict
	// with every changed metric moved by its U towards its nearest limit,
	// then away from it.
	VerdictU []string `json:"verdict_u,omitempty"`
	// HoldMaxMin is the longest time from the addition to the pour before
	// the estimate leaves the pass band (null where no pass is reached, or
	// no addition is needed: the model does not know how the melt's own
	// earlier inoculation fades).
	HoldMaxMin  *float64 `json:"hold_max_min"`
	HoldMaxMinU *float64 `json:"hold_max_min_u"`

	// Metrics are the predicted values of every metric the addition
	// changes, with their uncertainty and status.
	Metrics []PredictedMetric `json:"metrics,omitempty"`
	Fit     *FitSummary       `json:"fit,omitempty"`

	Uncertainty string `json:"uncertainty,omitempty"`
	Caution     string `json:"caution"`
}

// PredictedMetric is one predicted metric.
type PredictedMetric struct {
	Metric string  `json:"metric"`
	Label  string  `json:"label"`
	Value  float64 `json:"value"`
	U      float64 `json:"u"`
	Unit   string  `json:"unit"`
	Status string  `json:"status"`
}

// FitSummary is how the cup model fitted the measured curve.
type FitSummary struct {
	Method       string  `json:"method"`
	Model        string  `json:"model"` // "lumped" or "radial" (a cup with a gradient), see Fit
	Law          string  `json:"law"`
	Converged    bool    `json:"converged"`
	Status       string  `json:"status"`
	Iterations   int     `json:"iterations"`
	ModelRuns    int     `json:"model_runs"`
	Readings     int     `json:"readings"`
	RMSC         float64 `json:"rms_c"`
	ArrestRMSC   float64 `json:"arrest_rms_c"`
	NoiseC       float64 `json:"noise_c"`
	Parameters   []Param `json:"parameters"`
	ParamsFormat string  `json:"parameters_u"`
}

// Method says how the fit is made (the FitSummary's method).
const Method = "weighted least squares of the cup model (internal/sim; the lumped cup, or the radial cup of 5 zones where the lumped one misfits the arrest) to the readings from the pour to 20 s after the arrest; gonum optimize.Newton with the Gauss–Newton Hessian and a backtracking line search; covariance s²(JᵀWJ)⁻¹ inflated for autocorrelated residuals"

// Caution is the safety note every prediction carries.
const Caution = "Model estimate, not a measurement: it never replaces the shop's written practice, its metallurgist, or a re-sample before pouring."

// Fit-quality gates: a fit worse than these gives no prediction.
const (
	// maxArrestRMS: the RMS residual over the arrest may exceed the
	// curve's noise by at most this, °C.
	maxArrestRMS = 0.5
	// maxPointMiss: the fitted model's arrest points must lie within this
	// of the measured ones, °C.
	maxPointMiss = 0.5
)

// Advise fits the cup model to a finished sample and predicts, for each of
// the alloy's additions in the limits file (or the one named in opt), the
// smallest allowed addition that reaches a pass with a margin, what it
// does to the points and the verdict, and how long the ladle may then wait.
// res is the sample's analysis (arrest.Analyze of in's curve with the
// alloy's options). Where the model does not apply the predictions say
// why and carry no numbers.
func Advise(ctx context.Context, in assess.Input, res arrest.Result, opt Options) []Prediction {
	book := in.Limits
	if book == nil {
		book = builtin
	}
	fam := book.Resolve(in.Alloy).Family()
	if in.Family != "" {
		fam = in.Family
	}
	none := func(why string) []Prediction { return []Prediction{notApplicable("", why)} }
	switch {
	case !res.Complete:
		return none("the sample has not finished freezing")
	case res.Invalid():
		return none("the cup is not trustworthy (" + firstFatal(res) + "): re-sample first")
	case strings.TrimSpace(in.Alloy) == "":
		return none("no alloy is named for the sample")
	}
	tables := book.Inoculants(in.Alloy)
	if opt.Inoculant != "" {
		tables = slices.DeleteFunc(slices.Clone(tables), func(t *limits.Inoculant) bool { return t.Name != opt.Inoculant })
		if len(tables) == 0 {
			return none(fmt.Sprintf("the limits file has no inoculant %q for alloy %s", opt.Inoculant, in.Alloy))
		}
	}
	if len(tables) == 0 {
		return none("the limits file has no inoculant table for alloy " + in.Alloy)
	}
	model := ModelAlloy(fam, in.Alloy)
	if model == "" {
		return none(fmt.Sprintf("the cup model has no nucleation law for the %s family", fam))
	}
	rec := assess.FromResult(in, res)
	s := Sample{Time: in.Time, Temp: in.Temp, Alloy: model, Chemistry: rec.Chemistry, Points: res}
	fits := map[Law]*Fitted{}
	errs := map[Law]error{}
	var out []Prediction
	for _, tb := range tables {
		t := TreatmentOf(tb)
		law := t.Law()
		if _, done := fits[law]; !done && errs[law] == nil {
			fits[law], errs[law] = Fit(ctx, s, law)
		}
		f, err := fits[law], errs[law]
		if err != nil {
			if ctx.Err() != nil {
				return none("the fit was cancelled")
			}
			out = append(out, notApplicable(tb.Name, fitWhy(err)))
			continue
		}
		delay := opt.DelayMin
		if delay < 0 {
			delay = tb.DelayMin
		}
		out = append(out, advise(f, t, in, res, opt.AdditionPct, delay))
	}
	return out
}

func firstFatal(res arrest.Result) string {
	for _, p := range res.Problems {
		if p.Fatal {
			return p.Message
		}
	}
	return "a problem with the curve"
}

func fitWhy(err error) string {
	if errors.Is(err, ErrFit) {
		return strings.TrimPrefix(err.Error(), "forecast: ")
	}
	return "the cup model could not be fitted: " + err.Error()
}

func notApplicable(name, why string) Prediction {
	return Prediction{ModelEstimate: true, Inoculant: name, Why: why, Caution: Caution,
		Text: "no model estimate: " + why + "."}
}

// TreatmentOf is the model's view of an inoculant table.
func TreatmentOf(in *limits.Inoculant) Treatment {
	return Treatment{Name: in.Name, Effect: sim.Effect(in.Effect), Gain: in.Gain, GainU: in.GainU,
		HalfLifeMin: in.HalfLifeMin, HalfLifeU: in.HalfLifeU, MaxPct: in.MaxPct}
}

// quality says why a fit is too poor to predict from, or "".
func quality(f *Fitted, res arrest.Result) string {
	if f.EutecticRMSC > f.NoiseC+maxArrestRMS {
		return fmt.Sprintf("the cup model fits the arrest badly (RMS residual %.2f °C, the curve's noise %.2f °C)", f.EutecticRMSC, f.NoiseC)
	}
	if !f.Converged {
		return "the fit of the cup model did not converge (" + f.Status + ")"
	}
	a, b := f.truth.EutecticMin, f.truth.EutecticMax
	ma, mb := res.EutecticMin, res.EutecticMax
	if f.Law == LawPrimary {
		a, b, ma, mb = f.truth.LiquidusMin, f.truth.Liquidus, res.LiquidusMin, res.Liquidus
	}
	if !a.OK || !b.OK || math.Abs(a.TempC-ma.TempC) > maxPointMiss || math.Abs(b.TempC-mb.TempC) > maxPointMiss {
		return "the fitted cup model misses the measured arrest by more than 0.5 °C"
	}
	return ""
}

// advise makes the prediction for one treatment.
func advise(f *Fitted, t Treatment, in assess.Input, res arrest.Result, askPct, delay float64) Prediction {
	p := Prediction{ModelEstimate: true, Inoculant: t.Name, Effect: string(t.Effect), Caution: Caution,
		Uncertainty: "expanded uncertainty, coverage factor k = 2 (about 95 %)", Fit: summary(f)}
	if why := quality(f, res); why != "" {
		p.Why, p.Text = why, "no model estimate: "+why+"."
		return p
	}
	if askPct > t.MaxPct {
		why := fmt.Sprintf("+%.2f %% is more than the largest addition the limits file allows (%.2f %%)", askPct, t.MaxPct)
		p.Why, p.Text = why, "no model estimate: "+why+"."
		return p
	}
	pr, err := newPredictor(f, t, in, res)
	if err != nil {
		p.Why = fitWhy(err)
		p.Text = "no model estimate: " + p.Why + "."
		return p
	}
	var pl plan
	if askPct > 0 {
		pl, err = pr.at(askPct, delay)
	} else {
		pl, err = pr.search(delay)
	}
	if err != nil {
		p.Why = fitWhy(err)
		p.Text = "no model estimate: " + p.Why + "."
		return p
	}
	p.Applies = true
	p.fill(pl, t)
	return p
}

func summary(f *Fitted) *FitSummary {
	return &FitSummary{Method: Method, Model: f.Model, Law: string(f.Law), Converged: f.Converged, Status: f.Status,
		Iterations: f.Iterations, ModelRuns: f.Evaluations, Readings: f.Readings, RMSC: round(f.RMSC, 4),
		ArrestRMSC: round(f.EutecticRMSC, 4), NoiseC: round(f.NoiseC, 4), Parameters: f.Params,
		ParamsFormat: "standard uncertainty; of ln(value) for a, mu, h, tau"}
}

func round(v float64, d int) float64 {
	s := math.Pow(10, float64(d))
	return math.Round(v*s) / s
}

func num(v float64) *float64 { return &v }
