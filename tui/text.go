package tui

import (
	"github.com/charmbracelet/x/ansi"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/escape"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sample"
)

// ansiTruncate cuts a styled string to w cells.
func ansiTruncate(s string, w int) string { return ansi.Truncate(s, w, "") }

// sampleName is how a sample is named on screen: its sample id, else its
// ladle.
func sampleName(m sample.Meta) string {
	if s := m.Get("sample"); s != "" {
		return escape.Line(s)
	}
	return escape.Line(m.Get("ladle"))
}

// recordReasons is why the record has its verdict: the problems found and
// the reasons in numbers, without repeats.
func recordReasons(r *assess.Record) []string {
	seen := map[string]bool{}
	var out []string
	for _, s := range append(append([]string(nil), r.Problems...), r.Reasons...) {
		if s != "" && !seen[s] {
			seen[s] = true
			out = append(out, escape.Line(s))
		}
	}
	return out
}

// metricLabel is a metric in words ("carbon equivalent from the
// liquidus"), else its key.
func metricLabel(name string) string {
	if m, ok := limits.Metric(name); ok {
		return m.Label
	}
	return name
}

// recordAdvice is what the record suggests doing, worded as advice.
func recordAdvice(r *assess.Record) []string {
	out := make([]string, len(r.Advice))
	for i, s := range r.Advice {
		out[i] = escape.Line(s)
	}
	return out
}

// resultFromRecord gives back the points of a stored record, for drawing.
func resultFromRecord(r assess.Record) arrest.Result {
	pt := func(c, s *float64) arrest.Point {
		if c == nil || s == nil {
			return arrest.Point{}
		}
		return arrest.Point{TempC: *c, TimeS: *s, OK: true}
	}
	res := arrest.Result{
		Samples: r.Samples, RateHz: r.RateHz,
		PourPeak: pt(r.PourPeakC, r.PourPeakS), LiquidusMin: pt(r.LiquidusMinC, r.LiquidusMinS),
		Liquidus: pt(r.LiquidusC, r.LiquidusS), EutecticMin: pt(r.EutecticMinC, r.EutecticMinS),
		EutecticMax: pt(r.EutecticMaxC, r.EutecticMaxS), Solidus: pt(r.SolidusC, r.SolidusS),
		Complete: true,
	}
	if r.RecalescenceC != nil {
		res.Recalescence, res.RecalescenceOK = *r.RecalescenceC, true
	}
	return res
}

// selectRow is a list row, the selected one marked by a glyph as well as
// by reverse video, so that it shows without colour or attributes
// (NO_COLOR): "▶ " before it, else two spaces; cut to w.
func selectRow(st *Styles, row string, selected bool, w int) string {
	if selected {
		return st.Selected.Render(clip("▶ "+row, w))
	}
	return st.Value.Render(clip("  "+row, w))
}
