package tui

import (
	"fmt"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	"github.com/charmbracelet/bubbles/textinput"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"
	"github.com/undercool-foundry/undercool/internal/sample"
)

// formDoneMsg carries the filled-in sample form.
type formDoneMsg struct {
	channel string
	meta    sample.Meta
}

// formClosedMsg says the form was left without changes.
type formClosedMsg struct{}

// formLabels name the form's fields, the sample keys sample.FormKeys.
var formLabels = [4]string{"sample / ladle", "alloy", "operator", "note"}

// formPane is the sample form: sample or ladle id, alloy, operator, note.
type formPane struct {
	st      *Styles
	keys    *KeyMap
	inputs  [4]textinput.Model
	focus   int
	channel string
	forNext bool // a sample is recording or shown finished: the form is for the next one
	alloys  []string
	err     string
}

func newFormPane(st *Styles, keys *KeyMap, alloys []string) formPane {
	f := formPane{st: st, keys: keys}
	for i := range f.inputs {
		in := textinput.New()
		in.Prompt = ""
		in.CharLimit = 64
		in.Width = 30
		f.inputs[i] = in
	}
	return f.setAlloys(alloys)
}

// setAlloys takes the alloys of the limits book in use.
func (f formPane) setAlloys(alloys []string) formPane {
	f.alloys = alloys
	f.inputs[1].Placeholder = strings.Join(alloys, ", ")
	return f
}

// open shows the form for a channel, prefilled.
func (f formPane) open(channel string, m sample.Meta, forNext bool) (formPane, tea.Cmd) {
	f.channel, f.err, f.focus, f.forNext = channel, "", 0, forNext
	for i, k := range sample.FormKeys() {
		v := m.Get(k)
		if k == "sample" {
			v = sampleName(m)
		}
		f.inputs[i].SetValue(v)
		f.inputs[i].CursorEnd()
		f.inputs[i].Blur()
	}
	return f, f.inputs[0].Focus()
}

func (f formPane) meta() sample.Meta {
	var m sample.Meta
	for i, k := range sample.FormKeys() {
		m = m.With(k, strings.TrimSpace(f.inputs[i].Value()))
	}
	return m
}

// validate checks the alloy is one the limits know.
func (f formPane) validate(m sample.Meta) error {
	alloy := m.Get("alloy")
	if alloy == "" {
		return nil
	}
	for _, a := range f.alloys {
		if a == alloy {
			return nil
		}
	}
	return fmt.Errorf("alloy %q is not in the limits; use one of %s", alloy, strings.Join(f.alloys, ", "))
}

func (f formPane) move(d int) (formPane, tea.Cmd) {
	f.inputs[f.focus].Blur()
	f.focus = (f.focus + d + len(f.inputs)) % len(f.inputs)
	return f, f.inputs[f.focus].Focus()
}

func (f formPane) Update(msg tea.Msg) (formPane, tea.Cmd) {
	if k, ok := msg.(tea.KeyMsg); ok {
		switch {
		case k.Type == tea.KeyEsc:
			return f, func() tea.Msg { return formClosedMsg{} }
		case key.Matches(k, f.keys.Next):
			return f.move(1)
		case key.Matches(k, f.keys.Prev):
			return f.move(-1)
		case key.Matches(k, f.keys.Done):
			if f.focus < len(f.inputs)-1 {
				return f.move(1)
			}
			m := f.meta()
			if err := f.validate(m); err != nil {
				f.err = err.Error()
				f.inputs[f.focus].Blur()
				f.focus = 1
				return f, f.inputs[1].Focus()
			}
			ch := f.channel
			return f, func() tea.Msg { return formDoneMsg{ch, m} }
		}
	}
	var cmd tea.Cmd
	f.inputs[f.focus], cmd = f.inputs[f.focus].Update(msg)
	return f, cmd
}

func (f formPane) View() string {
	title := "SAMPLE FORM · CUP " + f.channel
	if f.forNext {
		title += " · NEXT SAMPLE"
	}
	lines := []string{f.st.Title.Render(title), ""}
	for i, in := range f.inputs {
		lab := f.st.Label.Render(fmt.Sprintf("%-15s", formLabels[i]))
		if i == f.focus {
			lab = f.st.Mark.Render(fmt.Sprintf("%-15s", "▸ "+formLabels[i]))
		}
		lines = append(lines, lab+" "+in.View())
	}
	lines = append(lines, "")
	if f.err != "" {
		lines = append(lines, wrapText(f.st.Error, f.err, 48)...)
	}
	lines = append(lines, f.st.Muted.Render("enter: next / save on the last field · esc: leave"))
	return f.st.Dialog.Render(lipgloss.JoinVertical(lipgloss.Left, lines...))
}

func (f formPane) ShortHelp() []key.Binding {
	return []key.Binding{f.keys.Done, f.keys.Next, f.keys.Back}
}

func (f formPane) FullHelp() [][]key.Binding {
	return [][]key.Binding{{f.keys.Next, f.keys.Prev, f.keys.Done, f.keys.Back}}
}
