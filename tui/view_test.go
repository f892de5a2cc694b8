package tui

import (
	"flag"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	tea "github.com/charmbracelet/bubbletea"

	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sample"
)

// updating reports -update (the flag is registered by x/exp/golden, which
// teatest uses; `go test ./tui -update` rewrites our golden files too).
func updating() bool {
	f := flag.Lookup("update")
	return f != nil && f.Value.String() == "true"
}

// fixedClock is a clock that always says 09:41 on the test day: views must
// not depend on the real time.
func fixedClock() time.Time { return time.Date(2026, 3, 2, 9, 41, 0, 0, time.UTC) }

// testModel is a dashboard with no colour, the constructed analyzer and
// judge in its tracker (a testFeed) and a fixed clock, fed nothing yet.
func testModel(t testing.TB, w, h int) Model {
	t.Helper()
	book, err := limits.Parse([]byte(constructedLimits), "constructed.toml")
	if err != nil {
		t.Fatal(err)
	}
	return testModelWith(book, w, h)
}

func testModelWith(book *limits.Book, w, h int) Model {
	mem := &Memory{Clock: fixedClock}
	f := newTestFeed(sample.Config{Limits: book, NewAnalyzer: newConstructedAnalyzer, Judge: constructedJudge}, mem)
	m := New(Options{Feed: f, Title: "test deck", Styles: asciiStyles(), Limits: book, Records: mem, Clock: fixedClock})
	return runCmds(m.resize(w, h), nil)
}

// constructedLimits is a CONSTRUCTED limits book for screen tests (not
// advice for any shop), so the screens do not follow the shipped examples.
const constructedLimits = `
version = "constructed-1"

[alloy.grey-iron]
family = "iron"

[alloy.grey-iron.metric.recalescence_c]
pass_max = 6.0
marginal_max = 8.0
high = "constructed advice: consider more inoculant"

[alloy.grey-iron.metric.undercooling_c]
pass_min = 2.0
pass_max = 14.0
marginal_min = 1.0
marginal_max = 18.0
low = "constructed advice: consider checking chill"
high = "constructed advice: consider later inoculation"
`

// play runs batches through the model's test session and the updates
// through Update, running the commands as the program would.
func play(m Model, bs []Batch) Model {
	f := m.opt.Feed.(*testFeed)
	for _, b := range bs {
		m = f.deliver(m, f.tr.Apply(b))
	}
	return m
}

// runCmds runs a command tree synchronously, feeding back the messages
// the dashboard itself made (not the waits for updates), and the updates
// the test session made meanwhile.
func runCmds(m Model, cmd tea.Cmd) Model {
	if cmd != nil {
		switch msg := cmd().(type) {
		case tea.BatchMsg:
			for _, c := range msg {
				if c != nil {
					m = runCmds(m, c)
				}
			}
		case historyLoadedMsg, limitsSavedMsg, formDoneMsg, formClosedMsg, curveLoadedMsg, speedMsg, adviceMsg:
			tm, c := m.Update(msg)
			m = runCmds(tm.(Model), c)
		}
	}
	if f, ok := m.opt.Feed.(*testFeed); ok && len(f.queued) > 0 {
		u := f.queued[0]
		f.queued = f.queued[1:]
		m = f.deliver(m, u)
	}
	return m
}

func press(m Model, keys ...string) Model {
	for _, k := range keys {
		var msg tea.KeyMsg
		switch k {
		case "enter":
			msg = tea.KeyMsg{Type: tea.KeyEnter}
		case "esc":
			msg = tea.KeyMsg{Type: tea.KeyEsc}
		case "tab":
			msg = tea.KeyMsg{Type: tea.KeyTab}
		case "down":
			msg = tea.KeyMsg{Type: tea.KeyDown}
		case "up":
			msg = tea.KeyMsg{Type: tea.KeyUp}
		case "backspace":
			msg = tea.KeyMsg{Type: tea.KeyBackspace}
		default:
			msg = tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune(k)}
		}
		tm, cmd := m.Update(msg)
		m = runCmds(tm.(Model), cmd)
	}
	return m
}

// twoCups interleaves two channels' constructed samples.
func twoCups(seconds float64) []Batch {
	a := constructedBatches("1", seconds, 10, 5)
	b := constructedBatches("2", seconds*0.6, 10, 5)
	var out []Batch
	for i := range a {
		x := a[i]
		if i < len(b) {
			x.Items = append(x.Items, b[i].Items...)
		}
		x.Status.Channels = map[string]feed.ChannelStatus{"1": {Recording: true}, "2": {Recording: true}}
		out = append(out, x)
	}
	return out
}

func checkGolden(t *testing.T, name, got string) {
	t.Helper()
	got = stripANSI(got)
	path := filepath.Join("testdata", name+".golden")
	if updating() {
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test ./tui -update)", err)
	}
	if got != string(want) {
		t.Errorf("%s differs from %s (run go test ./tui -update if the change is meant):\n%s", name, path, got)
	}
}

func TestGoldenScreens(t *testing.T) {
	sizes := []struct{ w, h int }{{80, 24}, {120, 40}}
	screens := []struct {
		name string
		make func(m Model) Model
	}{
		{"waiting", func(m Model) Model { return m }},
		{"live-recording", func(m Model) Model { return play(m, constructedBatches("1", 100, 10, 5)[:140]) }},
		{"live-verdict", func(m Model) Model { return play(m, constructedBatches("1", 230, 10, 5)) }},
		{"live-two-cups", func(m Model) Model { return play(m, twoCups(120)) }},
		{"history", func(m Model) Model {
			m = play(m, constructedBatches("1", 230, 10, 5))
			m = play(m, constructedBatchesAt("1", 300, 200, 10, 5))
			m = play(m, constructedBatchesAt("1", 600, 215, 10, 5))
			return press(m, "2")
		}},
		{"history-open", func(m Model) Model {
			return press(play(m, constructedBatches("1", 230, 10, 5)), "2", "enter")
		}},
		{"limits", func(m Model) Model { return press(m, "3") }},
		{"form", func(m Model) Model { return press(play(m, constructedBatches("1", 20, 10, 5)[:2]), "s") }},
		{"help", func(m Model) Model { return press(m, "?") }},
		{"quit-ask", func(m Model) Model { return press(play(m, constructedBatches("1", 100, 10, 5)[:60]), "q") }},
	}
	for _, sz := range sizes {
		for _, sc := range screens {
			name := sc.name + "-" + strconv.Itoa(sz.w) + "x" + strconv.Itoa(sz.h)
			t.Run(name, func(t *testing.T) {
				m := sc.make(testModel(t, sz.w, sz.h))
				v := m.View()
				checkScreen(t, v, sz.w, sz.h)
				checkGolden(t, name, v)
			})
		}
	}
}

// The limits shown are the book's: every metric of the first alloy of the
// built-in examples has its row, in words, on the limits screen, at 120×40
// and at 80×24.
func TestLimitsScreenShowsBook(t *testing.T) {
	b := limits.Builtin()
	for _, sz := range [][2]int{{120, 40}, {80, 24}} {
		m := New(Options{Styles: asciiStyles(), Limits: b, Clock: fixedClock}).resize(sz[0], sz[1])
		m = press(m, "3")
		v := stripANSI(m.View())
		al, ok := b.Alloy(m.lim.alloyName())
		if !ok {
			t.Fatalf("alloy %q not in the book", m.lim.alloyName())
		}
		for name := range al.Metrics {
			if !strings.Contains(v, metricLabel(name)) {
				t.Errorf("metric %s (%s) of %s not shown at %v:\n%s", name, metricLabel(name), al.Name, sz, v)
			}
		}
	}
}
