package sim

import (
	"reflect"
	"slices"
)

// Saved is a run of the cup model kept at its last step before any part
// of the cup fell below the eutectic growth reference: up to that step no
// eutectic nucleus was born and no eutectic grew (births needs a positive
// undercooling, growth a nucleus), so the eutectic's law and its growth
// reference took no part in it. A run whose model differs from the saved
// one only in its eutectic law, with a growth reference no higher (an
// inoculant multiplies A, a modifier lowers the reference), is the same up
// to that step, step for step, and resumes from it (Saved.Curve): a
// prediction's runs skip the cooling of the liquid and the primary phase's
// freezing they share. It holds the model's state and the fine curve up to
// that step.
type Saved struct {
	key           cup     // the resolved model with its eutectic cleared (eutecticFree)
	atC           float64 // the saved run's eutectic growth reference, °C
	fillS, lagS   float64 // the fill time and the thermocouple's time constant, s
	offset        float64 // the pour on the logger's clock, s
	s             state
	zones         []lump    // radial cup: the zones
	primMax       []float64 // radial cup: the largest primary undercooling of each zone, K
	eutMax        []float64 // radial cup: the largest eutectic undercooling of each zone, K
	n             int       // fine entries up to and including the saved step
	f             fine      // the fine curve of those entries
	done, partial bool      // done: the saved step is final; partial: nothing saved yet
}

// eutecticFree is the model with what only the eutectic uses cleared: the
// key two runs must share for one to resume from the other.
func eutecticFree(m cup) cup {
	m.eutectic, m.eutecticLaw = 0, law{}
	m.rings, m.radialLast, m.last = nil, nil, state{}
	m.from, m.save = nil, nil // the run's own bookkeeping
	return m
}

// keep saves the state s (and the radial cup's zones) while no part of
// the cup has yet had a positive eutectic undercooling (the largest one
// reached, eutMax, is still 0 in every part: no nucleus, no growth, at
// every evaluation of every step so far, the radial cup's substeps
// included), and stops at the first step where one has. emitted is how
// many fine entries the run has emitted so far (s included).
func (sv *Saved) keep(s *state, rs *radialState, emitted int) {
	if sv == nil || sv.done {
		return
	}
	free := s.eutMax == 0
	if rs != nil {
		for _, u := range rs.eutMax {
			free = free && u == 0
		}
	}
	if !free {
		sv.done = true
		return
	}
	sv.s, sv.n = *s, emitted
	if rs != nil {
		sv.zones = append(sv.zones[:0], rs.zones...)
		sv.primMax = append(sv.primMax[:0], rs.primMax...)
		sv.eutMax = append(sv.eutMax[:0], rs.eutMax...)
	}
	sv.partial = false
}

// fits reports whether a run of model m (fill time fillS, lag lagS, the
// pour at offset, running to maxS) may resume from sv.
func (sv *Saved) fits(m *cup, fillS, lagS, offset, maxS float64) bool {
	return sv != nil && !sv.partial && m.eutectic <= sv.atC && fillS == sv.fillS && lagS == sv.lagS && offset == sv.offset &&
		sv.s.t < maxS-m.step/2 && reflect.DeepEqual(eutecticFree(*m), sv.key)
}

// resumeFine is the fine curve of a resumed run: the saved prefix copied
// into arrays of capacity est.
func (sv *Saved) resumeFine(est int) fine {
	cp := func(a []float64) []float64 {
		if a == nil {
			return nil
		}
		return append(make([]float64, 0, max(est, len(a))), a...)
	}
	f := sv.f
	f.tc, f.wallTC, f.temp, f.shell, f.fs, f.fsCore = cp(f.tc), cp(f.wallTC), cp(f.temp), cp(f.shell), cp(f.fs), cp(f.fsCore)
	return f
}

// cut keeps the first n entries of the run's fine curve f as the saved
// prefix (the run's arrays are not written again).
func (sv *Saved) cut(f fine) {
	n := sv.n
	c := func(a []float64) []float64 {
		if a == nil {
			return nil
		}
		return slices.Clip(a[:n])
	}
	sv.f = f
	sv.f.tc, sv.f.wallTC, sv.f.temp, sv.f.shell, sv.f.fs, sv.f.fsCore = c(f.tc), c(f.wallTC), c(f.temp), c(f.shell), c(f.fs), c(f.fsCore)
}

// CurveSaved is Curve, and also returns the run kept at its last step
// before any part of the cup fell to its eutectic growth reference (Saved),
// for runs that differ from it only in their eutectic to resume from.
func CurveSaved(p Params, k Kinetics, times []float64) ([]float64, Truth, *Saved, error) {
	sv := &Saved{partial: true}
	out, tr, _, err := curve(p, k, times, nil, sv)
	if err != nil {
		return nil, Truth{}, nil, err
	}
	return out, tr, sv, nil
}

// Curve is the package's Curve of p and k, resumed from the saved run
// when their model differs from its only in the eutectic's law and in a
// growth reference no higher than its (an inoculant's or a modifier's
// effect: Params.Additions, Kinetics.Eutectic, Kinetics.EutecticC), with the
// same pour, fill and lag; any other run is made in full. The result is
// the full run's (TestResumedRunIsTheFullRun).
func (sv *Saved) Curve(p Params, k Kinetics, times []float64) ([]float64, Truth, error) {
	out, tr, _, err := curve(p, k, times, sv, nil)
	return out, tr, err
}
