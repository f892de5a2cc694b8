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
// definitions of design.md, plus what the model knows about the cup.
type Truth struct {
	PourPeak    Point // highest reading of the pour transient
	LiquidusMin Point // − → + crossing of T' in a recalescing primary arrest
	Liquidus    Point // first local maximum of T' after the pour, or the + → − crossing after LiquidusMin
	EutecticMin Point // − → + crossing of T' in the eutectic, else its local maximum of T'
	EutecticMax Point // the following + → − crossing, else EutecticMin
	Solidus     Point // most negative T' after the eutectic plateau
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
}

// truthJSON is the JSON form: the keys of design.md's JSON result.
type truthJSON struct {
	Simulated     bool     `json:"simulated"`
	PourPeakC     *float64 `json:"pour_peak_c"`
	PourPeakS     *float64 `json:"pour_peak_s"`
	LiquidusMinC  *float64 `json:"liquidus_min_c"`
	LiquidusMinS  *float64 `json:"liquidus_min_s"`
	LiquidusC     *float64 `json:"liquidus_c"`
	LiquidusS     *float64 `json:"liquidus_s"`
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
	} `json:"model"`
}

func ptr(v float64, ok bool) *float64 {
	if !ok {
		return nil
	}
	r := math.Round(v*1e4) / 1e4
	return &r
}

// MarshalJSON writes the truth with design.md's keys, null where a point
// does not exist, and "simulated": true.
func (t Truth) MarshalJSON() ([]byte, error) {
	var j truthJSON
	j.Simulated = true
	j.PourPeakC, j.PourPeakS = ptr(t.PourPeak.TempC, t.PourPeak.OK), ptr(t.PourPeak.TimeS, t.PourPeak.OK)
	j.LiquidusMinC, j.LiquidusMinS = ptr(t.LiquidusMin.TempC, t.LiquidusMin.OK), ptr(t.LiquidusMin.TimeS, t.LiquidusMin.OK)
	j.LiquidusC, j.LiquidusS = ptr(t.Liquidus.TempC, t.Liquidus.OK), ptr(t.Liquidus.TimeS, t.Liquidus.OK)
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
	return json.MarshalIndent(j, "", "  ")
}

// fine is the model's record at the integration step.
type fine struct {
	tc     []float64 // thermocouple junction (noiseless logger view), °C
	temp   []float64 // metal at the core, °C
	shell  []float64 // metal in the shell, °C
	fs     []float64 // solid fraction
	offset float64   // logger time of index 0 (the pour), s
	primOn float64   // model time of the first primary nucleus, s (−1: none)
	eutOn  float64   // model time of the first eutectic nucleus, s (−1: none)
	endT   float64   // model time fs reached 0.9999, s (−1: never)
}

// crossing returns the point where d crosses zero between i−1 and i,
// interpolated linearly.
func (f *fine) crossing(d []float64, i int) Point {
	a := d[i-1] / (d[i-1] - d[i])
	return Point{TempC: f.tc[i-1] + a*(f.tc[i]-f.tc[i-1]), TimeS: f.offset + (float64(i-1)+a)*stepS, OK: true}
}

func (f *fine) at(i int) Point {
	return Point{TempC: f.tc[i], TimeS: f.offset + float64(i)*stepS, OK: true}
}

// points reads the characteristic points off f.tc[:n] (n is where the
// recording stops) with the definitions of design.md.
func (f *fine) points(n int, tr *Truth) {
	if n < 5 {
		return
	}
	x := f.tc[:n]
	d := make([]float64, n)
	for i := 1; i < n-1; i++ {
		d[i] = (x[i+1] - x[i-1]) / (2 * stepS)
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
	idx := func(modelT float64) int { return max(1, int(math.Ceil(modelT/stepS))) }

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
	plateauEnd := -1
	if i := upCross(start, n); i > 0 && i < n-1 {
		if k := downCross(i+1, n); k > 0 {
			tr.EutecticMin = f.crossing(d, i)
			tr.EutecticMax = f.crossing(d, k)
			tr.Recalescence = tr.EutecticMax.TempC - tr.EutecticMin.TempC
			plateauEnd = k
		}
	} else if j := localMax(start, n); j > 0 {
		tr.EutecticMin = f.at(j)
		tr.EutecticMax = tr.EutecticMin
		plateauEnd = j
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
