package limits

import (
	"fmt"
	"math"
	"strings"
)

// Bound names one of the four bounds of a limit.
type Bound string

// The bounds, named as their keys in the limits file.
const (
	PassMin     Bound = "pass_min"
	PassMax     Bound = "pass_max"
	MarginalMin Bound = "marginal_min"
	MarginalMax Bound = "marginal_max"
)

// Bounds lists the bounds in the order an editor shows them.
func Bounds() []Bound { return []Bound{PassMin, PassMax, MarginalMin, MarginalMax} }

// Label is the bound in words for a prompt: "pass minimum".
func (b Bound) Label() string {
	switch b {
	case PassMin:
		return "pass minimum"
	case PassMax:
		return "pass maximum"
	case MarginalMin:
		return "marginal minimum"
	case MarginalMax:
		return "marginal maximum"
	}
	return string(b)
}

// of is the bound's field in a limit (nil for an unknown bound).
func (b Bound) of(l *Limit) **float64 {
	switch b {
	case PassMin:
		return &l.PassMin
	case PassMax:
		return &l.PassMax
	case MarginalMin:
		return &l.MarginalMin
	case MarginalMax:
		return &l.MarginalMax
	}
	return nil
}

// Get returns the bound of a limit (nil: open).
func (b Bound) Get(l *Limit) *float64 {
	if p := b.of(l); p != nil && l != nil {
		return *p
	}
	return nil
}

// Edit is one change a limits editor makes: a bound of one alloy's metric
// set to Value, or removed (Value nil: that side is open).
type Edit struct {
	Alloy  string
	Metric string
	Bound  Bound
	Value  *float64
}

// Key is the edit's key in the limits file:
// "alloy.grey-iron.metric.eutectic_min_c.pass_min".
func (e Edit) Key() string {
	return dotted([]string{"alloy", e.Alloy, "metric", e.Metric, string(e.Bound)})
}

// SetLimit sets one bound of an alloy's metric in the book (nil removes it)
// and returns the edit. It is meant for a Clone of the book in use: the
// metric's table is made if the alloy has none; the alloy, metric and bound
// must exist and the value must be finite. The book as a whole is not
// checked here: call Validate (or save with SaveBy/SaveEdits, which do)
// before using it.
func (b *Book) SetLimit(alloy, metric string, bound Bound, v *float64) (Edit, error) {
	a, ok := b.Alloy(alloy)
	if !ok {
		return Edit{}, fmt.Errorf("no alloy %q in the limits (it has: %s)", alloy, strings.Join(b.Names(), ", "))
	}
	if _, ok := Metric(metric); !ok {
		return Edit{}, fmt.Errorf("unknown metric %q", metric)
	}
	if bound.of(&Limit{}) == nil {
		return Edit{}, fmt.Errorf("unknown bound %q (want pass_min, pass_max, marginal_min or marginal_max)", bound)
	}
	if v != nil && (math.IsNaN(*v) || math.IsInf(*v, 0)) {
		return Edit{}, fmt.Errorf("%s %s: the %s must be a finite number", a.Name, metric, bound.Label())
	}
	if a.Metrics == nil {
		a.Metrics = map[string]*Limit{}
	}
	l := a.Metrics[metric]
	if l == nil {
		l = &Limit{}
		a.Metrics[metric] = l
	}
	var val *float64
	if v != nil {
		x := *v
		val = &x
	}
	*bound.of(l) = val
	return Edit{Alloy: a.Name, Metric: metric, Bound: bound, Value: val}, nil
}

// Apply makes an edit in the book (SetLimit with the edit's fields).
func (b *Book) Apply(e Edit) error {
	_, err := b.SetLimit(e.Alloy, e.Metric, e.Bound, e.Value)
	return err
}
