package tui

import "github.com/charmbracelet/bubbles/key"

// KeyMap is every key of the dashboard. Keys are single presses (big
// letters, digits, function keys), never chords, so they work with gloves.
type KeyMap struct {
	Live, History, Limits key.Binding
	Help, Quit            key.Binding
	Yes, No               key.Binding

	// live
	Form, Start, Stop, Channel key.Binding
	Verdict                    key.Binding
	Faster, Slower, End        key.Binding
	Fraction                   key.Binding // fs(t) of a finished cup (fraction.go)

	// history and limits
	Up, Down, Open, Back key.Binding
	Left, Right          key.Binding
	Alloy, Metric        key.Binding
	MetricBack           key.Binding
	Edit, Save           key.Binding

	// form
	Next, Prev, Done key.Binding
}

// DefaultKeys is the key map of the dashboard.
func DefaultKeys() KeyMap {
	b := func(help, desc string, keys ...string) key.Binding {
		return key.NewBinding(key.WithKeys(keys...), key.WithHelp(help, desc))
	}
	return KeyMap{
		Live:    b("1", "live", "1", "f1"),
		History: b("2", "history", "2", "f2"),
		Limits:  b("3", "limits", "3", "f3"),
		Help:    b("?", "help", "?"),
		Quit:    b("q", "quit", "q", "ctrl+c"),
		Yes:     b("y", "yes", "y", "Y"),
		No:      b("n", "no", "n", "N", "esc"),

		Form:    b("s", "sample form", "s"),
		Start:   b("p", "start by hand", "p"),
		Stop:    b("x", "stop by hand", "x"),
		Channel: b("c", "next cups", "c"),
		Verdict: b("v", "whole verdict", "v"),
		Faster:  b("+", "faster", "+", "="),
		Slower:  b("-", "slower", "-", "_"),
		End:     b("e", "to the end", "e"),

		Fraction: b("f", "fs(t)", "f"),

		Up:         b("↑", "up", "up", "k"),
		Down:       b("↓", "down", "down", "j"),
		Left:       b("←", "left", "left", "h"),
		Right:      b("→", "right", "right", "l"),
		Open:       b("enter", "open", "enter"),
		Back:       b("esc", "back", "esc", "backspace"),
		Alloy:      b("a", "alloy", "a"),
		Metric:     b("m", "next metric", "m"),
		MetricBack: b("M", "previous metric", "M"),
		Edit:       b("enter", "edit", "enter"),
		Save:       b("w", "write", "w"),

		Next: b("tab", "next field", "tab", "down"),
		Prev: b("shift+tab", "previous field", "shift+tab", "up"),
		Done: b("enter", "done", "enter"),
	}
}
