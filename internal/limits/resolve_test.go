package limits

import (
	"errors"
	"math"
	"strings"
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
		if r.Family() != c.fam || (r.Entry != nil) != c.entry || r.Known() != c.entry {
			t.Errorf("Resolve(%q) = family %q, entry %v; want %q, %v", c.alloy, r.Family(), r.Entry != nil, c.fam, c.entry)
		}
		if r.Detect.Hints != arrest.FamilyHints(c.fam) {
			t.Errorf("Resolve(%q): hints %+v, want the family's own (the entry sets no windows)", c.alloy, r.Detect.Hints)
		}
	}
	var nilBook *Book
	if got := nilBook.Resolve("a356").Family(); got != arrest.FamilyIron {
		t.Errorf("nil book: Resolve(a356) = %q, want the name rule's iron", got)
	}
}

// TestResolveWindows: an entry's detect table and reference fixed point
// become the detector's hints, over the family's own; iron windows come
// from the chemistry and the eutectic model (Tst = 1153 + 5.25·Si −
// 14.88·P, Tmst = 1148 − 15·Si, the package metal defaults, memory).
func TestResolveWindows(t *testing.T) {
	const text = `version = "t"
[alloy.zn-al4]
family = "eutectic"
[alloy.zn-al4.detect]
pour_min_c = 400.0
liquidus_c = [383.0, 395.0]
eutectic_c = [370.0, 383.0]

[alloy.sn-check]
family = "eutectic"
[alloy.sn-check.detect]
eutectic_c = [220.0, 235.0]

[alloy.tin-cup]
family = "pure"
[alloy.tin-cup.reference]
fixed_point_c = 231.928

[alloy.copper-cup]
family = "pure"
[alloy.copper-cup.reference]
fixed_point_c = 1084.62

[alloy.gg-shop]
family = "iron"
[alloy.gg-shop.chemistry]
si = 2.0
p = 0.05
[alloy.gg-shop.reference]
metastable_offset_c = 8.0

[alloy.tellurium]
family = "white"
[alloy.tellurium.chemistry]
si = 2.0

[alloy.gg-fixed]
family = "iron"
[alloy.gg-fixed.chemistry]
si = 2.0
[alloy.gg-fixed.detect]
eutectic_c = [1120.0, 1160.0]
`
	b, err := Parse([]byte(text), "t.toml")
	if err != nil {
		t.Fatal(err)
	}
	inf := math.Inf(1)
	fam := func(f arrest.Family) arrest.Hints { return arrest.FamilyHints(f) }
	with := func(h arrest.Hints, f func(*arrest.Hints)) arrest.Hints { f(&h); return h }
	for _, c := range []struct {
		alloy string
		want  arrest.Hints
	}{
		{"zn-al4", with(fam(arrest.FamilyEutectic), func(h *arrest.Hints) {
			h.MinPourC, h.EutecticTopC = 400, 383
			h.Liquidus, h.Eutectic = arrest.Range{LoC: 383, HiC: 395}, arrest.Range{LoC: 370, HiC: 383}
		})},
		// no pour trigger given: the bottom of its first window
		{"sn-check", with(fam(arrest.FamilyEutectic), func(h *arrest.Hints) {
			h.MinPourC, h.EutecticTopC, h.Eutectic = 220, 235, arrest.Range{LoC: 220, HiC: 235}
		})},
		// check cups: the plateau within ±max(25 °C, 5 %) of the ITS-90 point
		// (Preston-Thomas, Metrologia 27 (1990) 3), first arrest the plateau
		{"tin-cup", with(fam(arrest.FamilyPure), func(h *arrest.Hints) {
			h.FixedPointC, h.Eutectic, h.MinPourC, h.EutecticTopC = 231.928, arrest.Range{LoC: 206.928, HiC: 256.928}, 206.928, inf
		})},
		{"copper-cup", with(fam(arrest.FamilyPure), func(h *arrest.Hints) {
			h.FixedPointC, h.Eutectic, h.MinPourC = 1084.62, arrest.Range{LoC: 1084.62 - 54.231, HiC: 1084.62 + 54.231}, 1084.62-54.231
		})},
		// Tst = 1153 + 10.5 − 0.744 = 1162.756; Tmst = 1118; window
		// [1118 − 8 − 20, 1162.756 + 5]
		{"gg-shop", with(fam(arrest.FamilyIron), func(h *arrest.Hints) { h.Eutectic = arrest.Range{LoC: 1090, HiC: 1167.756} })},
		// tellurium cup: ends 10 °C above the calculated Tmst
		{"tellurium", with(fam(arrest.FamilyWhite), func(h *arrest.Hints) { h.Eutectic = arrest.Range{LoC: 1098, HiC: 1128} })},
		{"gg-fixed", with(fam(arrest.FamilyIron), func(h *arrest.Hints) { h.Eutectic, h.EutecticTopC = arrest.Range{LoC: 1120, HiC: 1160}, 1160 })},
	} {
		got := b.Resolve(c.alloy).Detect.Hints
		if !hintsNear(got, c.want, 1e-9) {
			t.Errorf("%s: hints\n%+v\nwant\n%+v", c.alloy, got, c.want)
		}
	}
	// The sample's own analysis moves an iron window; an explicit one stays.
	r := b.Resolve("gg-shop").WithChemistry(map[string]float64{"si": 2.4, "p": 0.05})
	if w := r.Detect.Hints.Eutectic; math.Abs(w.LoC-(1148-36-8-20)) > 1e-9 || math.Abs(w.HiC-(1153+12.6-0.744+5)) > 1e-9 {
		t.Errorf("sample chemistry: window %+v", w)
	}
	if got := b.Resolve("gg-fixed").WithChemistry(map[string]float64{"si": 2.4}).Detect.Hints.Eutectic; got != (arrest.Range{LoC: 1120, HiC: 1160}) {
		t.Errorf("explicit window moved by chemistry: %+v", got)
	}
	// An iron alloy named by the rule alone, with the sample's silicon.
	var none *Book
	if got := none.Resolve("compacted-iron").WithChemistry(map[string]float64{"si": 2.0}).Detect.Hints.Eutectic; math.Abs(got.HiC-(1153+10.5+5)) > 1e-9 {
		t.Errorf("no entry: window %+v", got)
	}
}

func hintsNear(a, b arrest.Hints, tol float64) bool {
	n := func(x, y float64) bool { return x == y || math.Abs(x-y) <= tol }
	return n(a.MinPourC, b.MinPourC) && n(a.EutecticTopC, b.EutecticTopC) && n(a.SmoothS, b.SmoothS) &&
		n(a.SlopeS, b.SlopeS) && n(a.ConfirmS, b.ConfirmS) && n(a.FixedPointC, b.FixedPointC) &&
		n(a.Liquidus.LoC, b.Liquidus.LoC) && n(a.Liquidus.HiC, b.Liquidus.HiC) &&
		n(a.Eutectic.LoC, b.Eutectic.LoC) && n(a.Eutectic.HiC, b.Eutectic.HiC)
}

// TestDetectValidation: windows are two readings low < high, a pour trigger
// a reading, and a "eutectic" family alloy must give its eutectic window.
func TestDetectValidation(t *testing.T) {
	for _, c := range []struct{ body, key, msg string }{
		{"family = \"eutectic\"\n", "alloy.x.detect", "needs detect.eutectic_c"},
		{"family = \"eutectic\"\n[alloy.x.detect]\neutectic_c = [390.0, 380.0]\n", "alloy.x.detect.eutectic_c", "low end must be below"},
		{"family = \"eutectic\"\n[alloy.x.detect]\neutectic_c = [380.0]\n", "alloy.x.detect.eutectic_c", "two temperatures"},
		{"family = \"eutectic\"\n[alloy.x.detect]\neutectic_c = [380.0, 9000.0]\n", "alloy.x.detect.eutectic_c", "not within the readings"},
		{"family = \"eutectic\"\n[alloy.x.detect]\neutectic_c = [370.0, 383.0]\nliquidus_c = [360.0, 380.0]\n", "alloy.x.detect.liquidus_c", "must reach above"},
		{"family = \"iron\"\n[alloy.x.detect]\npour_min_c = -300.0\n", "alloy.x.detect.pour_min_c", "is not a reading"},
	} {
		_, err := Parse([]byte("version = \"t\"\n[alloy.x]\n"+c.body), "t.toml")
		var le *Error
		if !errors.As(err, &le) || le.Key != c.key || !strings.Contains(err.Error(), c.msg) {
			t.Errorf("%q: %v; want key %s, %q", c.body, err, c.key, c.msg)
		}
	}
}
