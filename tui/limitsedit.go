package tui

import (
	"github.com/undercool-foundry/undercool/internal/limits"
)

// The limits editor's seam to the limits package: a copy of the book that
// edits can change without touching the book in use (limits.Book.Clone),
// and the pending edits applied to it. Swap these for the limits package's
// own editing API when it has one.

// editBook is a copy of b with the pending edits (alloy → bound → value)
// applied, and how many were.
func editBook(b *limits.Book, pending map[string]map[limitRow]*float64) (*limits.Book, int) {
	c := b.Clone()
	n := 0
	for alloy, m := range pending {
		al, ok := c.Alloy(alloy)
		if !ok {
			continue
		}
		for r, v := range m {
			if l := al.Metrics[r.metric]; l != nil {
				*r.b.of(l) = v
				n++
			}
		}
	}
	return c, n
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
