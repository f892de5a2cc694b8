package tui

import (
	"bytes"
	"context"
	"io"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"
	"github.com/charmbracelet/x/exp/teatest"
	"github.com/muesli/termenv"

	"github.com/undercool-foundry/undercool/acquire"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// A sample from pour to verdict on the SIMULATED melt deck, through the
// real acquirer (line protocol over a pipe) and the real analysis and
// judgement: the dashboard must show the sample recording, then a verdict,
// and keep the sample in its history.
func TestFlowPourToVerdictOnSimulatedDeck(t *testing.T) {
	dir := t.TempDir()
	pr, pw := io.Pipe()
	var once sync.Once
	open := func(context.Context) (io.ReadCloser, error) {
		var rc io.ReadCloser
		once.Do(func() { rc = pr })
		if rc == nil {
			return nil, io.ErrClosedPipe
		}
		return rc, nil
	}
	acq := acquire.New(open, acquire.Config{Port: "simulated deck", Dir: dir})
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var wg sync.WaitGroup
	wg.Add(2)
	go func() { defer wg.Done(); acq.Run(ctx) }()
	go func() {
		defer wg.Done()
		sim.NewDeck(sim.DeckOptions{Seed: 1, Speed: 50}).Run(ctx, pw)
		pw.Close()
	}()
	defer wg.Wait()
	defer cancel()

	mem := &Memory{}
	m := New(Options{Source: acq, Title: "flow", Styles: asciiStyles(), Records: mem, Clock: fixedClock})
	tm := teatest.NewTestModel(t, m, teatest.WithInitialTermSize(100, 30))
	out := tm.Output()
	var seen bytes.Buffer
	wait := func(what string, d time.Duration, ok func(s string) bool) {
		t.Helper()
		teatest.WaitFor(t, out, func(b []byte) bool {
			seen.Write(b)
			return ok(stripANSI(seen.String()))
		}, teatest.WithDuration(d), teatest.WithCheckInterval(50*time.Millisecond))
	}
	wait("recording", 30*time.Second, func(s string) bool { return strings.Contains(s, "RECORDING") || strings.Contains(s, "FREEZING") })
	wait("a verdict", 60*time.Second, func(s string) bool {
		for _, v := range []string{"PASS", "MARGINAL", "FAIL", "INVALID", "NO LIMITS SET"} {
			if strings.Contains(s, v) {
				return true
			}
		}
		return false
	})
	// Quit: at once, or, when the deck has already poured the next cup,
	// after saying yes to the question.
	tm.Send(tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune("q")})
	tm.Send(tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune("y")})
	fm := tm.FinalModel(t, teatest.WithFinalTimeout(20*time.Second)).(Model)
	es, _ := mem.List(context.Background(), "", 10)
	if len(es) < 1 {
		t.Fatalf("no sample kept in the history")
	}
	e := es[len(es)-1]
	if e.Meta.Sample == "" || e.Meta.Alloy == "" {
		t.Errorf("the device's sample form was not taken: %+v", e.Meta)
	}
	if e.Path == "" || !strings.HasSuffix(e.Path, ".csv") {
		t.Errorf("the sample's curve file is %q", e.Path)
	} else if c, err := curvefile.ReadFile(e.Path); err != nil || c.Get("simulated") != "true" {
		t.Errorf("the simulated deck's sample is not marked simulated: %v %v", err, c)
	}
	if e.Record.Verdict == "" || len(e.Time) < 100 {
		t.Errorf("record %q with %d readings", e.Record.Verdict, len(e.Time))
	}
	if fm.live.cup("1").state != StateDone && !fm.live.recording() {
		t.Errorf("cup state %v after the verdict", fm.live.cup("1").state)
	}
}

// An edit of a limit, through the keys, written with limits.Save: the file
// changes, a backup of the old one is kept, and the change is logged.
func TestFlowLimitsEditRoundTrip(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "limits.toml")
	if err := os.WriteFile(path, limits.Example(), 0o644); err != nil {
		t.Fatal(err)
	}
	book, err := limits.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	save := func(_ context.Context, b *limits.Book) (string, error) { return path, limits.Save(path, b) }
	m := New(Options{Styles: asciiStyles(), Limits: book, SaveLimits: save, Clock: fixedClock})
	tm := teatest.NewTestModel(t, m, teatest.WithInitialTermSize(100, 30))
	key := func(s string) { tm.Send(tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune(s)}) }
	key("3")
	// The first row of the first alloy is a pass min; a marginal max that
	// is below it must be refused before anything is saved.
	first := New(Options{Limits: book}).lim
	rows := first.rows()
	r := rows[0]
	tm.Send(tea.KeyMsg{Type: tea.KeyEnter})
	tm.Send(tea.KeyMsg{Type: tea.KeyCtrlU}) // clear the field (textinput: delete before the cursor)
	key("abc")
	tm.Send(tea.KeyMsg{Type: tea.KeyEnter})
	teatest.WaitFor(t, tm.Output(), func(b []byte) bool { return strings.Contains(stripANSI(string(b)), "is not a number") },
		teatest.WithDuration(10*time.Second))
	tm.Send(tea.KeyMsg{Type: tea.KeyCtrlU})
	key("0.05")
	tm.Send(tea.KeyMsg{Type: tea.KeyEnter})
	key("w")
	teatest.WaitFor(t, tm.Output(), func(b []byte) bool { return strings.Contains(stripANSI(string(b)), "saved to") },
		teatest.WithDuration(10*time.Second))
	key("q")
	tm.FinalModel(t, teatest.WithFinalTimeout(10*time.Second))

	again, err := limits.Load(path)
	if err != nil {
		t.Fatalf("the saved file does not load: %v", err)
	}
	al, _ := again.Alloy(first.alloyName())
	got := *r.b.of(al.Metrics[r.metric])
	if got == nil || *got != 0.05 {
		t.Errorf("%s %s %s = %v after saving, want 0.05", first.alloyName(), r.metric, boundNames[r.b], got)
	}
	baks, _ := filepath.Glob(path + ".*.bak")
	if len(baks) != 1 {
		t.Errorf("backups %v, want one", baks)
	}
	if b, err := os.ReadFile(path + ".log"); err != nil || len(b) == 0 {
		t.Errorf("no change log beside the file: %v", err)
	}
}

// The limits editor refuses a marginal band that does not hold the pass
// band, naming the metric.
func TestLimitsEditRefusesBadBand(t *testing.T) {
	m := testModel(t, 100, 30)
	m = press(m, "3")
	rows := m.lim.rows()
	// find a metric's marginal max row with a pass max set
	for i, r := range rows {
		if r.b != margMax {
			continue
		}
		pm, _ := m.lim.value(limitRow{r.metric, passMax})
		if pm == nil {
			continue
		}
		m.lim.sel = i
		m = press(m, "enter")
		m.lim.input.SetValue("-1000")
		m = press(m, "enter")
		if !m.lim.msgBad || !strings.Contains(m.lim.msg, r.metric) {
			t.Fatalf("marginal max -1000 under pass max %g accepted: %q", *pm, m.lim.msg)
		}
		return
	}
	t.Fatal("no metric with a pass max in the built-in examples")
}

// NO_COLOR: the whole screen has no colour escape at all; with colour the
// same screen has them (so the check can fail).
func TestNoColor(t *testing.T) {
	render := func(env []string) string {
		r := lipgloss.NewRenderer(io.Discard, termenv.WithEnvironment(fakeEnv(env)), termenv.WithTTY(true), termenv.WithProfile(-1))
		m := New(Options{Title: "t", Styles: NewStyles(r), Analyzer: constructedAnalyzer, Judge: constructedJudge, Clock: fixedClock}).resize(100, 30)
		return feed(m, constructedBatches("1", 230, 10, 5)).View()
	}
	plain := render([]string{"NO_COLOR=1", "TERM=xterm-256color", "COLORTERM=truecolor"})
	if strings.Contains(plain, "\x1b[") {
		t.Errorf("NO_COLOR output has escape sequences: %q", firstEscape(plain))
	}
	color := render([]string{"TERM=xterm-256color", "COLORTERM=truecolor"})
	if !strings.Contains(color, "\x1b[38;") {
		t.Error("with colour allowed the screen has no colour: the NO_COLOR check proves nothing")
	}
}

type fakeEnv []string

func (e fakeEnv) Environ() []string { return e }
func (e fakeEnv) Getenv(k string) string {
	for _, kv := range e {
		if strings.HasPrefix(kv, k+"=") {
			return kv[len(k)+1:]
		}
	}
	return ""
}

func firstEscape(s string) string {
	i := strings.Index(s, "\x1b[")
	return s[max(0, i-10):min(len(s), i+20)]
}
