package forecast

import (
	"context"
	"fmt"
	"slices"
	"strings"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/limits"
)

// AdviseInput analyses the sample as assess.Assess does (assess.Detect)
// and advises on it: the sample's record and the model's predictions for
// its additions.
func AdviseInput(ctx context.Context, in assess.Input, opt Options) (assess.Record, []Prediction) {
	res := arrest.Analyze(in.Time, in.Temp, assess.Detect(in))
	return assess.FromResult(in, res), Advise(ctx, in, res, opt)
}

// Headline picks the prediction to show first: the first that applies and
// addresses a metric outside its pass band on the measured record, else
// the first that applies, else the first.
func Headline(rec assess.Record, ps []Prediction) (Prediction, bool) {
	if len(ps) == 0 {
		return Prediction{}, false
	}
	bad := map[string]bool{}
	for _, c := range rec.Checks {
		if c.Status == limits.StatusFail || c.Status == limits.StatusMarginal {
			bad[c.Metric] = true
		}
	}
	for _, p := range ps {
		if p.Applies && slices.ContainsFunc(p.Metrics, func(m PredictedMetric) bool { return bad[m.Metric] }) {
			return p, true
		}
	}
	for _, p := range ps {
		if p.Applies {
			return p, true
		}
	}
	return ps[0], true
}

// Lines are what a screen shows of a prediction: the advice in words, then
// the caution. The dashboard's DONE view shows them under the verdict.
func (p Prediction) Lines() []string {
	return []string{p.Text, Caution}
}

// Short is the advice in one short line for a narrow pane: "est. +0.23 %
// fesi75-ca-ba → eutectic min 1157 ± 0.9 °C (pass), pour within 3 min", or
// why there is no estimate.
func (p Prediction) Short() string {
	if !p.Applies {
		return "no model estimate: " + p.Why
	}
	var b strings.Builder
	b.WriteString("est. ")
	if p.AdditionPct != nil && *p.AdditionPct > 0 {
		fmt.Fprintf(&b, "+%.2f %% %s → ", *p.AdditionPct, p.Inoculant)
	} else {
		b.WriteString("no addition → ")
	}
	key := "eutectic_min_c"
	switch p.Effect {
	case limits.EffectPrimaryNuclei:
		key = "alpha_recalescence_c"
	case limits.EffectEutecticDepression:
		key = "eutectic_depression_c"
	}
	for _, m := range p.Metrics {
		if m.Metric == key {
			fmt.Fprintf(&b, "%s %s ± %s %s", m.Label, fmtNum(m.Value), fmtU(m.U), m.Unit)
		}
	}
	fmt.Fprintf(&b, " (%s)", p.Verdict)
	if p.HoldMaxMin != nil && p.HoldMaxMinU != nil {
		if w := *p.HoldMaxMin - *p.HoldMaxMinU; w >= 1 {
			fmt.Fprintf(&b, ", pour within %.0f min", w)
		}
	}
	return b.String()
}
