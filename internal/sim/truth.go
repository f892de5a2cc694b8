package sim

import (
	"encoding/json"
	"math"
)

// Point is one characteristic point of the noiseless curve. OK false means
// the point does not exist on this curve (JSON null).
type Point struct {
	TempC float64 // °C
	TimeS float64 // s on the logger's clock
	OK    bool
}

// Truth is every characteristic point read off the noiseless logger view
// (the lagged thermocouple without noise) at the integration step, with the
// definitions of docs/analysis.md, plus what the model knows about the cup.
type Truth struct {
	PourPeak    Point // highest reading of the pour transient
	LiquidusMin Point // − → + crossing of T' in a recalescing primary arrest
	Liquidus    Point // first local maximum of T' after the pour, or the + → − crossing after LiquidusMin
	// EutecticStart is the start of eutectic freezing: T at the maximum of
	// T'' on the rise of T' into the eutectic arrest, between the last local
	// minimum of T' before EutecticMin and EutecticMin (docs/analysis.md).
	EutecticStart Point
	EutecticMin   Point // − → + crossing of T' in the eutectic, else its local maximum of T'
	EutecticMax   Point // the following + → − crossing, else EutecticMin
	Solidus       Point // most negative T' after the eutectic plateau
	// Recalescence is EutecticMax − EutecticMin (0 without recalescence);
	// valid with EutecticMin.
	Recalescence float64

	// What the model knows (not read off the curve).
	EquilibriumLiquidusC float64 // °C; 0 where the alloy has no primary arrest
	EutecticC            float64 // growth reference of the eutectic (or freezing point), °C
	StableEutecticC      float64 // iron: Tst, °C (0 otherwise)
	MetastableEutecticC  float64 // iron: Tmst, °C (0 otherwise)
	FinalFractionSolid   float64 // solid fraction at the end of the recording
	LatentJPerKg         float64 // latent heat released per kg of metal, J/kg
	EutecticCellsPerM3   float64 // eutectic grains (cells or nodules) per m³
	FreezingEndS         float64 // time the model's fs reached 0.9999 (logger clock), s; 0 if never

	// For heat-balance analyses (two-thermocouple and Newtonian methods):
	// the material's latent heat L (a full freeze releases L per kg;
	// LatentJPerKg is what this recording's cup released) and the specific
	// heat c the model uses (one value for liquid and solid).
	LatentHeatJPerKg    float64
	SpecificHeatJPerKgK float64
	Cup                 CupKind // the cup model
	CupRadiusMm         float64 // radius of the cup's metal (a cylinder as high as wide), mm
	Zones               int     // radial cup: zones (0: lumped)
	WallTCRadiusMm      float64 // radial cup: radius of the wall thermocouple, mm (0: lumped, none)
	// FractionSolid is the mass-averaged solid fraction of the whole cup at
	// each point's time (valid where the point is).
	FractionSolid PointFractions
}

// PointFractions are the whole cup's solid fraction at the characteristic
// points.
type PointFractions struct {
	LiquidusMin, Liquidus, EutecticStart, EutecticMin, EutecticMax, Solidus float64
}

// truthJSON is the JSON form: the keys of the JSON result (docs/analysis.md).
type truthJSON struct {
	Simulated     bool     `json:"simulated"`
	PourPeakC     *float64 `json:"pour_peak_c"`
	PourPeakS     *float64 `json:"pour_peak_s"`
	LiquidusMinC  *float64 `json:"liquidus_min_c"`
	LiquidusMinS  *float64 `json:"liquidus_min_s"`
	LiquidusC     *float64 `json:"liquidus_c"`
	LiquidusS     *float64 `json:"liquidus_s"`
	EutStartC     *float64 `json:"eutectic_start_c"`
	EutStartS     *float64 `json:"eutectic_start_s"`
	EutecticMinC  *float64 `json:"eutectic_min_c"`
	EutecticMinS  *float64 `json:"eutectic_min_s"`
	EutecticMaxC  *float64 `json:"eutectic_max_c"`
	EutecticMaxS  *float64 `json:"eutectic_max_s"`
	RecalescenceC *float64 `json:"recalescence_c"`
	SolidusC      *float64 `json:"solidus_c"`
	SolidusS      *float64 `json:"solidus_s"`

	Model struct {
		LiquidusEqC   *float64 `json:"equilibrium_liquidus_c"`
		EutecticC     float64  `json:"eutectic_reference_c"`
		StableC       *float64 `json:"stable_eutectic_c"`
		MetastableC   *float64 `json:"metastable_eutectic_c"`
		FractionSolid float64  `json:"final_fraction_solid"`
		LatentJPerKg  float64  `json:"latent_j_per_kg"`
		CellsPerM3    float64  `json:"eutectic_cells_per_m3"`
		LatentHeat    float64  `json:"latent_heat_j_per_kg"`
		SpecificHeat  float64  `json:"specific_heat_j_per_kg_k"`
		Cup           string   `json:"cup"`
		CupRadiusMm   float64  `json:"cup_radius_mm"`
		Zones         *int     `json:"zones"`
		WallTCMm      *float64 `json:"wall_tc_radius_mm"`
		FSAt          struct {
			LiquidusMin   *float64 `json:"liquidus_min"`
			Liquidus      *float64 `json:"liquidus"`
			EutecticStart *float64 `json:"eutectic_start"`
			EutecticMin   *float64 `json:"eutectic_min"`
			EutecticMax   *float64 `json:"eutectic_max"`
			Solidus       *float64 `json:"solidus"`
		} `json:"fraction_solid_at"`
	} `json:"model"`
}

func ptr(v float64, ok bool) *float64 {
	if !ok {
		return nil
	}
	r := math.Round(v*1e4) / 1e4
	return &r
}

// MarshalJSON writes the truth with the JSON result's keys, null where a point
// does not exist, and "simulated": true.
func (t Truth) MarshalJSON() ([]byte, error) {
	var j truthJSON
	j.Simulated = true
	j.PourPeakC, j.PourPeakS = ptr(t.PourPeak.TempC, t.PourPeak.OK), ptr(t.PourPeak.TimeS, t.PourPeak.OK)
	j.LiquidusMinC, j.LiquidusMinS = ptr(t.LiquidusMin.TempC, t.LiquidusMin.OK), ptr(t.LiquidusMin.TimeS, t.LiquidusMin.OK)
	j.LiquidusC, j.LiquidusS = ptr(t.Liquidus.TempC, t.Liquidus.OK), ptr(t.Liquidus.TimeS, t.Liquidus.OK)
	j.EutStartC, j.EutStartS = ptr(t.EutecticStart.TempC, t.EutecticStart.OK), ptr(t.EutecticStart.TimeS, t.EutecticStart.OK)
	j.EutecticMinC, j.EutecticMinS = ptr(t.EutecticMin.TempC, t.EutecticMin.OK), ptr(t.EutecticMin.TimeS, t.EutecticMin.OK)
	j.EutecticMaxC, j.EutecticMaxS = ptr(t.EutecticMax.TempC, t.EutecticMax.OK), ptr(t.EutecticMax.TimeS, t.EutecticMax.OK)
	j.RecalescenceC = ptr(t.Recalescence, t.EutecticMin.OK && t.EutecticMax.OK)
	j.SolidusC, j.SolidusS = ptr(t.Solidus.TempC, t.Solidus.OK), ptr(t.Solidus.TimeS, t.Solidus.OK)
	j.Model.LiquidusEqC = ptr(t.EquilibriumLiquidusC, t.EquilibriumLiquidusC != 0)
	j.Model.EutecticC = t.EutecticC
	j.Model.StableC = ptr(t.StableEutecticC, t.StableEutecticC != 0)
	j.Model.MetastableC = ptr(t.MetastableEutecticC, t.MetastableEutecticC != 0)
	j.Model.FractionSolid = math.Round(t.FinalFractionSolid*1e6) / 1e6
	j.Model.LatentJPerKg = math.Round(t.LatentJPerKg)
	j.Model.CellsPerM3 = float64(float32(t.EutecticCellsPerM3))
	j.Model.LatentHeat = t.LatentHeatJPerKg
	j.Model.SpecificHeat = t.SpecificHeatJPerKgK
	j.Model.Cup = string(t.Cup)
	if t.Cup == CupLumped {
		j.Model.Cup = "lumped"
	}
	j.Model.CupRadiusMm = math.Round(t.CupRadiusMm*1e4) / 1e4
	if t.Zones > 0 {
		j.Model.Zones = &t.Zones
		j.Model.WallTCMm = ptr(t.WallTCRadiusMm, true)
	}
	fsAt := func(v float64, p Point) *float64 {
		if !p.OK {
			return nil
		}
		r := math.Round(v*1e6) / 1e6
		return &r
	}
	fa, fs := &j.Model.FSAt, t.FractionSolid
	fa.LiquidusMin, fa.Liquidus = fsAt(fs.LiquidusMin, t.LiquidusMin), fsAt(fs.Liquidus, t.Liquidus)
	fa.EutecticStart, fa.EutecticMin = fsAt(fs.EutecticStart, t.EutecticStart), fsAt(fs.EutecticMin, t.EutecticMin)
	fa.EutecticMax, fa.Solidus = fsAt(fs.EutecticMax, t.EutecticMax), fsAt(fs.Solidus, t.Solidus)
	return json.MarshalIndent(j, "", "  ")
}

// fine is the model's record at the integration step.
type fine struct {
	tc     []float64 // thermocouple junction (noiseless logger view), °C
	wallTC []float64 // radial cup: the wall thermocouple's junction, °C (nil: lumped cup)
	temp   []float64 // metal at the core, °C
	shell  []float64 // metal in the shell, °C
	fs     []float64 // solid fraction
	fsCore []float64 // solid fraction of the core (radial cup: the centre zone)
	offset float64   // logger time of index 0 (the pour), s
	step   float64   // the time between two entries, s
	primOn float64   // model time of the first primary nucleus, s (−1: none)
	eutOn  float64   // model time of the first eutectic nucleus, s (−1: none)
	endT   float64   // model time fs reached 0.9999, s (−1: never)
}

// startSpanS is the half-span of the second difference that locates the
// start of eutectic freezing, s (see eutecticStart).
const startSpanS = 0.25

// recalMinC is the smallest rise of T while T' is above zero that counts
// as a recalescence, °C (docs/analysis.md).
const recalMinC = 0.05

// recalOutrank: a later recalescence whose minimum lies below the one
// taken for the eutectic and whose rise is more than recalOutrank times
// that one's outranks it (docs/analysis.md, "What counts as the
// eutectic"): a cup wall freezing before the centre can lift the centre's
// T' just above zero some tens of seconds before the centre's own
// eutectic, whose recalescence, once the curve has fallen below that
// shoulder, is several times larger (in the radial model the centre's own
// solid fraction grows by under 0.2 % during the shoulder, by 10–17 %
// during its own recalescence). Two recalescences of like size, a plateau
// wobbling about zero, keep the first.
const recalOutrank = 2

// crossing returns the point where d crosses zero between i−1 and i,
// interpolated linearly.
func (f *fine) crossing(d []float64, i int) Point {
	a := d[i-1] / (d[i-1] - d[i])
	return Point{TempC: f.tc[i-1] + a*(f.tc[i]-f.tc[i-1]), TimeS: f.offset + (float64(i-1)+a)*f.step, OK: true}
}

func (f *fine) at(i int) Point {
	return Point{TempC: f.tc[i], TimeS: f.offset + float64(i)*f.step, OK: true}
}

// eutecticStart is the start of eutectic freezing: T at the largest
// T″ = (x[i+k] − 2x[i] + x[i−k])/(kΔt)² between the last local minimum of T'
// before index e (the eutectic minimum) and e, searched no further back than
// index from. k spans startSpanS: on the integration step itself T″ shows
// the model's own step-to-step kinks, which no thermocouple records.
func (f *fine) eutecticStart(d []float64, from, e int) Point {
	lo := e - 1
	for lo > from && !(d[lo] < d[lo-1] && d[lo] <= d[lo+1]) {
		lo--
	}
	k := max(1, int(math.Round(startSpanS/f.step)))
	best, bi := math.Inf(-1), -1
	for i := max(lo, k); i <= e && i+k < len(f.tc); i++ {
		if v := f.tc[i+k] - 2*f.tc[i] + f.tc[i-k]; v > best {
			best, bi = v, i
		}
	}
	if bi < 0 {
		return Point{}
	}
	return f.at(bi)
}

// points reads the characteristic points off f.tc[:n] (n is where the
// recording stops) with the definitions of docs/analysis.md.
func (f *fine) points(n int, tr *Truth) {
	if n < 5 {
		return
	}
	x := f.tc[:n]
	d := make([]float64, n)
	for i := 1; i < n-1; i++ {
		d[i] = (x[i+1] - x[i-1]) / (2 * f.step)
	}
	d[0], d[n-1] = d[1], d[n-2]
	// upCross finds the next − → + crossing at or after i (−1: none).
	upCross := func(i, end int) int {
		for ; i < end; i++ {
			if d[i-1] < 0 && d[i] >= 0 {
				return i
			}
		}
		return -1
	}
	downCross := func(i, end int) int {
		for ; i < end; i++ {
			if d[i-1] > 0 && d[i] <= 0 {
				return i
			}
		}
		return -1
	}
	localMax := func(i, end int) int {
		for ; i < end-1; i++ {
			if d[i] > d[i-1] && d[i] >= d[i+1] {
				return i
			}
		}
		return -1
	}
	idx := func(modelT float64) int { return max(1, int(math.Ceil(modelT/f.step))) }

	// Pour peak: the first + → − crossing after the thermocouple starts rising.
	peak := downCross(1, n-1)
	if peak < 0 {
		return
	}
	tr.PourPeak = f.crossing(d, peak)
	after := peak + 1

	if f.primOn >= 0 && idx(f.primOn) < n-1 {
		if j := localMax(max(after, idx(f.primOn)), n); j > 0 {
			if d[j] > 0 {
				lo := j
				for lo > after && d[lo-1] >= 0 {
					lo--
				}
				if hi := downCross(j+1, n); lo > after && hi > 0 {
					tr.LiquidusMin = f.crossing(d, lo)
					tr.Liquidus = f.crossing(d, hi)
					after = hi + 1
				}
			} else {
				tr.Liquidus = f.at(j)
				after = j + 1
			}
		}
	}

	if f.eutOn < 0 || idx(f.eutOn) >= n-1 {
		return
	}
	start := max(after, idx(f.eutOn))
	plateauEnd, eutMin := -1, -1
	// the eutectic recalesces where T' crosses − → + and T then rises by at
	// least recalMinC before T' falls again; a smaller excursion is an
	// arrest at zero, and the search goes on after it. A later
	// recalescence outranks the one taken (outranks) where T first fell
	// below that one's minimum and then rises by more than recalOutrank
	// times as much: the earlier was the wall's arrest conducted in.
	// recalEnd is where a recalescence that starts at i ends: the next
	// + → − crossing of T' after which T falls by recalMinC before T' turns
	// up again (or never turns up); a pause with a smaller dip (radial cups
	// show T' touching zero for a second or two, T dipping by under
	// 0.01 °C, then rising by another 0.5–1 °C) is inside the recalescence,
	// as a smaller rise is no recalescence (−1: still recalescing where the
	// recording ends).
	recalEnd := func(i int) int {
		k := downCross(i+1, n)
		for k > 0 {
			u := upCross(k+1, n)
			if u < 0 || f.tc[k]-f.tc[u-1] >= recalMinC {
				return k
			}
			k = downCross(u+1, n)
		}
		return -1
	}
	i := upCross(start, n)
	for i > 0 && i < n-1 {
		k := recalEnd(i)
		if k < 0 {
			// still recalescing where the recording ends: the minimum is
			// known once T has risen by recalMinC, the maximum is not
			if x[n-1]-f.tc[i] >= recalMinC && (eutMin < 0 || x[n-1]-f.tc[i] > recalOutrank*tr.Recalescence && f.tc[i] < tr.EutecticMin.TempC) {
				tr.EutecticMin, tr.EutecticMax, tr.Recalescence = f.crossing(d, i), Point{}, 0
				eutMin, plateauEnd = i-1, -1
			}
			break
		}
		if rise := f.tc[k] - f.tc[i]; rise >= recalMinC {
			if eutMin < 0 || rise > recalOutrank*tr.Recalescence && f.tc[i] < tr.EutecticMin.TempC {
				tr.EutecticMin = f.crossing(d, i)
				tr.EutecticMax = f.crossing(d, k)
				tr.Recalescence = tr.EutecticMax.TempC - tr.EutecticMin.TempC
				plateauEnd, eutMin = k, i-1 // the last step before the crossing
			}
		}
		i = upCross(k+1, n)
	}
	if i < 0 && eutMin < 0 {
		if j := localMax(start, n); j > 0 {
			tr.EutecticMin = f.at(j)
			tr.EutecticMax = tr.EutecticMin
			plateauEnd, eutMin = j, j
		}
	}
	if eutMin > 0 {
		tr.EutecticStart = f.eutecticStart(d, after, eutMin)
	}
	// The end of freezing must lie inside the recording.
	if plateauEnd < 0 || f.endT < 0 || idx(f.endT) >= n-1 {
		return
	}
	lo := plateauEnd
	for i := plateauEnd; i < n; i++ {
		if d[i] < d[lo] {
			lo = i
		}
	}
	// Only a true minimum counts: T' must relax again before the recording ends.
	if lo < n-2 && d[n-2] > d[lo]+1e-3 {
		tr.Solidus = f.at(lo)
	}
}
