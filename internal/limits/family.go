package limits

import (
	"strings"

	"github.com/undercool-foundry/undercool/internal/arrest"
)

// Family gives the detector family for an alloy name, so that a curve can be
// analysed before (or without) a limits file:
//
//	grey-iron, ductile-iron, compacted-iron (any *-iron) → arrest.FamilyIron
//	white-iron (a tellurium cup; any name with "white" or "tellurium") → arrest.FamilyWhite
//	al-si7mg and any other al-* → arrest.FamilyAluminum
//	pure-al, pure-zn (any pure-*) → arrest.FamilyPure
//
// Names are matched without regard to case. Anything else is analysed as a
// normal cast-iron cup (arrest.FamilyIron), the zero-value detector. A book's
// own alloy entry (Alloy.Family) takes precedence over this rule.
func Family(alloyName string) arrest.Family {
	n := strings.ToLower(strings.TrimSpace(alloyName))
	switch {
	case strings.HasPrefix(n, "pure-"):
		return arrest.FamilyPure
	case strings.HasPrefix(n, "al-") || n == "al" || strings.HasPrefix(n, "alsi"):
		return arrest.FamilyAluminum
	case strings.Contains(n, "white") || strings.Contains(n, "tellurium"):
		return arrest.FamilyWhite
	default:
		return arrest.FamilyIron
	}
}
