package limits

import (
	"fmt"
	"slices"
	"strconv"
	"strings"
)

// Check statuses and verdicts. The verdict strings are the stable ones of the
// JSON record.
const (
	StatusPass     = "pass"
	StatusMarginal = "marginal"
	StatusFail     = "fail"
	StatusMissing  = "missing" // the metric could not be computed
	// StatusWithheld: the figure was computed, but a failed check on the
	// sample spoils it (a cup filled cold, frozen too fast): it is not
	// judged, and the record withholds it.
	StatusWithheld = "withheld"

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
	// SampleCheck: a check on the sample, not the metal (its fail makes
	// the verdict invalid: re-sample).
	SampleCheck bool   `json:"sample_check,omitempty"`
	Status      string `json:"status"` // pass, marginal, fail, missing, withheld
	Reason      string `json:"reason"`
	Advice      string `json:"advice,omitempty"`
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
	// Withheld are the figures failed checks on the sample spoil, by
	// metric, with why ("pour superheat in the cup 13 °C is below the 40 °C
	// limit: a cup filled cold"), in metric order.
	Withheld []Withheld
}

// Withheld is one figure a failed check on the sample spoils.
type Withheld struct {
	Metric string `json:"metric"`
	Why    string `json:"why"`
}

// Evaluate checks the sample against every limit of the alloy. Rules:
// a check on the sample (sample_check) outside its marginal band → invalid
// (re-sample), and the figures it spoils are withheld, not judged; a
// required metric missing from a finished sample → invalid (re-sample);
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
	names := sortedMetrics(a.Metrics)
	// Checks on the sample first: what they spoil is not judged.
	spoiled := map[string]string{}
	for _, name := range names {
		l := a.Metrics[name]
		v, ok := s.Values[name]
		if !l.SampleCheck || !ok {
			continue
		}
		mi, _ := Metric(name)
		if st, reason, _ := judge(mi, l, v); st == StatusFail {
			for _, sp := range l.Spoils {
				if _, seen := spoiled[sp]; !seen {
					spoiled[sp] = reason
				}
			}
		}
	}
	for _, name := range names {
		l := a.Metrics[name]
		mi, _ := Metric(name)
		c := Check{Metric: name, Label: mi.Label, Unit: mi.Unit, Pass: l.PassBand(), Marginal: l.MarginalBand(),
			Required: l.Required, SampleCheck: l.SampleCheck}
		v, ok := s.Values[name]
		why, spoilt := spoiled[name]
		switch {
		case ok && spoilt:
			c.Status = StatusWithheld
			c.Reason = mi.Label + " withheld: " + why
			o.Withheld = append(o.Withheld, Withheld{Metric: name, Why: why})
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
			switch {
			case c.Status == StatusFail && l.SampleCheck:
				c.Reason = "the sample is unfit (a check on the cup, not the metal): " + c.Reason
				worst = max(worst, 3)
			case c.Status == StatusMarginal:
				worst = max(worst, 1)
			case c.Status == StatusFail:
				worst = max(worst, 2)
			}
		}
		if c.Status != StatusPass && c.Status != StatusWithheld {
			o.Reasons = append(o.Reasons, c.Reason)
			addAdvice(c.Advice)
		}
		o.Checks = append(o.Checks, c)
	}
	if len(o.Withheld) > 0 {
		parts := make([]string, len(o.Withheld))
		for i, w := range o.Withheld {
			mi, _ := Metric(w.Metric)
			parts[i] = mi.Label
		}
		o.Reasons = append(o.Reasons, "withheld, spoilt by the sample: "+strings.Join(parts, ", "))
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

// judge places v against the limit and words the reason in numbers. Beside
// a bound, v is written with as many decimals as it takes to differ from
// it, so that "9.0 is above the 9.0 limit" is never printed.
func judge(mi MetricInfo, l *Limit, v float64) (status, reason, advice string) {
	pass, marg := l.PassBand(), l.MarginalBand()
	switch {
	case pass.Contains(v):
		return StatusPass, mi.Label + " " + mi.Format(v) + " is within " + bandText(mi, pass), ""
	case pass.Min != nil && v < *pass.Min:
		advice = l.Low
		if marg.Contains(v) {
			return StatusMarginal, fmt.Sprintf("%s %s is below the %s pass limit (marginal down to %s)", mi.Label, mi.FormatApart(v, *pass.Min), mi.FormatBound(*pass.Min), mi.FormatBound(*marg.Min)), advice
		}
		reason = fmt.Sprintf("%s %s is below the %s limit", mi.Label, mi.FormatApart(v, *marg.Min), mi.FormatBound(*marg.Min))
	default:
		advice = l.High
		if marg.Contains(v) {
			return StatusMarginal, fmt.Sprintf("%s %s is above the %s pass limit (marginal up to %s)", mi.Label, mi.FormatApart(v, *pass.Max), mi.FormatBound(*pass.Max), mi.FormatBound(*marg.Max)), advice
		}
		reason = fmt.Sprintf("%s %s is above the %s limit", mi.Label, mi.FormatApart(v, *marg.Max), mi.FormatBound(*marg.Max))
	}
	return StatusFail, reason, advice
}

// FormatApart writes v as Format does, with more decimals where needed
// (up to 12) for it to read differently from bound: beside a 9.0 limit,
// 9.04 reads "9.04", not "9.0".
func (m MetricInfo) FormatApart(v, bound float64) string {
	d := m.Decimals
	for d < 12 && strconv.FormatFloat(v, 'f', d, 64) == strconv.FormatFloat(bound, 'f', d, 64) {
		d++
	}
	mm := m
	mm.Decimals = d
	return mm.Format(v)
}

// FormatBound writes a limit's bound with the metric's decimals, or more
// (up to 4 more) where the file gives it more finely: a ±8.135 °C tolerance
// reads "8.135 °C", not "8.13 °C".
func (m MetricInfo) FormatBound(bound float64) string {
	mm := m
	mm.Decimals = m.boundDecimals(bound)
	return mm.Format(bound)
}

func (m MetricInfo) boundDecimals(bound float64) int {
	d := m.Decimals
	for d < m.Decimals+4 {
		if back, err := strconv.ParseFloat(strconv.FormatFloat(bound, 'f', d, 64), 64); err == nil && back == bound {
			break
		}
		d++
	}
	return d
}

func bandText(mi MetricInfo, b Band) string {
	switch {
	case b.Min != nil && b.Max != nil:
		return mi.FormatBound(*b.Min) + " to " + mi.FormatBound(*b.Max)
	case b.Min != nil:
		return "its limit (at least " + mi.FormatBound(*b.Min) + ")"
	case b.Max != nil:
		return "its limit (at most " + mi.FormatBound(*b.Max) + ")"
	}
	return "its limits (presence only)"
}

// FormatBand writes a band for tables: "1142.0 … 1156.0", "≥ 12.0", "≤ 10.0", "any".
func FormatBand(mi MetricInfo, b Band) string {
	f := func(v float64) string { return strconv.FormatFloat(v, 'f', mi.boundDecimals(v), 64) }
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
