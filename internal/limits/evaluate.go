package limits

import (
	"fmt"
	"slices"
	"strconv"
)

// Check statuses and verdicts. The verdict strings are the stable ones of the
// JSON record.
const (
	StatusPass     = "pass"
	StatusMarginal = "marginal"
	StatusFail     = "fail"
	StatusMissing  = "missing" // the metric could not be computed

	VerdictPass      = "pass"
	VerdictMarginal  = "marginal"
	VerdictFail      = "fail"
	VerdictInvalid   = "invalid"
	VerdictUnchecked = "unchecked"
)

// Band is a closed interval; a nil bound is open.
type Band struct {
	Min *float64 `json:"min"`
	Max *float64 `json:"max"`
}

// Contains reports whether v lies in the band (bounds included).
func (b Band) Contains(v float64) bool {
	return (b.Min == nil || v >= *b.Min) && (b.Max == nil || v <= *b.Max)
}

// PassBand is the pass band of the limit.
func (l *Limit) PassBand() Band { return Band{Min: l.PassMin, Max: l.PassMax} }

// MarginalBand is the marginal band: a bound not given equals the pass bound
// (no marginal zone on that side).
func (l *Limit) MarginalBand() Band {
	b := l.PassBand()
	if l.MarginalMin != nil {
		b.Min = l.MarginalMin
	}
	if l.MarginalMax != nil {
		b.Max = l.MarginalMax
	}
	return b
}

// Check is the outcome of one metric against its limit.
type Check struct {
	Metric   string   `json:"metric"`
	Label    string   `json:"label"`
	Unit     string   `json:"unit"`
	Value    *float64 `json:"value"` // null when it could not be computed
	Pass     Band     `json:"pass"`
	Marginal Band     `json:"marginal"`
	Required bool     `json:"required"`
	Status   string   `json:"status"` // pass, marginal, fail, missing
	Reason   string   `json:"reason"`
	Advice   string   `json:"advice,omitempty"`
}

// Sample is what a sample gives the limits: the metric values that could be
// computed, a plain reason for each that could not, and whether the sample
// has finished freezing.
type Sample struct {
	Values   map[string]float64
	Why      map[string]string // metric → why it is missing, e.g. "eutectic minimum not found"
	Complete bool
}

// Outcome is an alloy's verdict on a sample.
type Outcome struct {
	Verdict string
	Checks  []Check
	Reasons []string // one line per finding, in numbers
	Advice  []string // advice to show, worded as advice, without repeats
	// Provisional is true while the sample is still freezing: a verdict may
	// still change, and pass is never given early.
	Provisional bool
}

// Evaluate checks the sample against every limit of the alloy. Rules:
// a required metric missing from a finished sample → invalid (re-sample);
// else any fail → fail; else any marginal → marginal; a missing metric that
// is not required is listed but does not fail; if nothing could be checked,
// or the sample is still freezing and nothing is out, → unchecked; else pass.
func (a *Alloy) Evaluate(s Sample) Outcome {
	var o Outcome
	o.Provisional = !s.Complete
	worst := 0 // 0 pass, 1 marginal, 2 fail, 3 invalid
	checked := 0
	addAdvice := func(txt string) {
		if txt != "" && !slices.Contains(o.Advice, txt) {
			o.Advice = append(o.Advice, txt)
		}
	}
	for _, name := range sortedMetrics(a.Metrics) {
		l := a.Metrics[name]
		mi, _ := Metric(name)
		c := Check{Metric: name, Label: mi.Label, Unit: mi.Unit, Pass: l.PassBand(), Marginal: l.MarginalBand(), Required: l.Required}
		v, ok := s.Values[name]
		switch {
		case !ok:
			c.Status = StatusMissing
			c.Reason = s.Why[name]
			if c.Reason == "" {
				c.Reason = mi.Label + " could not be computed"
			}
			if l.Required && s.Complete {
				c.Reason += "; it is required for " + a.Name
				c.Advice = l.Missing
				worst = max(worst, 3)
			}
		default:
			checked++
			c.Value = &v
			c.Status, c.Reason, c.Advice = judge(mi, l, v)
			switch c.Status {
			case StatusMarginal:
				worst = max(worst, 1)
			case StatusFail:
				worst = max(worst, 2)
			}
		}
		if c.Status != StatusPass {
			o.Reasons = append(o.Reasons, c.Reason)
			addAdvice(c.Advice)
		}
		o.Checks = append(o.Checks, c)
	}
	switch {
	case worst == 3:
		o.Verdict = VerdictInvalid
	case worst == 2:
		o.Verdict = VerdictFail
	case worst == 1:
		o.Verdict = VerdictMarginal
	case checked == 0:
		o.Verdict = VerdictUnchecked
		o.Reasons = append(o.Reasons, "none of the "+a.Name+" metrics could be computed")
	case !s.Complete:
		o.Verdict = VerdictUnchecked
		o.Reasons = append(o.Reasons, "the sample is still freezing: no verdict yet")
	default:
		o.Verdict = VerdictPass
	}
	return o
}

// judge places v against the limit and words the reason in numbers.
func judge(mi MetricInfo, l *Limit, v float64) (status, reason, advice string) {
	pass, marg := l.PassBand(), l.MarginalBand()
	val := mi.Label + " " + mi.Format(v)
	switch {
	case pass.Contains(v):
		return StatusPass, val + " is within " + bandText(mi, pass), ""
	case pass.Min != nil && v < *pass.Min:
		advice = l.Low
		if marg.Contains(v) {
			return StatusMarginal, fmt.Sprintf("%s is below the %s pass limit (marginal down to %s)", val, mi.Format(*pass.Min), mi.Format(*marg.Min)), advice
		}
		reason = fmt.Sprintf("%s is below the %s limit", val, mi.Format(*marg.Min))
	default:
		advice = l.High
		if marg.Contains(v) {
			return StatusMarginal, fmt.Sprintf("%s is above the %s pass limit (marginal up to %s)", val, mi.Format(*pass.Max), mi.Format(*marg.Max)), advice
		}
		reason = fmt.Sprintf("%s is above the %s limit", val, mi.Format(*marg.Max))
	}
	return StatusFail, reason, advice
}

func bandText(mi MetricInfo, b Band) string {
	switch {
	case b.Min != nil && b.Max != nil:
		return mi.Format(*b.Min) + " to " + mi.Format(*b.Max)
	case b.Min != nil:
		return "its limit (at least " + mi.Format(*b.Min) + ")"
	case b.Max != nil:
		return "its limit (at most " + mi.Format(*b.Max) + ")"
	}
	return "its limits (presence only)"
}

// FormatBand writes a band for tables: "1142.0 … 1156.0", "≥ 12.0", "≤ 10.0", "any".
func FormatBand(mi MetricInfo, b Band) string {
	f := func(v float64) string { return strconv.FormatFloat(v, 'f', mi.Decimals, 64) }
	switch {
	case b.Min != nil && b.Max != nil:
		return f(*b.Min) + " … " + f(*b.Max)
	case b.Min != nil:
		return "≥ " + f(*b.Min)
	case b.Max != nil:
		return "≤ " + f(*b.Max)
	}
	return "any"
}
