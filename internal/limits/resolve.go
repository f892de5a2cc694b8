package limits

import (
	"math"
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
	// Detect are the detector options for the alloy (Live false): the
	// family and its hints, with the entry's own windows.
	Detect arrest.Options
}

// Family is the detector family used.
func (r Resolution) Family() arrest.Family { return r.Detect.Family }

// Known reports whether the book has an entry for the alloy.
func (r Resolution) Known() bool { return r.Entry != nil }

// Windows of the iron eutectic around the stable (Tst) and metastable
// (Tmst) eutectics of the analysis (metal.Eutectic with the entry's
// coefficients), °C. No graphite eutectic grows above the equilibrium Tst:
// the top is the calculated Tst plus ironEutecticAboveTst for the
// uncertainty of its recalled coefficients. A chilled normal cup may freeze
// below Tmst, and measured metastable arrests sit 5–15 °C below calculated
// ones (Regordosa et al., Int. J. Metalcasting, c. 2020): the bottom is
// the offset-corrected Tmst less ironEutecticBelowTmst. A tellurium cup's
// white arrest lies near Tmst, so its window ends whiteEutecticAboveTmst
// above the calculated Tmst: a graphite arrest there means the cup did not
// freeze white. (Practice; margins a shop may replace with detect.eutectic_c.)
const (
	ironEutecticAboveTst   = 5.0
	ironEutecticBelowTmst  = 20.0
	whiteEutecticAboveTmst = 10.0
)

// Check cups: the plateau is searched within fixedPointWindowC or
// fixedPointWindowFrac of the fixed point, whichever is wider, so that a
// thermocouple well out of tolerance is still reported (and fails) rather
// than losing its plateau (practice).
const (
	fixedPointWindowC    = 25.0
	fixedPointWindowFrac = 0.05
)

// Resolve resolves an alloy name against the book: the entry found by
// Book.Alloy decides the family (its `family` key), else the name rule of
// Family. A nil book resolves by the name rule alone. The detector hints
// start from arrest.FamilyHints(family) and take from the entry:
//
//   - detect.pour_min_c → MinPourC (the pour trigger);
//   - detect.liquidus_c → the liquidus window;
//   - detect.eutectic_c → the eutectic window, and its top as EutecticTopC
//     (an arrest above it is a primary arrest; not for a check cup, whose
//     first arrest is its plateau);
//   - reference.fixed_point_c → FixedPointC, and for a check cup without
//     detect.eutectic_c the plateau window around it (see fixedPointWindowC);
//   - iron and white cups without detect.eutectic_c: the eutectic window
//     from the entry's nominal chemistry (see ironEutecticAboveTst), or the
//     sample's own (WithChemistry);
//   - a family without its own pour trigger in the entry (eutectic, pure)
//     takes the bottom of its first window, the lowest reading a pour
//     must pass to show that arrest.
func (b *Book) Resolve(alloy string) Resolution {
	r := Resolution{Name: strings.TrimSpace(alloy)}
	if a, ok := b.Alloy(alloy); ok {
		r.Entry = a
	}
	fam := Family(r.Name)
	if r.Entry != nil && r.Entry.Family != "" {
		fam = r.Entry.Family
	}
	h := arrest.FamilyHints(fam)
	if a := r.Entry; a != nil {
		d := a.Detect
		if w, ok := window(d.LiquidusC); ok {
			h.Liquidus = w
		}
		if w, ok := window(d.EutecticC); ok {
			h.Eutectic = w
			if fam != arrest.FamilyPure {
				h.EutecticTopC = w.HiC
			}
		}
		if fp := a.Reference.FixedPointC; fp != nil && fam == arrest.FamilyPure {
			h.FixedPointC = *fp
			if h.Eutectic.Open() {
				half := math.Max(fixedPointWindowC, fixedPointWindowFrac*math.Abs(*fp))
				h.Eutectic = arrest.Range{LoC: *fp - half, HiC: *fp + half}
			}
		}
		switch {
		case d.PourMinC != nil:
			h.MinPourC = *d.PourMinC
		case fam == arrest.FamilyEutectic || fam == arrest.FamilyPure:
			for _, w := range []arrest.Range{h.Liquidus, h.Eutectic} {
				if !w.Open() {
					h.MinPourC = w.LoC
					break
				}
			}
		}
	}
	r.Detect = arrest.Options{Family: fam, Hints: h}
	if r.Entry != nil {
		r = r.WithChemistry(r.Entry.Chemistry)
	}
	return r
}

// WithChemistry returns the resolution for a sample of the given analysis
// (wt % by lower-case element symbol, e.g. the entry's nominal chemistry
// overlaid with the curve file's "# si_pct:" lines): for an iron or white
// cup whose entry sets no detect.eutectic_c, the eutectic window is worked
// out from its silicon and phosphorus. Without silicon, or for other
// families, the resolution is returned unchanged.
func (r Resolution) WithChemistry(chem map[string]float64) Resolution {
	fam := r.Family()
	if fam != arrest.FamilyIron && fam != arrest.FamilyWhite {
		return r
	}
	if r.Entry != nil && r.Entry.Detect.EutecticC != nil {
		return r
	}
	si, ok := chem["si"]
	if !ok {
		return r
	}
	p := chem["p"]
	e := r.Entry.Eutectic()
	_, offMst := r.Entry.Offsets()
	tst, tmst := e.Stable(si, p), e.Metastable(si, p)
	w := arrest.Range{LoC: tmst - offMst - ironEutecticBelowTmst, HiC: tst + ironEutecticAboveTst}
	if fam == arrest.FamilyWhite {
		w.HiC = tmst + whiteEutecticAboveTmst
	}
	if !(w.LoC < w.HiC) || math.IsNaN(w.LoC) || math.IsNaN(w.HiC) {
		return r
	}
	r.Detect.Hints.Eutectic = w
	return r
}

// window reads a [low, high] pair (validated on load).
func window(v []float64) (arrest.Range, bool) {
	if len(v) != 2 || !(v[0] < v[1]) {
		return arrest.Range{}, false
	}
	return arrest.Range{LoC: v[0], HiC: v[1]}, true
}
