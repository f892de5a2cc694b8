package assess

import (
	"strconv"
	"strings"

	"github.com/undercool-foundry/undercool/internal/limits"
)

// The record's figures are rounded to the resolution the data carry, not
// written as 1184.4096759008462: one decimal more than the metric shows
// on screen and in reasons (limits.MetricInfo.Decimals + 1), so that
// temperatures keep 0.01 °C (the finest logger resolution in the trade,
// practice), times 0.01 s (a 100 Hz logger), carbon equivalents and wt %
// 0.001; figures that are not metrics by their unit (°C and s: 2
// decimals, wt %: 3); ratios and physical constants of the potency figure
// to 4 significant digits. The verdict is judged on the rounded figures,
// so a record never shows a value that contradicts its own verdict.
const (
	tempDecimals = 2 // °C
	timeDecimals = 2 // s
	pctDecimals  = 3 // wt %
	rateDecimals = 3 // readings/s
	sigDigits    = 4 // ratios, nm, J, µm
)

// roundTo rounds v to d decimals (the nearest float64 to the decimal).
func roundTo(v float64, d int) float64 {
	r, err := strconv.ParseFloat(strconv.FormatFloat(v, 'f', d, 64), 64)
	if err != nil {
		return v
	}
	return r
}

// roundSig rounds v to n significant digits.
func roundSig(v float64, n int) float64 {
	r, err := strconv.ParseFloat(strconv.FormatFloat(v, 'g', n, 64), 64)
	if err != nil {
		return v
	}
	return r
}

// roundFigure rounds a figure by its record key (see above).
func roundFigure(key string, v float64) float64 {
	if mi, ok := limits.Metric(key); ok {
		if mi.Unit == "" && mi.Decimals >= 3 { // a ratio over decades (f(θ))
			return roundSig(v, sigDigits)
		}
		return roundTo(v, mi.Decimals+1)
	}
	switch {
	case strings.HasSuffix(key, "_c"), strings.HasSuffix(key, "_k"):
		return roundTo(v, tempDecimals)
	case strings.HasSuffix(key, "_s"):
		return roundTo(v, timeDecimals)
	case strings.HasSuffix(key, "_pct"), strings.HasPrefix(key, "cel_"):
		return roundTo(v, pctDecimals)
	}
	return roundSig(v, sigDigits)
}

// fig is a rounded figure for a record field.
func fig(key string, v float64) *float64 { return num(roundFigure(key, v)) }
