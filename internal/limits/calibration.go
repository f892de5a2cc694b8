package limits

// Calibration is the shop's own regressions, fitted by `undercool calibrate`
// to pairs of cup results and spectrometer analyses (least squares).
type Calibration struct {
	Fitted string `toml:"fitted"` // RFC 3339 time of the fit
	Pairs  string `toml:"pairs"`  // the pairs file it was fitted to

	// Liquidus: TL = a − b·CEL with CEL = C + cel_si·Si + cel_p·P (wt %);
	// in use CEL = (a − TL)/b.
	Liquidus *Regression `toml:"liquidus"`
	// Silicon from the tellurium cup: Si = a + b·T_meta (T_meta the white
	// eutectic arrest, °C).
	Silicon *Regression `toml:"silicon"`
	// Carbon from the tellurium cup: C = a + b·TL + c·Si.
	Carbon *Regression `toml:"carbon"`
}

// Regression is one fitted line (or plane) with its quality figures.
type Regression struct {
	Formula string  `toml:"formula"` // informational, e.g. "TL = a - b*CEL"
	A       float64 `toml:"a"`
	B       float64 `toml:"b"`
	C       float64 `toml:"c"`

	CELSi *float64 `toml:"cel_si"` // liquidus only: CEL definition
	CELP  *float64 `toml:"cel_p"`

	N      int     `toml:"n"`       // pairs used
	R2     float64 `toml:"r2"`      // coefficient of determination
	RMS    float64 `toml:"rms"`     // root-mean-square residual, in the fitted quantity's unit
	MaxAbs float64 `toml:"max_abs"` // largest absolute residual

	// InputMin and InputMax are the range of the main input (°C) seen in the
	// fit; a later use outside it is warned about.
	InputMin float64 `toml:"input_min"`
	InputMax float64 `toml:"input_max"`
}

// InRange reports whether x lies within the fitted input range.
func (r *Regression) InRange(x float64) bool {
	return r != nil && x >= r.InputMin && x <= r.InputMax
}
