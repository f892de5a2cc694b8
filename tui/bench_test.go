package tui

import (
	"testing"

	tea "github.com/charmbracelet/bubbletea"
)

// BenchmarkLiveView3000 draws the live view (120×40, colour on, the
// real ntcharts canvas) of a cup holding a 3,000-point curve with its
// points marked and its verdict. Target: at most 5 ms an op.
func BenchmarkLiveView3000(b *testing.B) {
	m := New(Options{Title: "bench", Styles: NewStyles(colourRenderer()), Analyzer: constructedAnalyzer, Judge: constructedJudge, Clock: fixedClock}).resize(120, 40)
	m = feed(m, constructedBatches("1", 300, 10, 5)) // 3,000 readings
	if n := len(m.live.cup("1").t); n != 3000 {
		b.Fatalf("%d readings", n)
	}
	c := m.live.cup("1")
	cpu0 := processCPU()
	for b.Loop() {
		c.drawn = chartCache{} // a full draw each time, charts included
		_ = m.View()
	}
	b.ReportMetric(float64(processCPU()-cpu0)/float64(b.N), "cpu-ns/op")
}

// BenchmarkLive10Hz is the dashboard's work for one batch at 10 Hz input:
// one reading in, the real growing-curve analysis (arrest.Analyzer) over
// the whole sample so far, and one redraw, averaged over a whole
// 300 s (3,000-reading) sample. CPU share of one core at 10 Hz =
// 10 × (ns/op) / 1e9.
func BenchmarkLive10Hz(b *testing.B) {
	bs := constructedBatches("1", 300, 10, 1)
	mk := func() Model {
		return New(Options{Title: "bench", Styles: NewStyles(colourRenderer()), Clock: fixedClock}).resize(120, 40)
	}
	m := mk()
	i := 0
	cpu0 := processCPU()
	for b.Loop() {
		if i == len(bs) {
			m, i = mk(), 0
		}
		tm, _ := m.Update(batchMsg{bs[i]})
		m = tm.(Model)
		_ = m.View()
		i++
	}
	// CPU time (user + system, all threads, GC included) rather than wall
	// time, so a busy shared machine inflates the figure less.
	cpu := float64(processCPU()-cpu0) / float64(b.N)
	b.ReportMetric(cpu, "cpu-ns/op")
	b.ReportMetric(cpu*10/1e9*100, "%core@10Hz")
}

var _ tea.Model = Model{}
