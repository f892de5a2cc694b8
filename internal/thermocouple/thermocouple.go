// Package thermocouple holds the ITS-90 thermocouple reference functions for
// the letter-designated types B, E, J, K, N, R, S and T, and cold-junction
// compensation.
//
// Source: NIST Monograph 175 (Burns et al., 1993) and NIST Standard Reference
// Database 60 (ITS-90 Thermocouple Database). The coefficients are embedded
// verbatim from its90.toml in this directory (a copy of the project's shared
// coefficient file) and parsed once, on first use, with BurntSushi/toml.
//
// Units: temperatures in °C (t90), EMF in mV. The reference functions give
// the EMF E(t) of a thermocouple whose reference (cold) junction is at 0 °C:
//
//	E(t) = Σ c_i t^i                       (all types and ranges)
//	     + a0·exp(a1·(t − a2)²)            (type K above 0 °C only)
//
// The published inverse polynomials t = Σ d_i E^i approximate the inverse
// to within a few hundredths of a degree (up to 0.06 °C). Temp uses them
// only as the starting point of safeguarded Newton steps on the direct
// function, so that t(E(t)) returns t within 0.001 °C (in practice to about
// 1e-7 °C). Below the published inverse ranges (types E, K, N, T below
// −200 °C) the same bracketed solve starts from a straight-line guess.
//
// Cold-junction compensation (the usual practice; docs/sources.md §7): a
// thermocouple whose measuring junction is at t and whose cold junction is at
// t_cj produces E(t) − E(t_cj); so EMF returns that difference and Temp
// solves E(t) = E_measured + E(t_cj).
//
// Values outside a type's reference range are refused with a *RangeError,
// never extrapolated.
//
// Type B is double-valued near room temperature: E_B falls from 0 mV at 0 °C
// to a minimum of about −0.0026 mV near 21 °C and returns to 0 mV near
// 42 °C. Temp therefore works on the monotonic branch only and refuses
// results below 50 °C (E_B(50 °C) = 0.002 mV, NIST SRD 60): between 42 °C
// and 50 °C the EMF changes by less than 2 µV, far inside any instrument's
// noise, so no temperature there could be told apart. EMF (the direct
// function) covers type B's whole range 0 °C to 1820 °C.
package thermocouple

import (
	_ "embed"
	"fmt"
	"math"
	"strings"
	"sync"

	"github.com/BurntSushi/toml"
)

//go:embed its90.toml
var its90TOML string

// typeBInverseMinC is the lowest temperature Temp returns for type B; see
// the package documentation.
const typeBInverseMinC = 50.0

// names lists the types in the order Types returns them.
var names = []string{"B", "E", "J", "K", "N", "R", "S", "T"}

// Type is one thermocouple type. Get one from Lookup or Types; the zero
// Type is not usable and its methods return errors.
type Type struct{ s *spec }

// segment is one range of the direct reference function.
type segment struct {
	lo, hi float64   // °C
	c      []float64 // c0..cn, mV
	exp    bool      // type K above 0 °C: add a0·exp(a1·(t−a2)²)
	a0     float64
	a1     float64
	a2     float64
}

// invSegment is one range of the published inverse polynomial.
type invSegment struct {
	eLo, eHi float64   // mV
	d        []float64 // d0..dn, °C
}

type spec struct {
	name    string
	direct  []segment
	inverse []invSegment
	tMin    float64 // lowest temperature of the direct function, °C
	tMax    float64 // highest temperature, °C
	invMin  float64 // lowest temperature Temp returns, °C
	eInvMin float64 // E(invMin), mV
	eMax    float64 // E(tMax), mV
}

type tomlDirect struct {
	TMinC float64   `toml:"t_min_c"`
	TMaxC float64   `toml:"t_max_c"`
	C     []float64 `toml:"c"`
	A0    *float64  `toml:"a0"`
	A1    *float64  `toml:"a1"`
	A2    *float64  `toml:"a2"`
}

type tomlInverse struct {
	EMinMV  float64   `toml:"e_min_mv"`
	EMaxMV  float64   `toml:"e_max_mv"`
	TMinC   float64   `toml:"t_min_c"`
	TMaxC   float64   `toml:"t_max_c"`
	ErrMinC float64   `toml:"err_min_c"`
	ErrMaxC float64   `toml:"err_max_c"`
	D       []float64 `toml:"d"`
}

type tomlType struct {
	Direct  []tomlDirect  `toml:"direct"`
	Inverse []tomlInverse `toml:"inverse"`
}

// table parses the embedded coefficients once. A failure is a defect of
// the embedded file, caught by the package tests, so it panics.
var table = sync.OnceValue(func() map[string]*spec {
	specs, err := parse(its90TOML)
	if err != nil {
		panic("thermocouple: embedded its90.toml: " + err.Error())
	}
	return specs
})

func parse(text string) (map[string]*spec, error) {
	var raw map[string]tomlType
	md, err := toml.Decode(text, &raw)
	if err != nil {
		return nil, err
	}
	if und := md.Undecoded(); len(und) > 0 {
		return nil, fmt.Errorf("unknown key %s", und[0])
	}
	specs := make(map[string]*spec, len(names))
	for _, n := range names {
		rt, ok := raw[n]
		if !ok || len(rt.Direct) == 0 {
			return nil, fmt.Errorf("type %s: no direct function", n)
		}
		s := &spec{name: n}
		for i, d := range rt.Direct {
			if len(d.C) == 0 || d.TMaxC <= d.TMinC {
				return nil, fmt.Errorf("type %s: direct range %d is empty", n, i)
			}
			if i > 0 && d.TMinC != rt.Direct[i-1].TMaxC {
				return nil, fmt.Errorf("type %s: direct range %d does not continue range %d", n, i, i-1)
			}
			seg := segment{lo: d.TMinC, hi: d.TMaxC, c: d.C}
			if d.A0 != nil || d.A1 != nil || d.A2 != nil {
				if d.A0 == nil || d.A1 == nil || d.A2 == nil {
					return nil, fmt.Errorf("type %s: direct range %d: a0, a1, a2 come together", n, i)
				}
				seg.exp, seg.a0, seg.a1, seg.a2 = true, *d.A0, *d.A1, *d.A2
			}
			s.direct = append(s.direct, seg)
		}
		for _, inv := range rt.Inverse {
			s.inverse = append(s.inverse, invSegment{eLo: inv.EMinMV, eHi: inv.EMaxMV, d: inv.D})
		}
		s.tMin = s.direct[0].lo
		s.tMax = s.direct[len(s.direct)-1].hi
		s.invMin = s.tMin
		if n == "B" {
			s.invMin = typeBInverseMinC
		}
		s.eInvMin = s.ref(s.invMin)
		s.eMax = s.ref(s.tMax)
		specs[n] = s
	}
	return specs, nil
}

// Lookup returns the thermocouple type named by a letter, case-insensitive;
// "type K" and "K" both work.
func Lookup(name string) (Type, error) {
	n := strings.ToUpper(strings.TrimSpace(name))
	n = strings.TrimSpace(strings.TrimPrefix(n, "TYPE"))
	if s, ok := table()[n]; ok {
		return Type{s}, nil
	}
	return Type{}, fmt.Errorf("thermocouple: unknown type %q (known: %s)", name, strings.Join(names, " "))
}

// Types lists every type, B E J K N R S T.
func Types() []Type {
	t := table()
	out := make([]Type, len(names))
	for i, n := range names {
		out[i] = Type{t[n]}
	}
	return out
}

// Name is the type's letter, e.g. "K".
func (t Type) Name() string {
	if t.s == nil {
		return ""
	}
	return t.s.name
}

// String is "type K".
func (t Type) String() string { return "type " + t.Name() }

// TempRange is the range of the reference function in °C: the temperatures
// EMF accepts for the measuring and the cold junction (e.g. −270 °C to
// 1372 °C for type K).
func (t Type) TempRange() (minC, maxC float64) {
	if t.s == nil {
		return math.NaN(), math.NaN()
	}
	return t.s.tMin, t.s.tMax
}

// InverseRange is the range of temperatures Temp returns, °C. It equals
// TempRange except for type B (50 °C to 1820 °C; see the package
// documentation).
func (t Type) InverseRange() (minC, maxC float64) {
	if t.s == nil {
		return math.NaN(), math.NaN()
	}
	return t.s.invMin, t.s.tMax
}

// EMFRange is the range of total EMF, mV referred to 0 °C, that Temp
// converts: E at the ends of InverseRange.
func (t Type) EMFRange() (minMV, maxMV float64) {
	if t.s == nil {
		return math.NaN(), math.NaN()
	}
	return t.s.eInvMin, t.s.eMax
}

// RangeError reports a value outside a type's reference range.
type RangeError struct {
	Type     string  // "K"
	Quantity string  // "temperature", "cold junction", "EMF"
	Value    float64 // the refused value (for EMF, the total with the cold junction)
	Min, Max float64 // the accepted range, in Unit
	Unit     string  // "°C" or "mV"
	Note     string  // more context, may be empty
}

func (e *RangeError) Error() string {
	var b strings.Builder
	fmt.Fprintf(&b, "thermocouple: type %s: %s %s %s is outside the reference range %s %s to %s %s",
		e.Type, e.Quantity, fmtNum(e.Value), e.Unit, fmtNum(e.Min), e.Unit, fmtNum(e.Max), e.Unit)
	if e.Note != "" {
		b.WriteString(" (")
		b.WriteString(e.Note)
		b.WriteString(")")
	}
	return b.String()
}

func fmtNum(v float64) string { return fmt.Sprintf("%.6g", v) }

func (t Type) check(quantity string, c float64) error {
	if t.s == nil {
		return fmt.Errorf("thermocouple: zero Type (use Lookup)")
	}
	if math.IsNaN(c) || c < t.s.tMin || c > t.s.tMax {
		return &RangeError{Type: t.s.name, Quantity: quantity, Value: c, Min: t.s.tMin, Max: t.s.tMax, Unit: "°C"}
	}
	return nil
}

// EMF is the EMF in mV of a thermocouple with its measuring junction at
// tempC and its cold junction at cjC (both °C): E(tempC) − E(cjC), the
// ITS-90 reference function referred to 0 °C. Both temperatures must lie in
// TempRange.
func (t Type) EMF(tempC, cjC float64) (float64, error) {
	if err := t.check("temperature", tempC); err != nil {
		return 0, err
	}
	if err := t.check("cold junction", cjC); err != nil {
		return 0, err
	}
	return t.s.ref(tempC) - t.s.ref(cjC), nil
}

// Temp is the temperature in °C of the measuring junction of a thermocouple
// that gives emfMV (mV) with its cold junction at cjC (°C): the solution t
// of E(t) = emfMV + E(cjC). The result lies in InverseRange; an EMF whose
// total falls outside EMFRange is refused with a *RangeError.
func (t Type) Temp(emfMV, cjC float64) (float64, error) {
	if err := t.check("cold junction", cjC); err != nil {
		return 0, err
	}
	s := t.s
	e := emfMV
	if cjC != 0 {
		e += s.ref(cjC)
	}
	if math.IsNaN(e) || e < s.eInvMin-emfSlack || e > s.eMax+emfSlack {
		re := &RangeError{Type: s.name, Quantity: "EMF", Value: e, Min: s.eInvMin, Max: s.eMax, Unit: "mV",
			Note: fmt.Sprintf("%s °C to %s °C", fmtNum(s.invMin), fmtNum(s.tMax))}
		if cjC != 0 {
			re.Note = fmt.Sprintf("%s mV measured plus %s mV for the cold junction at %s °C; %s", fmtNum(emfMV), fmtNum(e-emfMV), fmtNum(cjC), re.Note)
		}
		if s.name == "B" {
			re.Note += "; type B is double-valued below about 42 °C and too flat to invert below 50 °C"
		}
		return 0, re
	}
	return s.solve(min(max(e, s.eInvMin), s.eMax)), nil
}

// emfSlack admits totals that miss a range end only by the rounding of
// emfMV + E(cjC) (a round trip from EMF at the range end).
const emfSlack = 1e-9 // mV

// ref is the reference function E(t), mV, for t in [tMin, tMax].
func (s *spec) ref(t float64) float64 {
	seg := s.segment(t)
	e := horner(seg.c, t)
	if seg.exp {
		d := t - seg.a2
		e += seg.a0 * math.Exp(seg.a1*d*d)
	}
	return e
}

// refSlope is E(t), mV, and its slope dE/dt, mV/°C, in one pass.
func (s *spec) refSlope(t float64) (e, slope float64) {
	seg := s.segment(t)
	c := seg.c
	for i := len(c) - 1; i >= 1; i-- {
		e = e*t + c[i]
		slope = slope*t + e
	}
	e = e*t + c[0]
	if seg.exp {
		x := t - seg.a2
		g := seg.a0 * math.Exp(seg.a1*x*x)
		e += g
		slope += g * 2 * seg.a1 * x
	}
	return e, slope
}

func (s *spec) segment(t float64) *segment {
	for i := range s.direct {
		if t <= s.direct[i].hi {
			return &s.direct[i]
		}
	}
	return &s.direct[len(s.direct)-1]
}

func horner(c []float64, x float64) float64 {
	var v float64
	for i := len(c) - 1; i >= 0; i-- {
		v = v*x + c[i]
	}
	return v
}

// newtonDoneC ends the Newton steps: after a step s the error left is
// about K·s² with K = |d²E/dt² / (2·dE/dt)|, at most 0.2 /°C inside the ranges (2.2
// /°C across type N's joint at 0 °C; measured every 0.01 °C), so a step
// under 1e-4 °C leaves less than 3e-8 °C. From the published inverse (error
// ≤ 0.06 °C) this takes two evaluations of E.
const newtonDoneC = 1e-4

// solve finds t in [invMin, tMax] with ref(t) = e, for e in
// [eInvMin, eMax], by Newton steps from the published inverse polynomial,
// kept inside a shrinking bracket (bisection where a step would leave it).
// The reference functions increase monotonically over [invMin, tMax]
// (checked by the tests every 0.01 °C).
func (s *spec) solve(e float64) float64 {
	lo, hi := s.invMin, s.tMax
	t := math.NaN()
	for _, inv := range s.inverse {
		if e >= inv.eLo && e <= inv.eHi {
			t = horner(inv.d, e)
			break
		}
	}
	if !(t > lo && t < hi) {
		t = lo + (hi-lo)*(e-s.eInvMin)/(s.eMax-s.eInvMin)
	}
	for range 200 {
		v, slope := s.refSlope(t)
		f := v - e
		if f == 0 {
			return t
		}
		if f > 0 {
			hi = t
		} else {
			lo = t
		}
		next := t - f/slope
		switch {
		case !(next >= lo && next <= hi):
			next = lo + (hi-lo)/2 // bisection
		case math.Abs(next-t) < newtonDoneC:
			return next
		}
		if hi-lo < 1e-10 {
			return next
		}
		t = next
	}
	return t
}
