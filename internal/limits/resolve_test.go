package limits

import (
	"testing"

	"github.com/undercool-foundry/undercool/internal/arrest"
)

// TestResolveEntryFamilyFirst: an alloy entry named outside the naming rule
// (a356, family "aluminum") resolves to its entry's family, not to the
// iron default of the name rule; names without an entry follow the rule.
func TestResolveEntryFamilyFirst(t *testing.T) {
	b, err := Parse([]byte("version = \"t\"\n[alloy.a356]\nfamily = \"aluminum\"\n"), "t.toml")
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		alloy string
		fam   arrest.Family
		entry bool
	}{
		{"a356", arrest.FamilyAluminum, true},
		{" A356 ", arrest.FamilyAluminum, true},
		{"al-si7mg", arrest.FamilyAluminum, false},
		{"white-iron", arrest.FamilyWhite, false},
		{"", arrest.FamilyIron, false},
	}
	for _, c := range cases {
		r := b.Resolve(c.alloy)
		if r.Family() != c.fam || (r.Entry != nil) != c.entry {
			t.Errorf("Resolve(%q) = family %q, entry %v; want %q, %v", c.alloy, r.Family(), r.Entry != nil, c.fam, c.entry)
		}
	}
	var nilBook *Book
	if got := nilBook.Resolve("a356").Family(); got != arrest.FamilyIron {
		t.Errorf("nil book: Resolve(a356) = %q, want the name rule's iron", got)
	}
}
