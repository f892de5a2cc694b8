package tui

import (
	"fmt"
	"strings"

	"github.com/undercool-foundry/undercool/internal/assess"
)

// verdictView is the whole verdict of one sample in a dialog (key v):
// every reason, the figures withheld, every advice line and the caveats,
// scrolled with ↑ ↓ where they do not fit.
type verdictView struct {
	title string
	rec   assess.Record
	top   int // the first line shown
}

// verdictOf is the verdict the v key opens: the opened history sample's,
// else the live cup's once it is done; nil when there is none.
func (m Model) verdictOf() *verdictView {
	if m.tab == tabHistory && m.hist.open != nil {
		e := m.hist.open
		return &verdictView{title: "SAMPLE " + sampleName(e.Meta), rec: e.Record}
	}
	if m.tab != tabLive {
		return nil
	}
	c := m.live.activeCup()
	if rec := c.rec(); rec != nil {
		title := "CUP " + c.id()
		if n := sampleName(c.snap.Meta); n != "" {
			title += " · " + n
		}
		return &verdictView{title: title, rec: *rec}
	}
	return nil
}

// lines is the verdict in full, wrapped to w.
func (v *verdictView) lines(st *Styles, w int) []string {
	r := &v.rec
	out := []string{st.Title.Render("VERDICT · "+v.title) + "  " + st.verdictStyle(r.Verdict).Render(verdictWord(r.Verdict))}
	section := func(name string, items []string, mark string) {
		if len(items) == 0 {
			return
		}
		out = append(out, "", st.Label.Render(name))
		for _, s := range items {
			out = append(out, wrapText(st.Value, mark+s, w)...)
		}
	}
	section("Why", recordReasons(r), "• ")
	section("Withheld (a check on the sample failed; not to be acted on)", withheldText(r), "✗ ")
	section("Advice (the shop's procedures and its metallurgist decide)", recordAdvice(r), "→ ")
	section("Caveats", r.Warnings, "· ")
	lim := r.LimitsVersion
	if lim == "" {
		lim = "none"
	}
	out = append(out, "", st.Muted.Render(clip(fmt.Sprintf("limits version %s · %s", lim, r.LimitsSource), w)))
	return out
}

// withheldText is each withheld figure with its value, marked as not to
// be acted on.
func withheldText(r *assess.Record) []string {
	var out []string
	for _, w := range r.Withheld {
		out = append(out, fmt.Sprintf("%s: %.2f as computed, withheld: %s", metricLabel(w.Metric), w.Value, w.Why))
	}
	return out
}

// view draws the dialog within w×h cells.
func (v *verdictView) view(st *Styles, w, h int) string {
	lines := v.lines(st, dialogInner(w))
	rows := dialogRows(h)
	top := min(v.top, maxTop(len(lines), rows))
	shown := lines[top:]
	if len(shown) > rows {
		shown = append(shown[:rows-1:rows-1], st.Mark.Render(fmt.Sprintf("▼ ↓ for %d lines more", len(shown)-rows+1)))
	}
	if top > 0 {
		shown[0] = st.Mark.Render(fmt.Sprintf("▲ ↑ for %d lines before", top))
	}
	shown = append(shown, st.Muted.Render("v or esc to close"))
	return st.Dialog.Render(strings.Join(shown, "\n"))
}

// dialogInner is the text width of a dialog on a screen w wide;
// dialogRows its text rows in a body h high (the frame and the foot line
// take four).
func dialogInner(w int) int { return min(w-8, 90) }
func dialogRows(h int) int  { return max(h-4, 3) }

// maxTop is the first line shown when n lines are scrolled to their end
// in rows rows.
func maxTop(n, rows int) int { return max(n-rows, 0) }

// scroll moves the dialog by d lines, within its text.
func (v *verdictView) scroll(st *Styles, w, h, d int) {
	n := len(v.lines(st, dialogInner(w)))
	v.top = min(max(v.top+d, 0), maxTop(n, dialogRows(h)))
}
