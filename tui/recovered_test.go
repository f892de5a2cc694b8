package tui

import (
	"context"
	"os"
	"path/filepath"
	"testing"

	tea "github.com/charmbracelet/bubbletea"

	"github.com/undercool-foundry/undercool/internal/curvefile"
)

// A sample the acquirer recovered after a crash is analysed and kept in the
// history like any finished sample, without changing the form's prefill.
func TestRecoveredSampleIsKept(t *testing.T) {
	tm, v := constructedCurve(240, 5)
	path := filepath.Join(t.TempDir(), "L-2417-cup1.csv")
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	c := &curvefile.Curve{Meta: []curvefile.Meta{{Key: "alloy", Value: "grey-iron"}, {Key: "sample", Value: "L-2417 cup 1"},
		{Key: "operator", Value: "Tobin Quenchmoor"}, {Key: "interrupted", Value: "true"}}, Time: tm, Temp: v}
	if err := curvefile.WriteCurve(f, c); err != nil {
		t.Fatal(err)
	}
	f.Close()

	recs := &Memory{}
	m := New(Options{Records: recs, ReadCurve: curvefile.ReadFile, Judge: constructedJudge, Styles: asciiStyles()})
	_, cmd := m.Update(batchMsg{Batch{Events: []Event{{Kind: EventRecovered, Channel: "1", Path: path, Text: "recovered"}}}})
	var done *sampleDoneMsg
	for _, msg := range flattenCmds(cmd) {
		if d, ok := msg.(sampleDoneMsg); ok {
			done = &d
		}
	}
	if done == nil || !done.recovered || done.e.Path != path || done.e.Meta.Operator != "Tobin Quenchmoor" {
		t.Fatalf("recovered sample message %+v", done)
	}
	if len(done.e.Time) != len(tm) {
		t.Errorf("recovered curve has %d readings, want %d", len(done.e.Time), len(tm))
	}
	m2, store := m.Update(*done)
	flattenCmds(store)
	es, _ := recs.List(context.Background(), "", 10)
	if len(es) != 1 || es[0].Path != path {
		t.Fatalf("history after recovery: %+v", es)
	}
	if m2.(Model).live.prefill.Operator == "Tobin Quenchmoor" {
		t.Error("a recovered sample must not become the form's prefill")
	}
}

// flattenCmds runs a command and the commands of any batch it returns, and
// gives the messages that are not batches.
func flattenCmds(cmd tea.Cmd) []tea.Msg {
	if cmd == nil {
		return nil
	}
	msg := cmd()
	if b, ok := msg.(tea.BatchMsg); ok {
		var out []tea.Msg
		for _, c := range b {
			out = append(out, flattenCmds(c)...)
		}
		return out
	}
	return []tea.Msg{msg}
}

// The charts are drawn again once the sample has grown by chartEveryS of
// its own time, or at once when a point settles or the size changes; in
// between the last drawing is reused.
func TestChartsRedrawnBySampleTime(t *testing.T) {
	m := New(Options{Title: "t", Styles: asciiStyles(), Analyzer: constructedAnalyzer, Judge: constructedJudge, Clock: fixedClock}).resize(120, 40)
	bs := constructedBatches("1", 120, 10, 1) // one reading a batch, 0.1 s apart
	for _, b := range bs[:300] {
		tm, _ := m.Update(batchMsg{b})
		m = tm.(Model)
	}
	m.View()
	c := m.live.cup("1")
	at := c.drawn.atS
	for _, b := range bs[300:303] { // 0.3 s later: the same drawing
		tm, _ := m.Update(batchMsg{b})
		m = tm.(Model)
		m.View()
	}
	if c.drawn.atS != at {
		t.Fatalf("charts redrawn after %.1f s of sample time, want reuse below %.1f s", c.drawn.atS-at, chartEveryS)
	}
	for _, b := range bs[303:306] { // 0.6 s in all: drawn again
		tm, _ := m.Update(batchMsg{b})
		m = tm.(Model)
		m.View()
	}
	if c.drawn.atS <= at {
		t.Fatalf("charts not redrawn after %.1f s of sample time", c.elapsed-at)
	}
	old := c.drawn.key
	m = m.resize(100, 30)
	m.View()
	if c.drawn.key == old {
		t.Errorf("charts not redrawn for the new size (key %+v)", c.drawn.key)
	}
}
