package solidpath

import (
	"errors"
	"math"

	"github.com/undercool-foundry/undercool/internal/arrest"
)

// Keys of the characteristic points EventsOf marks, in the record's style
// (fs_at_<key>).
const (
	KeyLiquidus      = "liquidus"
	KeyEutecticStart = "eutectic_start"
	KeyEutecticMin   = "eutectic_min"
	KeyEutecticMax   = "eutectic_max"
	KeyEndOfFreezing = "end_of_freezing"
)

// EventsOf takes the events and marks of a cup from the characteristic
// points package arrest found on its centre curve: the pour peak, the first
// arrest (primary undercooling minimum, liquidus, else the eutectic
// minimum), the eutectic minimum as the end of the primary freezing, the
// end of freezing (solidus point), and as marks the liquidus, the eutectic
// minimum and maximum and the end of freezing. A point not found is left
// out (its event NaN). The start of eutectic freezing is marked
// (KeyEutecticStart); the events stay those of the minimum.
func EventsOf(r arrest.Result) Events {
	ev := Events{PourS: math.NaN(), ArrestS: math.NaN(), EutecticS: math.NaN(), EndS: math.NaN()}
	at := func(p arrest.Point) float64 {
		if !p.OK {
			return math.NaN()
		}
		return p.TimeS
	}
	ev.PourS = at(r.PourPeak)
	for _, p := range []arrest.Point{r.LiquidusMin, r.Liquidus, r.EutecticMin} {
		if p.OK {
			ev.ArrestS = p.TimeS
			break
		}
	}
	ev.EutecticS = at(r.EutecticMin)
	ev.EndS = at(r.Solidus)
	for _, m := range []struct {
		key string
		p   arrest.Point
	}{
		{KeyLiquidus, r.Liquidus}, {KeyEutecticStart, r.EutecticStart}, {KeyEutecticMin, r.EutecticMin}, {KeyEutecticMax, r.EutecticMax}, {KeyEndOfFreezing, r.Solidus},
	} {
		if m.p.OK {
			ev.Marks = append(ev.Marks, Mark{Key: m.key, TimeS: m.p.TimeS})
		}
	}
	return ev
}

// SpecificHeat is the specific heat c a family's latent heat is worked out
// with when the alloy's limits entry sets none, J/(kg K): cast iron 830
// (liquid iron 0.80–0.85 kJ/(kg K)), Al-Si 1180 (memory, docs/sources.md
// §6). A pure metal has no default (its c differs from metal to metal:
// set it in the alloy's entry); 0 then.
func SpecificHeat(f arrest.Family) float64 {
	switch f {
	case arrest.FamilyIron, arrest.FamilyWhite, "":
		return 830
	case arrest.FamilyAluminum:
		return 1180
	}
	return 0
}

// Cup is one sample for the solidification path: its centre curve, the
// wall curve of a two-thermocouple cup on the same times, and what the
// methods need besides.
type Cup struct {
	Time   []float64 // s
	Centre []float64 // the centre thermocouple, °C
	// Wall is the thermocouple near the wall, °C, at Time's readings (nil:
	// a one-thermocouple cup); Geometry places both (curvefile.OnTimes
	// puts a second channel logged on its own clock there).
	Wall     []float64
	Geometry Geometry
	Events   Events
	Options  Options
	// Coherency asks for the dendrite coherency point (aluminium alloys,
	// two thermocouples).
	Coherency bool
}

// Solidification is everything the cup gives: the Newtonian path from the
// centre curve, and with two thermocouples the Fourier path and (when
// asked for) the coherency point. A figure not computed is nil with its
// error beside it.
type Solidification struct {
	Newtonian    *Path
	NewtonianErr error
	Fourier      *Path
	FourierErr   error
	Coherency    *Coherency
	CoherencyErr error
}

// ErrOneThermocouple says a two-thermocouple figure was not computed
// because the cup has one thermocouple.
var ErrOneThermocouple = errors.New("solidpath: the cup has one thermocouple (the Fourier method and the coherency point need a second one near the wall)")

// Analyze works out the solidification path of the cup by every method its
// thermocouples allow.
func Analyze(c Cup) Solidification {
	var s Solidification
	series := [][]float64{c.Centre}
	if c.Wall != nil {
		series = append(series, c.Wall)
	}
	o, err := prepare(c.Time, c.Events, c.Options, series...)
	if err != nil {
		s.NewtonianErr, s.FourierErr = err, err
		if c.Coherency {
			s.CoherencyErr = err
		}
		return s
	}
	half := o.SlopeS / 2
	sc := smoothOf(c.Time, c.Centre, half)
	if p, err := newtonian(c.Time, sc, c.Events, o); err != nil {
		s.NewtonianErr = err
	} else {
		s.Newtonian = &p
	}
	if c.Wall == nil {
		s.FourierErr = ErrOneThermocouple
		if c.Coherency {
			s.CoherencyErr = ErrOneThermocouple
		}
		return s
	}
	sw := smoothOf(c.Time, c.Wall, half)
	if err := c.Geometry.check(); err != nil {
		s.FourierErr = err
	} else if p, err := fourier(c.Time, sc, sw, c.Geometry, c.Events, o); err != nil {
		s.FourierErr = err
	} else {
		s.Fourier = &p
	}
	if c.Coherency {
		if k, err := coherency(c.Time, sc, sw, c.Events, s.Fourier, o); err != nil {
			s.CoherencyErr = err
		} else {
			s.Coherency = &k
		}
	}
	return s
}

// Best is the path the record reports fs from: the Fourier path where there
// is one (it reads the gradient instead of assuming a cooling law), else the
// Newtonian path; nil when neither could be worked out.
func (s Solidification) Best() *Path {
	if s.Fourier != nil {
		return s.Fourier
	}
	return s.Newtonian
}
