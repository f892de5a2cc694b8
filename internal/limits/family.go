package limits

import (
	"fmt"
	"math"
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

// Highest readings that tell the families apart when a curve names no
// alloy: iron is poured above 1000 °C and aluminium alloys above 560 °C
// (the pour triggers of arrest.FamilyHints); below that, some other alloy.
const (
	ironPourC      = 1000.0
	aluminiumPourC = 560.0
)

// FamilyOfCurve recognises the family of a curve that names no alloy from
// its highest reading (the pour peak; readings outside the thermocouple's
// range, arrest.MinValidC to arrest.MaxValidC, are faults and ignored):
//
//	at least 1000 °C      → arrest.FamilyIron (a normal cast-iron cup)
//	560 °C up to 1000 °C  → arrest.FamilyAluminum
//	below 560 °C          → arrest.FamilyEutectic (first arrest the plateau)
//
// It is a rule for the detector only: without an alloy no limits apply. A
// tellurium cup or a check cup is not told from the curve; name the alloy.
// why says, in words, what the rule saw.
func FamilyOfCurve(temp []float64) (f arrest.Family, why string) {
	peak, seen := math.Inf(-1), false
	for _, v := range temp {
		if v >= arrest.MinValidC && v <= arrest.MaxValidC && v > peak {
			peak, seen = v, true
		}
	}
	switch {
	case !seen:
		return arrest.FamilyIron, "the curve has no reading in the thermocouple's range"
	case peak >= ironPourC:
		f = arrest.FamilyIron
	case peak >= aluminiumPourC:
		f = arrest.FamilyAluminum
	default:
		f = arrest.FamilyEutectic
	}
	return f, fmt.Sprintf("recognised from its highest reading, %.0f °C (iron from %.0f °C, aluminium from %.0f °C)", peak, ironPourC, aluminiumPourC)
}
