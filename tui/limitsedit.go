package tui

import (
	"github.com/undercool-foundry/undercool/internal/limits"
)

// The limits editor's seam to the limits package: the pending edits made
// on a copy of the book in use (limits.Book.Clone, limits.Book.SetLimit),
// which the saver writes in place (limits.SaveBy) and the model swaps in.

// editBook is a copy of b with the pending edits (alloy → bound → value)
// applied, and how many were; an edit the book refuses is said.
func editBook(b *limits.Book, pending map[string]map[limitRow]*float64) (*limits.Book, int, error) {
	c := b.Clone()
	n := 0
	for alloy, m := range pending {
		for r, v := range m {
			if _, err := c.SetLimit(alloy, r.metric, r.b.limitsBound(), v); err != nil {
				return nil, 0, err
			}
			n++
		}
	}
	return c, n, nil
}

// limitsBound is the limits package's name of the bound.
func (b bound) limitsBound() limits.Bound {
	return [...]limits.Bound{passMin: limits.PassMin, passMax: limits.PassMax, margMin: limits.MarginalMin, margMax: limits.MarginalMax}[b]
}

// clonePending copies the pending edits (the values are never changed in
// place, so the pointers may be shared).
func clonePending(p map[string]map[limitRow]*float64) map[string]map[limitRow]*float64 {
	out := make(map[string]map[limitRow]*float64, len(p))
	for a, m := range p {
		out[a] = make(map[limitRow]*float64, len(m))
		for r, v := range m {
			out[a][r] = v
		}
	}
	return out
}

// dropSaved is the pending edits less those a save wrote (an edit made
// while the save ran, to another value, stays pending).
func dropSaved(pending, saved map[string]map[limitRow]*float64) map[string]map[limitRow]*float64 {
	out := clonePending(pending)
	for a, m := range saved {
		for r, v := range m {
			if w, ok := out[a][r]; ok && w == v {
				delete(out[a], r)
			}
		}
		if len(out[a]) == 0 {
			delete(out, a)
		}
	}
	return out
}
