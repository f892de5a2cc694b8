package limits

import (
	"fmt"
	"math"
	"slices"

	"github.com/undercool-foundry/undercool/internal/metal"
)

// Pair is one row of a shop's calibration data: a cup's arrests beside the
// spectrometer analysis of the same metal. Keys: "liquidus_c",
// "metastable_c" (the white eutectic arrest of a tellurium cup) and
// "<el>_pct" for the analysis (wt %). A key that is absent was not measured.
type Pair struct {
	Line   int    // line in the pairs file, for messages
	Sample string // the row's sample id, if any
	Values map[string]float64
}

// FitOptions steer FitCalibration and its warnings.
type FitOptions struct {
	CELSi, CELP float64 // CEL = C + CELSi·Si + CELP·P for the liquidus fit (Heine's 0.25, 0.5 by default)
	MinPairs    int     // fewer pairs than this is warned about
	MinR2       float64 // a lower R² is warned about
	MaxRMSTempC float64 // the liquidus fit's RMS above this is warned about, °C
	MaxRMSPct   float64 // the C and Si fits' RMS above this is warned about, wt %
}

// DefaultFitOptions: Heine's CEL; warn below 10 pairs, R² 0.8, or above RMS
// 5 °C / 0.10 wt % (practice: a shop's choice, configurable).
func DefaultFitOptions() FitOptions {
	return FitOptions{CELSi: 0.25, CELP: 0.5, MinPairs: 10, MinR2: 0.8, MaxRMSTempC: 5, MaxRMSPct: 0.10}
}

// FitReport is one fitted regression with where its worst residual is.
type FitReport struct {
	Name      string      `json:"name"` // liquidus, silicon, carbon
	Formula   string      `json:"formula"`
	Fit       *Regression `json:"fit"`
	WorstLine int         `json:"worst_line"` // line of the largest residual
	Skipped   string      `json:"skipped,omitempty"`
}

// PublishedCheck is how a published liquidus regression does on the pairs:
// measured minus predicted liquidus.
type PublishedCheck struct {
	Name  string  `json:"name"`
	N     int     `json:"n"`
	BiasC float64 `json:"bias_c"`
	RMSC  float64 `json:"rms_c"`
}

// FitCalibration fits the shop's regressions by ordinary least squares:
//
//	liquidus: TL = a − b·CEL, CEL = C + CELSi·Si + CELP·P (pairs with liquidus_c, c_pct, si_pct)
//	silicon:  Si = a + b·T_white                         (pairs with metastable_c, si_pct)
//	carbon:   C  = a + b·TL + c·Si                       (pairs with liquidus_c, c_pct, si_pct)
//
// A regression without enough pairs is skipped with the reason. Warnings
// name poor fits (few pairs, low R², high RMS, an implausible slope).
func FitCalibration(pairs []Pair, opt FitOptions) (*Calibration, []FitReport, []PublishedCheck, []string) {
	cal := &Calibration{}
	var reps []FitReport
	var warns []string
	pick := func(keys ...string) (rows []Pair) {
		for _, p := range pairs {
			ok := true
			for _, k := range keys {
				if _, have := p.Values[k]; !have {
					ok = false
				}
			}
			if ok {
				rows = append(rows, p)
			}
		}
		return rows
	}
	col := func(rows []Pair, f func(Pair) float64) []float64 {
		out := make([]float64, len(rows))
		for i, r := range rows {
			out[i] = f(r)
		}
		return out
	}
	get := func(k string) func(Pair) float64 { return func(p Pair) float64 { return p.Values[k] } }
	fit := func(name, formula, unit string, maxRMS float64, rows []Pair, input []float64, y []float64, xs ...[]float64) (*Regression, metal.Fit) {
		rep := FitReport{Name: name, Formula: formula}
		f, err := metal.LeastSquares(y, xs...)
		if err != nil {
			rep.Skipped = err.Error()
			reps = append(reps, rep)
			return nil, f
		}
		r := &Regression{Formula: formula, N: f.N, R2: f.R2, RMS: f.RMS, MaxAbs: f.MaxAbs,
			InputMin: slices.Min(input), InputMax: slices.Max(input)}
		worst := 0
		for i, res := range f.Residuals {
			if math.Abs(res) > math.Abs(f.Residuals[worst]) {
				worst = i
			}
		}
		rep.Fit, rep.WorstLine = r, rows[worst].Line
		reps = append(reps, rep)
		if f.N < opt.MinPairs {
			warns = append(warns, fmt.Sprintf("%s: only %d pairs (at least %d advised): the fit may not hold for the next melt", name, f.N, opt.MinPairs))
		}
		if f.R2 < opt.MinR2 {
			warns = append(warns, fmt.Sprintf("%s: R² %.3f is below %.2f: the fit explains little of the scatter; check the pairs before using it", name, f.R2, opt.MinR2))
		}
		if f.RMS > maxRMS {
			warns = append(warns, fmt.Sprintf("%s: RMS residual %.3g %s is above %.3g %s", name, f.RMS, unit, maxRMS, unit))
		}
		return r, f
	}
	need := func(name, why string) {
		reps = append(reps, FitReport{Name: name, Skipped: why})
	}

	// Liquidus.
	cel := func(p Pair) float64 {
		return p.Values["c_pct"] + opt.CELSi*p.Values["si_pct"] + opt.CELP*p.Values["p_pct"]
	}
	var checks []PublishedCheck
	if rows := pick("liquidus_c", "c_pct", "si_pct"); len(rows) > 0 {
		tl := col(rows, get("liquidus_c"))
		if r, f := fit("liquidus", "TL = a - b*CEL, CEL = C + cel_si*Si + cel_p*P", "°C", opt.MaxRMSTempC, rows, tl, tl, col(rows, cel)); r != nil {
			r.A, r.B = f.Coef[0], -f.Coef[1]
			si, p := opt.CELSi, opt.CELP
			r.CELSi, r.CELP = &si, &p
			if r.B <= 0 {
				warns = append(warns, fmt.Sprintf("liquidus: b = %.4g: the liquidus should fall as CEL rises; the pairs do not support a fit", r.B))
			}
			cal.Liquidus = r
		}
		for _, reg := range []metal.LiquidusCE{metal.Koriyama2020(), metal.Heine()} {
			pc := PublishedCheck{Name: reg.Name, N: len(rows)}
			var ss float64
			for _, row := range rows {
				chem := map[string]float64{}
				for _, el := range Elements {
					chem[el] = row.Values[el+"_pct"]
				}
				d := row.Values["liquidus_c"] - reg.Liquidus(reg.CELOf(chem))
				pc.BiasC += d / float64(len(rows))
				ss += d * d
			}
			pc.RMSC = math.Sqrt(ss / float64(len(rows)))
			checks = append(checks, pc)
		}
	} else {
		need("liquidus", "needs pairs with liquidus_c, c_pct and si_pct")
	}

	// Silicon from the white arrest.
	if rows := pick("metastable_c", "si_pct"); len(rows) > 0 {
		tm := col(rows, get("metastable_c"))
		if r, f := fit("silicon", "Si = a + b*T_white", "wt %", opt.MaxRMSPct, rows, tm, col(rows, get("si_pct")), tm); r != nil {
			r.A, r.B = f.Coef[0], f.Coef[1]
			if r.B >= 0 {
				warns = append(warns, fmt.Sprintf("silicon: b = %.4g: the white arrest should fall as silicon rises; the pairs do not support a fit", r.B))
			}
			cal.Silicon = r
		}
	} else {
		need("silicon", "needs pairs with metastable_c and si_pct")
	}

	// Carbon from the liquidus and silicon.
	if rows := pick("liquidus_c", "c_pct", "si_pct"); len(rows) > 0 {
		tl := col(rows, get("liquidus_c"))
		if r, f := fit("carbon", "C = a + b*TL + c*Si", "wt %", opt.MaxRMSPct, rows, tl, col(rows, get("c_pct")), tl, col(rows, get("si_pct"))); r != nil {
			r.A, r.B, r.C = f.Coef[0], f.Coef[1], f.Coef[2]
			cal.Carbon = r
		}
	} else {
		need("carbon", "needs pairs with liquidus_c, c_pct and si_pct")
	}
	return cal, reps, checks, warns
}
