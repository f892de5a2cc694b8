// Package errdist summarises the errors of a detected point against a
// reference (arrest − truth, °C) for the accuracy suites that print them:
// the nearest-rank quantiles and one table line per point.
package errdist

import (
	"fmt"
	"math"
	"slices"
)

// Quantile is the q-quantile (0 … 1) of xs by the nearest rank: the
// smallest value with at least q·n values at or below it (NaN when xs is
// empty). xs is not changed.
func Quantile(xs []float64, q float64) float64 {
	if len(xs) == 0 {
		return math.NaN()
	}
	s := slices.Clone(xs)
	slices.Sort(s)
	k := int(math.Ceil(q*float64(len(s)))) - 1
	return s[min(max(k, 0), len(s)-1)]
}

// Header is the table's column line, for Row.
func Header() string {
	return fmt.Sprintf("%-13s %5s %8s %8s %8s %8s %8s %6s", "point", "n", "|e| med", "|e| p95", "|e| max", "min e", "max e", "null≠")
}

// Row is one point's line: its name, the number of errors, the median, 95th
// percentile and maximum of |error|, the extremes of the signed error, the
// nulls that disagree with the reference, and the tolerance (0: none set).
func Row(name string, errs []float64, nulls int, tol float64) string {
	abs := make([]float64, len(errs))
	for k, e := range errs {
		abs[k] = math.Abs(e)
	}
	lim := "-"
	if tol > 0 {
		lim = fmt.Sprintf("±%.1f", tol)
	}
	return fmt.Sprintf("%-13s %5d %8.3f %8.3f %8.3f %8.3f %8.3f %6d  (limit %s)", name, len(errs),
		Quantile(abs, 0.5), Quantile(abs, 0.95), Quantile(abs, 1), Quantile(errs, 0), Quantile(errs, 1), nulls, lim)
}

// Point gathers one point's comparisons with its reference: the errors
// where both have a value, and the nulls that disagree (a value where the
// reference has none, or none where it has one).
type Point struct {
	Name  string
	Tol   float64   // °C; 0: logged, not checked
	Errs  []float64 // detected − reference, °C
	Nulls int
}

// Add records one comparison: got (found: gotOK) against want (wantOK). It
// returns the miss, described, where Tol is set and the error exceeds it or
// the nulls disagree ("" otherwise), and whether that miss is a null.
func (p *Point) Add(got float64, gotOK bool, want float64, wantOK bool) (miss string, null bool) {
	switch {
	case gotOK && wantOK:
		e := got - want
		p.Errs = append(p.Errs, e)
		if p.Tol > 0 && math.Abs(e) > p.Tol {
			return fmt.Sprintf("%s %.2f, truth %.2f (|error| %.2f > %.1f)", p.Name, got, want, math.Abs(e), p.Tol), false
		}
	case gotOK != wantOK:
		p.Nulls++
		if p.Tol > 0 {
			return fmt.Sprintf("%s found=%v (%.2f), truth found=%v (%.2f)", p.Name, gotOK, got, wantOK, want), true
		}
	}
	return "", false
}

// Row is the point's table line (the package's Row).
func (p *Point) Row() string { return Row(p.Name, p.Errs, p.Nulls, p.Tol) }
