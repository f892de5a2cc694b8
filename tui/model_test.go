package tui

import (
	"strings"
	"testing"

	tea "github.com/charmbracelet/bubbletea"
)

// The sample form starts from the last sample (named by the device's line)
// and what the operator types goes to the tracker, for the next sample:
// the sample shown keeps its name.
func TestFormPrefilledAndSentToTheTracker(t *testing.T) {
	m := testModel(t, 100, 30)
	m = play(m, constructedBatches("1", 230, 10, 5)) // a whole sample: the cup waits for the next one
	m = press(m, "s")
	if !m.formOpen || !m.form.forNext {
		t.Fatal("s did not open the form for the next sample")
	}
	if got := m.form.meta(); got.Get("sample") != "L-2417 cup 1" || got.Get("alloy") != "grey-iron" || got.Get("operator") != "Pell Brasswick" {
		t.Fatalf("form not prefilled from the device: %v", got)
	}
	m.form.inputs[0].SetValue("L-2418 cup 1")
	m = press(m, "enter", "enter")
	m.form.inputs[2].SetValue("Odile Flintcaster")
	m = press(m, "enter", "enter") // the last field saves
	if m.formOpen {
		t.Fatal("the form is still open after enter on the last field")
	}
	f := m.opt.Feed.(*testFeed)
	sn, _ := f.tr.Snapshot("1")
	if got := metaText(sn.Next); got != `sample="L-2418 cup 1" alloy="grey-iron" operator="Odile Flintcaster"` {
		t.Errorf("the tracker's next sample is %s", got)
	}
	if c := m.live.activeCup(); sampleName(c.meta()) != "L-2417 cup 1" {
		t.Errorf("cup shows sample %q: the finished sample was relabelled", sampleName(c.meta()))
	}
}

// The DONE cup keeps its sample, alloy and operator on screen when the
// next sample is named, by the form or by the device's line. (Before the
// sample tracker, the next sample's id replaced the header of the finished
// cup, so its verdict read as the next ladle's.)
func TestDoneVerdictNotRelabelled(t *testing.T) {
	m := testModel(t, 100, 30)
	m = play(m, constructedBatches("1", 230, 10, 5))
	before := stripANSI(m.View())
	if !strings.Contains(before, "L-2417 cup 1") || !strings.Contains(before, "MARGINAL") {
		t.Fatalf("no finished sample:\n%s", before)
	}
	m = press(m, "s")
	m.form.inputs[0].SetValue("L-2418 cup 1")
	m.form.inputs[2].SetValue("Tobin Quenchmoor")
	m = press(m, "enter", "enter", "enter", "enter")
	first := constructedBatches("1", 1, 10, 1)[0]
	m = play(m, []Batch{{Items: first.Items[:1], Status: first.Status}}) // the device names a sample too
	v := stripANSI(m.live.View())                                        // the cup (the foot line says the form's id is kept)
	if strings.Contains(v, "L-2418") || strings.Contains(v, "Tobin") || !strings.Contains(v, "L-2417 cup 1") || !strings.Contains(v, "MARGINAL") {
		t.Errorf("the DONE cup was relabelled:\n%s", v)
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
	m := play(testModel(t, 100, 30), constructedBatches("1", 100, 10, 5)[:60])
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

// p asks the session to start a sample on the cup shown.
func TestStartByHand(t *testing.T) {
	m := play(testModel(t, 100, 30), constructedBatches("1", 10, 10, 5)[:1])
	m = press(m, "p")
	if f := m.opt.Feed.(*testFeed); len(f.starts) != 1 || f.starts[0] != "1" {
		t.Errorf("starts %v", f.starts)
	}
}

// Resizes are followed: the view always fills the new size.
func TestFollowsResize(t *testing.T) {
	m := play(testModel(t, 80, 24), constructedBatches("1", 230, 10, 5))
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
