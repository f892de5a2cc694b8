package tui

import (
	"context"
	"strings"

	tea "github.com/charmbracelet/bubbletea"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/forecast"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sample"
)

// Adviser gives the cup model's advice on a finished sample (package
// forecast: what an addition or a wait would do). A fit takes about half a
// second, so the dashboard runs it as a command once the sample is done,
// and shows its answer when it comes.
type Adviser func(ctx context.Context, f sample.Finished, book *limits.Book) []forecast.Prediction

// ForecastAdvice is the Adviser of the commands: forecast.AdviseInput of
// the finished sample's curve with the alloy's additions in the book
// (docs/advice.md).
func ForecastAdvice(ctx context.Context, f sample.Finished, book *limits.Book) []forecast.Prediction {
	in := assess.Input{File: f.Path, Alloy: f.Record.Alloy, Limits: book, Time: f.T, Temp: f.V}
	_, ps := forecast.AdviseInput(ctx, in, forecast.Options{DelayMin: -1})
	return ps
}

// adviceMsg carries the model's advice on one finished sample.
type adviceMsg struct {
	channel string
	sample  int
	preds   []forecast.Prediction
}

// advise is the command that asks the adviser about a finished sample.
func advise(a Adviser, f sample.Finished, book *limits.Book) tea.Cmd {
	return func() tea.Msg {
		return adviceMsg{channel: f.Channel, sample: f.Sample, preds: a(context.Background(), f, book)}
	}
}

// estimateLine is the model's headline advice for a record, in words and
// marked as a model estimate; false when the model has none that applies.
func estimateLine(rec *assess.Record, ps []forecast.Prediction) (string, bool) {
	p, ok := forecast.Headline(*rec, ps)
	if !ok || !p.Applies || p.Text == "" {
		return "", false
	}
	if strings.HasPrefix(strings.ToLower(p.Text), "model estimate") {
		return p.Text + " (not a measurement)", true // the forecast's own words say what it is
	}
	return "model estimate, not a measurement: " + p.Text, true
}
