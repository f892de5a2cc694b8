package tui

import "github.com/charmbracelet/lipgloss"

// Palette of the dashboard: warm for the metal's curve, cool for its rate,
// and four verdict colours that are always paired with a word and a
// border shape, so the screen reads the same without colour (NO_COLOR).
var (
	colEmber   = lipgloss.AdaptiveColor{Light: "#B8560F", Dark: "#F5A65B"}
	colFrost   = lipgloss.AdaptiveColor{Light: "#1F6FB2", Dark: "#7CC4F0"}
	colAsh     = lipgloss.AdaptiveColor{Light: "#6B6B6B", Dark: "#8C8C8C"}
	colChalk   = lipgloss.AdaptiveColor{Light: "#1A1A1A", Dark: "#F0F0F0"}
	colGood    = lipgloss.AdaptiveColor{Light: "#1E7D4F", Dark: "#5CD69A"}
	colBorder  = lipgloss.AdaptiveColor{Light: "#8A6D00", Dark: "#E6C45A"}
	colBad     = lipgloss.AdaptiveColor{Light: "#B3261E", Dark: "#FF6B61"}
	colDoubt   = lipgloss.AdaptiveColor{Light: "#6A3FB5", Dark: "#B79CF2"}
	colBanner  = lipgloss.AdaptiveColor{Light: "#F3E9D2", Dark: "#3A2A1A"}
	colCaution = lipgloss.AdaptiveColor{Light: "#7A4A00", Dark: "#F2C46D"}
)

// Styles is every style of the dashboard, built once at start-up from one
// renderer (which decides the colour profile, and honours NO_COLOR).
type Styles struct {
	Title, Tab, TabOn       lipgloss.Style
	Status, StatusBad       lipgloss.Style
	Safety                  lipgloss.Style
	Label, Value, Muted     lipgloss.Style
	Big                     lipgloss.Style
	State                   lipgloss.Style
	Curve, Rate, Axis, Mark lipgloss.Style
	Limit                   lipgloss.Style
	Pane                    lipgloss.Style // border around a channel or a dialog
	Dialog                  lipgloss.Style
	Selected                lipgloss.Style
	Error                   lipgloss.Style
	Fault                   lipgloss.Style            // the big slot's frame when no temperature can be trusted
	Verdict                 map[string]lipgloss.Style // by assess verdict value
	verdictBorder           map[string]lipgloss.Border
	renderer                *lipgloss.Renderer
	runs                    map[runKey][2]string // chart runs' escape sequences, found once (chartStyles)
}

// NewStyles builds the styles for one renderer.
func NewStyles(r *lipgloss.Renderer) *Styles {
	n := r.NewStyle
	s := &Styles{
		Title:     n().Bold(true).Foreground(colEmber),
		Tab:       n().Foreground(colAsh),
		TabOn:     n().Bold(true).Foreground(colChalk).Underline(true),
		Status:    n().Foreground(colAsh),
		StatusBad: n().Bold(true).Foreground(colBad),
		Safety:    n().Foreground(colCaution).Background(colBanner),
		Label:     n().Foreground(colAsh),
		Value:     n().Foreground(colChalk),
		Muted:     n().Foreground(colAsh),
		Big:       n().Bold(true).Foreground(colChalk),
		State:     n().Bold(true).Foreground(colEmber),
		Curve:     n().Foreground(colEmber),
		Rate:      n().Foreground(colFrost),
		Axis:      n().Foreground(colAsh),
		Mark:      n().Bold(true).Foreground(colChalk),
		Limit:     n().Foreground(colBorder),
		Pane:      n().Border(lipgloss.RoundedBorder()).BorderForeground(colAsh).Padding(0, 1),
		Dialog:    n().Border(dialogBorder).BorderForeground(colEmber).Padding(0, 2),
		Fault:     n().Border(faultBorder).BorderForeground(colBad).Foreground(colBad).Bold(true).Padding(0, 1),
		Selected:  n().Bold(true).Reverse(true),
		Error:     n().Bold(true).Foreground(colBad),
		renderer:  r,
	}
	s.Verdict = map[string]lipgloss.Style{
		"pass":      n().Bold(true).Foreground(colGood),
		"marginal":  n().Bold(true).Foreground(colBorder),
		"fail":      n().Bold(true).Foreground(colBad),
		"invalid":   n().Bold(true).Foreground(colDoubt),
		"unchecked": n().Bold(true).Foreground(colAsh),
	}
	// Border shapes differ by verdict so that a black-and-white screen still
	// tells them apart at a glance.
	s.verdictBorder = map[string]lipgloss.Border{
		"pass":      lipgloss.NormalBorder(),
		"marginal":  lipgloss.RoundedBorder(),
		"fail":      lipgloss.ThickBorder(),
		"invalid":   lipgloss.DoubleBorder(),
		"unchecked": lipgloss.HiddenBorder(),
	}
	s.chartStyles()
	return s
}

// The shapes of the two frames that are not verdicts: a fault in the big
// slot is framed in hazard stripes, a dialog (help, the sample form, a
// question) in a dashed line. Neither is a verdict's border, so a frame's
// shape alone never says a verdict it does not mean.
var (
	faultBorder = lipgloss.Border{Top: "▞", Bottom: "▞", Left: "▞", Right: "▞",
		TopLeft: "▞", TopRight: "▞", BottomLeft: "▞", BottomRight: "▞"}
	dialogBorder = lipgloss.Border{Top: "╌", Bottom: "╌", Left: "┆", Right: "┆",
		TopLeft: "┌", TopRight: "┐", BottomLeft: "└", BottomRight: "┘"}
)

// verdictStyle is the style for a verdict word.
func (s *Styles) verdictStyle(v string) lipgloss.Style {
	if st, ok := s.Verdict[v]; ok {
		return st
	}
	return s.Muted
}

// verdictBox frames a verdict block with the verdict's border and colour.
func (s *Styles) verdictBox(v string) lipgloss.Style {
	b, ok := s.verdictBorder[v]
	if !ok {
		b = lipgloss.HiddenBorder()
	}
	st := s.verdictStyle(v)
	return s.renderer.NewStyle().Border(b).BorderForeground(st.GetForeground()).Padding(0, 1)
}
