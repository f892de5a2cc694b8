package limits

import (
	"testing"

	"github.com/undercool-foundry/undercool/internal/arrest"
)

func TestBuiltinAlloys(t *testing.T) {
	b := Builtin()
	for _, n := range []string{"grey-iron", "ductile-iron", "white-iron", "al-si7mg", "pure-al", "pure-zn"} {
		a, ok := b.Alloy(n)
		if !ok {
			t.Fatalf("built-in book lacks %s", n)
		}
		if a.Family != Family(n) {
			t.Errorf("%s: family %q in the file, Family() says %q", n, a.Family, Family(n))
		}
	}
}

func TestFamily(t *testing.T) {
	for _, c := range []struct {
		name string
		want arrest.Family
	}{
		{"grey-iron", arrest.FamilyIron}, {"ductile-iron", arrest.FamilyIron}, {"compacted-iron", arrest.FamilyIron},
		{"white-iron", arrest.FamilyWhite}, {"al-si7mg", arrest.FamilyAluminum}, {"al-si10mg", arrest.FamilyAluminum},
		{"pure-al", arrest.FamilyPure}, {"pure-zn", arrest.FamilyPure}, {"Grey-Iron", arrest.FamilyIron},
	} {
		if got := Family(c.name); got != c.want {
			t.Errorf("Family(%q) = %q, want %q", c.name, got, c.want)
		}
	}
}
