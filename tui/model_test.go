package tui

import (
	"strings"
	"sync"
	"testing"

	tea "github.com/charmbracelet/bubbletea"

	"github.com/undercool-foundry/undercool/internal/curvefile"
)

// fakeSource records what the dashboard asks of the acquirer.
type fakeSource struct {
	mu     sync.Mutex
	ch     chan Batch
	meta   map[string][]curvefile.Meta
	starts []string
}

func (f *fakeSource) Batches() <-chan Batch { return f.ch }
func (f *fakeSource) SetMeta(ch string, m []curvefile.Meta) {
	f.mu.Lock()
	defer f.mu.Unlock()
	if f.meta == nil {
		f.meta = map[string][]curvefile.Meta{}
	}
	f.meta[ch] = m
}
func (f *fakeSource) Start(ch string) { f.mu.Lock(); f.starts = append(f.starts, ch); f.mu.Unlock() }
func (f *fakeSource) Stop(string)     {}

// The sample form starts from the device's info line, and what the
// operator types goes to the acquirer for the next raw log.
func TestFormPrefilledAndSentToAcquirer(t *testing.T) {
	src := &fakeSource{}
	m := New(Options{Source: src, Styles: asciiStyles(), Analyzer: constructedAnalyzer, Judge: constructedJudge, Clock: fixedClock}).resize(100, 30)
	m = feed(m, constructedBatches("1", 230, 10, 5)) // a whole sample: the cup waits for the next one
	m = press(m, "s")
	if !m.formOpen {
		t.Fatal("s did not open the form")
	}
	if got := m.form.meta(); got.Sample != "L-2417 cup 1" || got.Alloy != "grey-iron" || got.Operator != "Pell Brasswick" {
		t.Fatalf("form not prefilled from the device: %+v", got)
	}
	m.form.inputs[0].SetValue("L-2418 cup 1")
	m = press(m, "enter", "enter")
	m.form.inputs[2].SetValue("Odile Flintcaster")
	m = press(m, "enter", "enter") // the last field saves
	if m.formOpen {
		t.Fatal("the form is still open after enter on the last field")
	}
	want := "sample=L-2418 cup 1 alloy=grey-iron operator=Odile Flintcaster"
	var got []string
	for _, kv := range src.meta["1"] {
		got = append(got, kv.Key+"="+kv.Value)
	}
	if strings.Join(got, " ") != want {
		t.Errorf("acquirer got %q, want %q", strings.Join(got, " "), want)
	}
	if c := m.live.cup("1"); c.meta.Sample != "L-2418 cup 1" {
		t.Errorf("cup shows sample %q", c.meta.Sample)
	}
}

// An alloy the limits do not know is refused in the form.
func TestFormRefusesUnknownAlloy(t *testing.T) {
	m := testModel(t, 100, 30)
	m = press(m, "s")
	m.form.inputs[1].SetValue("unobtainium")
	m = press(m, "enter", "enter", "enter", "enter")
	if !m.formOpen || !strings.Contains(m.form.err, "unobtainium") {
		t.Fatalf("unknown alloy accepted (open %v, err %q)", m.formOpen, m.form.err)
	}
}

// q while a sample records asks first; n keeps recording, y quits.
func TestQuitAsksWhileRecording(t *testing.T) {
	m := feed(testModel(t, 100, 30), constructedBatches("1", 100, 10, 5)[:60])
	tm, cmd := m.Update(tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune("q")})
	m = tm.(Model)
	if cmd != nil || !m.asking {
		t.Fatal("q quit while recording without asking")
	}
	m = press(m, "n")
	if m.asking {
		t.Fatal("n did not close the question")
	}
	m = press(m, "q")
	_, cmd = m.Update(tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune("y")})
	if cmd == nil {
		t.Fatal("y did not quit")
	}
	if _, ok := cmd().(tea.QuitMsg); !ok {
		t.Fatal("y did not quit")
	}
}

// p asks the acquirer to start a sample on the cup shown.
func TestStartByHand(t *testing.T) {
	src := &fakeSource{}
	m := New(Options{Source: src, Styles: asciiStyles(), Clock: fixedClock}).resize(100, 30)
	m = feed(m, constructedBatches("1", 10, 10, 5)[:1])
	press(m, "p")
	if len(src.starts) != 1 || src.starts[0] != "1" {
		t.Errorf("starts %v", src.starts)
	}
}

// Resizes are followed: the view always fills the new size.
func TestFollowsResize(t *testing.T) {
	m := feed(testModel(t, 80, 24), constructedBatches("1", 230, 10, 5))
	for _, sz := range [][2]int{{80, 24}, {132, 43}, {100, 30}, {200, 60}} {
		tm, _ := m.Update(tea.WindowSizeMsg{Width: sz[0], Height: sz[1]})
		m = tm.(Model)
		lines := strings.Split(m.View(), "\n")
		if len(lines) != sz[1] {
			t.Errorf("%dx%d: %d lines", sz[0], sz[1], len(lines))
		}
		for i, l := range lines {
			if n := len([]rune(stripANSI(l))); n > sz[0] {
				t.Errorf("%dx%d: line %d is %d wide", sz[0], sz[1], i, n)
			}
		}
	}
}
