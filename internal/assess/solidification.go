package assess

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/solidpath"
)

// fsMetrics are the record's fs_at_* keys by the point each is read at.
var fsMetrics = []struct {
	key    string // solidpath mark key
	metric string
	field  func(r *Record) **float64
}{
	{solidpath.KeyLiquidus, "fs_at_liquidus", func(r *Record) **float64 { return &r.FSAtLiquidus }},
	{solidpath.KeyEutecticStart, "fs_at_eutectic_start", func(r *Record) **float64 { return &r.FSAtEutecticStart }},
	{solidpath.KeyEutecticMin, "fs_at_eutectic_min", func(r *Record) **float64 { return &r.FSAtEutecticMin }},
	{solidpath.KeyEutecticMax, "fs_at_eutectic_max", func(r *Record) **float64 { return &r.FSAtEutecticMax }},
	{solidpath.KeyEndOfFreezing, "fs_at_end_of_freezing", func(r *Record) **float64 { return &r.FSAtEndOfFreezing }},
}

// errPureFourier says why a pure metal's cup has no Fourier figures.
var errPureFourier = errors.New("the Fourier method does not apply to a pure metal, which freezes from the wall inward")

// solidification fills the solidification path's figures
// (docs/solidification.md): the Newtonian path from the centre curve, the
// Fourier path and, for aluminium, the coherency point where the sample
// has a wall thermocouple. fs at the points comes from the Fourier path
// where there is one. Every figure that cannot be worked out is null with
// the reason.
func (m *metallurgy) solidification() {
	r := m.r
	c, cWhy := m.specificHeat()
	if c > 0 {
		r.SpecificHeatJPerKgK = num(c)
	}
	missingAll := func(why string) {
		for _, f := range fsMetrics {
			m.missing(f.metric, label(f.metric)+" not computed: "+why)
		}
		for _, k := range []string{"latent_heat_newtonian_j_per_kg", "latent_heat_fourier_j_per_kg", "coherency_c", "fs_at_coherency"} {
			m.missing(k, label(k)+" not computed: "+why)
		}
	}
	if !m.res.Complete {
		missingAll("the cup has not finished freezing")
		return
	}
	s, wall := solidOf(m.s.in, *r, c)
	switch {
	case wall.gaps == "":
	case s.Fourier != nil:
		r.Warnings = append(r.Warnings, fmt.Sprintf("the wall thermocouple has no reading at %s: the Fourier figures come from the stretch it read, %.1f–%.1f s",
			wall.gaps, wall.fromS, wall.toS))
	default:
		r.Warnings = append(r.Warnings, fmt.Sprintf("the wall thermocouple has no reading at %s (a fault or a silence on its channel): the Fourier figures and the coherency point are not computed",
			wall.gaps))
	}
	pure := m.s.in.Family == arrest.FamilyPure
	latent := func(p *solidpath.Path, err error, metric string, dst **float64) {
		switch {
		case p == nil:
			m.missing(metric, label(metric)+" not computed: "+reason(err))
		case c == 0:
			m.missing(metric, label(metric)+" not computed: "+cWhy)
		default:
			m.set(dst, metric, p.LatentJPerKg)
		}
	}
	latent(s.Newtonian, s.NewtonianErr, "latent_heat_newtonian_j_per_kg", &r.LatentHeatNewtonianJPerKg)
	fourierErr := s.FourierErr
	if pure && m.s.in.Wall != nil {
		fourierErr = errPureFourier
	}
	latent(s.Fourier, fourierErr, "latent_heat_fourier_j_per_kg", &r.LatentHeatFourierJPerKg)

	best := s.Best()
	if best == nil {
		missingAll(reason(s.NewtonianErr))
		return
	}
	r.FSMethod = best.Method
	if best.Method == solidpath.MethodFourier && best.Zero.Inflow > solidpath.MaxInflow {
		r.Warnings = append(r.Warnings, fmt.Sprintf("the wall thermocouple read above the centre before the eutectic (a shell near the wall freezing first; %.1f %% of the centre's heat taken as flowing in): the two-thermocouple fs up to the eutectic may read low, by 0.04–0.11 on simulated cups (docs/solidification.md)",
			100*best.Zero.Inflow))
	}
	for _, f := range fsMetrics {
		i := -1
		for k, p := range best.Points {
			if p.Key == f.key {
				i = k
			}
		}
		if i < 0 {
			m.missing(f.metric, label(f.metric)+" not computed: the point was not found")
			continue
		}
		m.set(f.field(r), f.metric, best.Points[i].FS)
	}
	switch {
	case s.Coherency != nil:
		m.set(&r.CoherencyC, "coherency_c", s.Coherency.TempC)
		r.CoherencyS = fig("coherency_s", s.Coherency.TimeS)
		if !math.IsNaN(s.Coherency.FS) {
			m.set(&r.FSAtCoherency, "fs_at_coherency", s.Coherency.FS)
		} else {
			m.missing("fs_at_coherency", label("fs_at_coherency")+" not computed: "+reason(s.FourierErr))
		}
	case m.s.in.Family != arrest.FamilyAluminum:
		m.missing("coherency_c", label("coherency_c")+" not computed: defined for aluminium alloys")
		m.missing("fs_at_coherency", label("fs_at_coherency")+" not computed: defined for aluminium alloys")
	default:
		m.missing("coherency_c", label("coherency_c")+" not computed: "+reason(s.CoherencyErr))
		m.missing("fs_at_coherency", label("fs_at_coherency")+" not computed: "+reason(s.CoherencyErr))
	}
}

// solidCup is the sample as the solidification path takes it: its curves,
// the events and marks of the record's points and the specific heat c. A
// pure metal's wall thermocouple is left out: it freezes from the wall
// inward, with no parabolic field for the Fourier method.
func solidCup(in Input, r Record, c float64) solidpath.Cup {
	wall := in.Wall
	if in.Family == arrest.FamilyPure {
		wall = nil
	}
	return solidpath.Cup{
		Time: in.Time, Centre: in.Temp, Wall: wall, Geometry: in.Radii,
		Events: solidpath.EventsOf(pointsOf(r)), Options: solidpath.Options{SpecificHeat: c},
		Coherency: in.Family == arrest.FamilyAluminum,
	}
}

// wallStretch is where a two-thermocouple cup's wall thermocouple read.
type wallStretch struct {
	gaps       string  // the readings without a wall value, in words; "" for none
	fromS, toS float64 // the longest stretch with a wall value throughout, s
}

// solidOf works out the solidification path of the sample (solidCup). A
// wall thermocouple with gaps (NaN: no reading there, docs/curve-files.md,
// "Two thermocouples in one cup") does not spoil the Newtonian path of the
// centre curve: that is worked out on the whole curve, and the Fourier
// path and the coherency point on the longest stretch where the wall
// thermocouple read throughout; where that stretch does not hold the
// whole freezing, they are not computed, and their errors say why (as
// they do when the wall thermocouple's radius is not given).
func solidOf(in Input, r Record, c float64) (solidpath.Solidification, wallStretch) {
	s, w := solidPaths(in, r, c)
	if s.Fourier == nil && in.Wall != nil && in.Radii.WallMm == 0 && !errors.Is(s.FourierErr, solidpath.ErrOneThermocouple) {
		s.FourierErr = errors.New("the wall thermocouple's radius is not given (" + curvefile.KeyWallRadius + " in the curve file)")
	}
	return s, w
}

// solidPaths is solidOf but for the words on a missing radius.
func solidPaths(in Input, r Record, c float64) (solidpath.Solidification, wallStretch) {
	cup := solidCup(in, r, c)
	var w wallStretch
	// centreOnly is the path of the centre curve alone, the wall's figures
	// not computed for err
	centreOnly := func(err error) solidpath.Solidification {
		one := cup
		one.Wall = nil
		s := solidpath.Analyze(one)
		s.FourierErr = err
		if one.Coherency {
			s.CoherencyErr = err
		}
		return s
	}
	if cup.Wall != nil && len(cup.Wall) != len(cup.Time) {
		return centreOnly(fmt.Errorf("the wall thermocouple has %d readings for the centre's %d", len(cup.Wall), len(cup.Time))), w
	}
	lo, hi := longestRun(cup.Wall)
	if cup.Wall == nil || hi-lo == len(cup.Wall) {
		return solidpath.Analyze(cup), w
	}
	w.gaps = gapsOf(cup.Time, cup.Wall)
	if hi-lo < 2 {
		return centreOnly(fmt.Errorf("the wall thermocouple has no reading at %s", w.gaps)), w
	}
	w.fromS, w.toS = cup.Time[lo], cup.Time[hi-1]
	why := func(err error) error {
		if err == nil {
			return nil
		}
		return fmt.Errorf("the wall thermocouple has no reading at %s; on the stretch it read, %.1f–%.1f s: %s", w.gaps, w.fromS, w.toS, reason(err))
	}
	part := cup
	part.Time, part.Centre, part.Wall = cup.Time[lo:hi], cup.Centre[lo:hi], cup.Wall[lo:hi]
	p := solidpath.Analyze(part)
	s := centreOnly(nil)
	s.Fourier, s.FourierErr = p.Fourier, why(p.FourierErr)
	s.Coherency, s.CoherencyErr = p.Coherency, why(p.CoherencyErr)
	return s, w
}

// longestRun is the longest run of readings of x that are not NaN, [lo, hi).
func longestRun(x []float64) (lo, hi int) {
	for i := 0; i < len(x); {
		if math.IsNaN(x[i]) {
			i++
			continue
		}
		j := i
		for j < len(x) && !math.IsNaN(x[j]) {
			j++
		}
		if j-i > hi-lo {
			lo, hi = i, j
		}
		i = j
	}
	return lo, hi
}

// gapsOf says where x is NaN, in s of t: "12.3–14.0 s, 299.9 s", the
// first three runs and how many more.
func gapsOf(t, x []float64) string {
	var parts []string
	runs := 0
	for i := 0; i < len(x); i++ {
		if !math.IsNaN(x[i]) {
			continue
		}
		j := i
		for j+1 < len(x) && math.IsNaN(x[j+1]) {
			j++
		}
		if runs++; runs <= 3 {
			if j == i {
				parts = append(parts, fmt.Sprintf("%.1f s", t[i]))
			} else {
				parts = append(parts, fmt.Sprintf("%.1f–%.1f s", t[i], t[j]))
			}
		}
		i = j
	}
	if runs > 3 {
		parts = append(parts, fmt.Sprintf("and %d more gaps", runs-3))
	}
	return strings.Join(parts, ", ")
}

// pointsOf gives back the characteristic points of a record as arrest
// points (null: not found).
func pointsOf(r Record) arrest.Result {
	p := func(c, s *float64) arrest.Point {
		if c == nil || s == nil {
			return arrest.Point{}
		}
		return arrest.Point{TempC: *c, TimeS: *s, OK: true}
	}
	return arrest.Result{
		PourPeak: p(r.PourPeakC, r.PourPeakS), LiquidusMin: p(r.LiquidusMinC, r.LiquidusMinS), Liquidus: p(r.LiquidusC, r.LiquidusS),
		EutecticStart: p(r.EutecticStartC, r.EutecticStartS),
		EutecticMin:   p(r.EutecticMinC, r.EutecticMinS), EutecticMax: p(r.EutecticMaxC, r.EutecticMaxS), Solidus: p(r.SolidusC, r.SolidusS),
	}
}

// SolidPath works out again the solidification path that a record's fs
// figures come from (its fs_method), from the sample's curves: in.Time and
// in.Temp, with in.Wall and in.Radii for a two-thermocouple cup. The
// record gives the points and the specific heat, in.Family or else the
// record's family the rules. For fs(t) on the dashboard and fs(T) on the
// report page.
func SolidPath(in Input, rec Record) (*solidpath.Path, error) {
	s := SolidPaths(in, rec)
	if p := s.Best(); p != nil {
		return p, nil
	}
	return nil, fmt.Errorf("assess: solidification path of %s: %w", in.File, s.NewtonianErr)
}

// SolidPaths is SolidPath by every method the sample's thermocouples
// allow, as the record's figures were worked out: the Newtonian path and,
// for a two-thermocouple cup, the Fourier path (and for aluminium the
// coherency point), each nil with its error beside it. For fs(t) of both
// methods on the dashboard.
func SolidPaths(in Input, rec Record) solidpath.Solidification {
	if in.Family == "" {
		in.Family = arrest.Family(rec.Family)
	}
	var c float64
	if rec.SpecificHeatJPerKgK != nil {
		c = *rec.SpecificHeatJPerKgK
	}
	s, _ := solidOf(in, rec, c)
	if in.Family == arrest.FamilyPure && in.Wall != nil && s.Fourier == nil {
		s.FourierErr = errPureFourier
	}
	return s
}

// specificHeat is the c of the alloy's limits entry, else the family's
// default; 0 with the reason when neither sets one.
func (m *metallurgy) specificHeat() (float64, string) {
	if m.alloy != nil && m.alloy.Reference.SpecificHeatJPerKgK != nil {
		return *m.alloy.Reference.SpecificHeatJPerKgK, ""
	}
	if c := solidpath.SpecificHeat(m.s.in.Family); c > 0 {
		return c, ""
	}
	return 0, "no specific heat is set for this alloy (reference.specific_heat_j_per_kg_k in the limits file)"
}

// reason is an error's text without the package prefix, for the record's
// plain words.
func reason(err error) string {
	if err == nil {
		return "not available"
	}
	const prefix = "solidpath: "
	s := err.Error()
	return strings.TrimPrefix(s, prefix)
}
