package limits

import (
	"strings"

	"github.com/undercool-foundry/undercool/internal/arrest"
)

// Resolution is what an alloy name means for every command that analyses
// or judges a sample (analyze, record, monitor, the dashboard and replay):
// the book's entry, if it has one, and the detector options that follow
// from it. It is made in one place, Book.Resolve, so that no two commands
// can read the same alloy two ways.
type Resolution struct {
	Name  string // the alloy name as given, trimmed
	Entry *Alloy // the book's entry; nil when the book has none for Name
	// Detect are the detector options for the alloy (Live false).
	Detect arrest.Options
}

// Family is the detector family used.
func (r Resolution) Family() arrest.Family { return r.Detect.Family }

// Resolve resolves an alloy name against the book: the entry found by
// Book.Alloy decides the family (its `family` key), else the name rule of
// Family. A nil book resolves by the name rule alone.
func (b *Book) Resolve(alloy string) Resolution {
	r := Resolution{Name: strings.TrimSpace(alloy)}
	if a, ok := b.Alloy(alloy); ok {
		r.Entry = a
	}
	fam := Family(r.Name)
	if r.Entry != nil && r.Entry.Family != "" {
		fam = r.Entry.Family
	}
	r.Detect = arrest.Options{Family: fam}
	return r
}
