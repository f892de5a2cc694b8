// Package arrest finds the characteristic points of a thermal-analysis cup
// curve: pour peak, liquidus arrest, eutectic minimum and maximum,
// recalescence, start of eutectic freezing and end of freezing
// (definitions in docs/analysis.md).
//
// The package is pure: slices of seconds and degrees Celsius in, a Result
// out. It never touches a file, port, clock or terminal, so the same call
// analyses a finished curve and the growing curve of a live sample.
package arrest

// Family selects the detection hints for an alloy family.
type Family string

// Alloy families the detector knows.
const (
	FamilyIron     Family = "iron"     // grey, ductile and compacted cast iron (normal cup)
	FamilyWhite    Family = "white"    // cast iron in a tellurium (white-freezing) cup
	FamilyAluminum Family = "aluminum" // Al-Si casting alloys
	FamilyPure     Family = "pure"     // a pure metal (fixed-point check cup)
	// FamilyEutectic is any other alloy with a primary arrest and one
	// eutectic (zinc, magnesium, tin-base, copper-base): its windows come
	// from its limits entry (limits.Book.Resolve).
	FamilyEutectic Family = "eutectic"
)

// Point is one characteristic point of a curve. A point that was not found
// has OK false; its other fields are then meaningless and it is reported as
// null, never as a guess.
//
// On a growing curve (Options.Live) a point may be shown before the shape
// of its arrest is complete: it is then Provisional, and may still move or
// vanish (an arrest without recalescence taken for the eutectic may turn
// out a shoulder before the centre's own recalescence; a recalescence's
// minimum may turn out a primary arrest's). Once a point is shown without
// Provisional it never changes. The offline answer (Live false) has no
// provisional point.
type Point struct {
	TempC       float64 // smoothed temperature at the point, °C
	TimeS       float64 // time of the point, s, on the curve's own time axis
	OK          bool
	Provisional bool // live only: shown before its arrest's shape is complete
}

// Problem is a plain-language finding that may make a curve untrustworthy.
type Problem struct {
	Code    string // stable machine code, e.g. "no-pour", "tc-fault"
	Message string // plain words for the operator
	// Fatal problems make the verdict invalid.
	Fatal bool
}

// Result is the outcome of analysing one curve (or the prefix of a growing
// one). Temperatures in °C, times in s, rates in °C/s.
type Result struct {
	Samples int     // readings analysed (after removing unusable ones)
	RateHz  float64 // median sample rate

	PourPeak    Point // highest reading of the pour transient
	LiquidusMin Point // primary undercooling minimum (only when the primary arrest recalesces)
	Liquidus    Point // liquidus arrest (growth temperature when it recalesces)
	// EutecticStart is the start of eutectic freezing: T at the largest
	// T″ on the rise of T' into the eutectic arrest (docs/analysis.md).
	EutecticStart Point
	EutecticMin   Point // undercooled eutectic
	EutecticMax   Point // eutectic maximum after recalescence
	Solidus       Point // end of freezing

	// Recalescence is EutecticMax − EutecticMin, 0 where there is none;
	// valid only when RecalescenceOK.
	Recalescence   float64
	RecalescenceOK bool

	// LiquidusRecalescence is Liquidus − LiquidusMin where the primary
	// arrest recalesces, 0 where it does not; valid with Liquidus.OK.
	LiquidusRecalescence float64

	PlateauS       float64 // eutectic plateau duration, s (0 when unknown)
	CoolingRateCps float64 // cooling rate of the liquid before the liquidus or eutectic, °C/s (negative while cooling; 0 when unknown)
	FreezingTimeS  float64 // from the first arrest to the end of freezing, s (0 when unknown)

	Despiked int // single-sample spikes removed

	// Complete is true once the end of freezing has settled (or the
	// analysis has decided the curve will never give one).
	Complete bool

	Problems []Problem
}

// Invalid reports whether any problem makes the curve untrustworthy.
func (r *Result) Invalid() bool {
	for _, p := range r.Problems {
		if p.Fatal {
			return true
		}
	}
	return false
}

// confirm clears every point's Provisional mark.
func (r *Result) confirm() {
	for _, p := range []*Point{&r.PourPeak, &r.LiquidusMin, &r.Liquidus, &r.EutecticStart, &r.EutecticMin, &r.EutecticMax, &r.Solidus} {
		p.Provisional = false
	}
}
