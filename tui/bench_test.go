package tui

import (
	"testing"

	tea "github.com/charmbracelet/bubbletea"

	"github.com/undercool-foundry/undercool/internal/cpuclock"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sample"
)

// BenchmarkLiveView3000 draws the live view (120×40, colour on, the
// real ntcharts canvas) of a cup holding a 3,000-point curve with its
// points marked and its verdict, charts included. Target: at most 5 ms an
// op.
func BenchmarkLiveView3000(b *testing.B) {
	mem := &Memory{Clock: fixedClock}
	f := newTestFeed(sample.Config{NewAnalyzer: newConstructedAnalyzer, Judge: constructedJudge}, mem)
	m := New(Options{Feed: f, Title: "bench", Styles: NewStyles(colourRenderer()), Records: mem, Clock: fixedClock}).resize(120, 40)
	m = play(m, constructedBatches("1", 300, 10, 5)) // 3,000 readings
	if n := len(m.live.cups[0].snap.T); n != 3000 {
		b.Fatalf("%d readings", n)
	}
	m.live.cups[0].drawn = chartCache{} // a full draw each time, charts included
	cpu0 := int64(cpuclock.Used())
	for b.Loop() {
		_ = m.View()
	}
	b.ReportMetric(float64(int64(cpuclock.Used())-cpu0)/float64(b.N), "cpu-ns/op")
}

// BenchmarkLive10Hz is the dashboard's whole work for one reading at 10 Hz
// input: the tracker's update (the real growing-curve analysis,
// arrest.Analyzer, over the whole sample so far), the model's Update (the
// charts drawn when due) and one View, averaged over a whole 300 s
// (3,000-reading) sample. CPU share of one core at 10 Hz =
// 10 × (ns/op) / 1e9.
func BenchmarkLive10Hz(b *testing.B) {
	bs := constructedBatches("1", 300, 10, 1)
	mk := func() (Model, *sample.Tracker) {
		tr := sample.New(sample.Config{Limits: limits.Builtin()})
		return New(Options{Title: "bench", Styles: NewStyles(colourRenderer()), Clock: fixedClock}).resize(120, 40), tr
	}
	m, tr := mk()
	i := 0
	cpu0 := int64(cpuclock.Used())
	for b.Loop() {
		if i == len(bs) {
			m, tr = mk()
			i = 0
		}
		tm, _ := m.Update(updateMsg{tr.Apply(bs[i])})
		m = tm.(Model)
		_ = m.View()
		i++
	}
	// CPU time (user + system, all threads, GC included) rather than wall
	// time, so a busy shared machine inflates the figure less.
	cpu := float64(int64(cpuclock.Used())-cpu0) / float64(b.N)
	b.ReportMetric(cpu, "cpu-ns/op")
	b.ReportMetric(cpu*10/1e9*100, "%core@10Hz")
}

var _ tea.Model = Model{}
