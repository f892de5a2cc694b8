// Package limits holds the shop's per-alloy specifications (a documented
// TOML file): for every metric of a sample a pass band and a wider marginal
// band, with advice to show when a value is out, and the reference
// temperatures and chemistry assumptions the metallurgy uses. It also
// evaluates a sample's metrics against an alloy's bands (pure: values in,
// checks and a verdict out).
//
// The shipped examples (Builtin, `undercool limits init`) are examples only:
// the shop's metallurgist must set every number for the shop's own cups,
// melts and practice.
package limits

import (
	"sort"
	"strings"

	"github.com/undercool-foundry/undercool/internal/arrest"
)

// Book is a whole limits file.
type Book struct {
	Version  string `toml:"version"`   // the shop's own version label, e.g. "2026-12-01.1"
	Edited   string `toml:"edited"`    // RFC 3339 time of the last edit (set by Save)
	EditedBy string `toml:"edited_by"` // who made the last edit
	Note     string `toml:"note"`      // free text kept with the file

	// CalibrationFile names a file (relative to this one) holding a
	// [calibration] table written by `undercool calibrate`; it is read on
	// Load and kept as a reference on Save.
	CalibrationFile string `toml:"calibration_file"`
	// Calibration is the shop-fitted regressions, inline or from
	// CalibrationFile; nil when the shop has none.
	Calibration *Calibration `toml:"calibration"`

	Alloys map[string]*Alloy `toml:"alloy"`

	// InoculantTables are the shop's melt additions for the model's
	// advice, by name (see Inoculant).
	InoculantTables map[string]*Inoculant `toml:"inoculant"`

	// Source is where the book came from: a file path or "built-in".
	Source string `toml:"-"`
}

// Alloy is one alloy's specification.
type Alloy struct {
	Name        string        `toml:"-"` // the table name, e.g. "grey-iron"
	Family      arrest.Family `toml:"family"`
	Description string        `toml:"description"`

	// Chemistry is the nominal analysis in wt % by lower-case element
	// symbol ("c", "si", "p", "mn", "s", "mg", "cu", "fe", ...). It is used
	// when the curve file does not carry the sample's own analysis.
	Chemistry map[string]float64 `toml:"chemistry"`

	Reference Reference         `toml:"reference"`
	Potency   PotencySpec       `toml:"potency"`
	Detect    DetectSpec        `toml:"detect"`
	Metrics   map[string]*Limit `toml:"metric"`
}

// DetectSpec is an alloy's own detection windows, for alloys the built-in
// families do not describe (zinc die-casting, copper-base, magnesium and
// tin-base alloys) or a shop's own cup. Book.Resolve maps them onto the
// detector's hints; a key left out keeps the family's value. Windows are
// [low, high] in °C: an arrest outside its window is not that point.
type DetectSpec struct {
	// PourMinC is the pour trigger: a pour must reach this reading, °C.
	PourMinC *float64 `toml:"pour_min_c"`
	// LiquidusC is where the primary (liquidus) arrest may lie.
	LiquidusC []float64 `toml:"liquidus_c"`
	// EutecticC is where the eutectic (a check cup's plateau) may lie; an
	// arrest above it is a primary arrest.
	EutecticC []float64 `toml:"eutectic_c"`
}

// Reference holds the reference temperatures and regression choices of an
// alloy. Absent coefficients take the defaults of package metal (marked there
// with their sources, several from memory).
type Reference struct {
	// Cast iron, normal cup.
	CELRegression string `toml:"cel_regression"` // "koriyama2020", "heine" or "shop"

	StableBaseC       *float64 `toml:"stable_base_c"` // Tst = base + si·Si + p·P
	StableSi          *float64 `toml:"stable_si"`
	StableP           *float64 `toml:"stable_p"`
	MetastableBaseC   *float64 `toml:"metastable_base_c"` // Tmst = base + si·Si + p·P
	MetastableSi      *float64 `toml:"metastable_si"`
	MetastableP       *float64 `toml:"metastable_p"`
	StableOffsetC     float64  `toml:"stable_offset_c"`     // subtracted from the calculated Tst (cup vs equilibrium)
	MetastableOffsetC float64  `toml:"metastable_offset_c"` // subtracted from the calculated Tmst

	// Tellurium (white) cup: "formula" inverts the metastable-eutectic and
	// Heine relations; "shop" uses the book's [calibration].
	WhiteCup string `toml:"white_cup"`

	// Aluminium-silicon.
	LiquidusBaseC      *float64           `toml:"liquidus_base_c"`     // TL = base + Σ slope_i·x_i
	LiquidusSlopes     map[string]float64 `toml:"liquidus_slopes"`     // °C per wt %
	EutecticBaseC      *float64           `toml:"eutectic_base_c"`     // unmodified Al-Si eutectic
	EutecticSiRef      *float64           `toml:"eutectic_si_ref"`     // wt % Si in the (Si_ref/Si) factor
	EutecticDepressors map[string]float64 `toml:"eutectic_depressors"` // °C per wt %, scaled by Si_ref/Si
	EutecticOffsetC    float64            `toml:"eutectic_offset_c"`   // cup / cooling-rate offset, subtracted

	// Pure-metal check cup.
	FixedPointC *float64 `toml:"fixed_point_c"` // ITS-90 freezing point, °C

	// SpecificHeatJPerKgK is the c the latent heat of the solidification
	// path is worked out with, J/(kg K) (absent: the family's default,
	// solidpath.SpecificHeat; a pure metal has none and needs its own).
	SpecificHeatJPerKgK *float64 `toml:"specific_heat_j_per_kg_k"`
}

// PotencySpec chooses the constants of the nucleation-potency figure.
type PotencySpec struct {
	Metal        string   `toml:"metal"`        // constants set of package metal: "al", "fe", "cu", "ni"
	Undercooling string   `toml:"undercooling"` // metric used as ΔT, e.g. "undercooling_c" or "alpha_undercooling_c"
	Onset        string   `toml:"onset"`        // "hom-ratio" (default) or "absolute"
	OnsetKT      *float64 `toml:"onset_kt"`     // ΔG*/kT at onset for "absolute" (default 78)
	TmK          *float64 `toml:"tm_k"`
	DHfJPerMol   *float64 `toml:"dhf_j_per_mol"`
	SigmaJPerM2  *float64 `toml:"sigma_j_per_m2"`
	MolarVolM3   *float64 `toml:"molar_volume_m3"`
	DTHomK       *float64 `toml:"dt_hom_k"`
}

// Limit is the bands and advice of one metric. A missing bound is open.
// The marginal band must contain the pass band.
type Limit struct {
	PassMin     *float64 `toml:"pass_min"`
	PassMax     *float64 `toml:"pass_max"`
	MarginalMin *float64 `toml:"marginal_min"`
	MarginalMax *float64 `toml:"marginal_max"`
	// Required makes a finished sample invalid when the metric cannot be
	// computed (an arrest that is due was not found: re-sample).
	Required bool `toml:"required"`
	// SampleCheck marks a check on the sample rather than on the metal (a
	// cup filled cold or short, say): out of its marginal band the sample
	// is invalid and should be taken again (INVALID · RE-SAMPLE), rather
	// than the metal failing.
	SampleCheck bool `toml:"sample_check"`
	// Spoils names the metrics a failed sample check makes untrustworthy
	// (a liquidus read seconds after a low pour peak spoils the carbon
	// equivalent): their figures are withheld from the verdict and the
	// record, with the reason.
	Spoils  []string `toml:"spoils"`
	Low     string   `toml:"low"`     // advice when the value is below the pass band
	High    string   `toml:"high"`    // advice when the value is above the pass band
	Missing string   `toml:"missing"` // advice when the value could not be computed
}

// Alloy returns the named alloy's specification; a name not found as
// given is tried in lower case without surrounding spaces.
func (b *Book) Alloy(name string) (*Alloy, bool) {
	if b == nil {
		return nil, false
	}
	a, ok := b.Alloys[name]
	if !ok {
		// Curve metadata is typed by hand: "Grey-Iron " finds grey-iron.
		a, ok = b.Alloys[strings.ToLower(strings.TrimSpace(name))]
	}
	return a, ok && a != nil
}

// Names lists the book's alloys in alphabetical order.
func (b *Book) Names() []string {
	if b == nil {
		return nil
	}
	names := make([]string, 0, len(b.Alloys))
	for n := range b.Alloys {
		names = append(names, n)
	}
	sort.Strings(names)
	return names
}
