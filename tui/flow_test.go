package tui

import (
	"bytes"
	"context"
	"io"
	"os"
	"path/filepath"
	"regexp"
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
	"github.com/undercool-foundry/undercool/internal/sample"
	"github.com/undercool-foundry/undercool/internal/session"
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
	mem := &Memory{Clock: fixedClock}
	sess := session.New(acq, sample.New(sample.Config{}), session.Options{Finished: mem.Add})
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var wg sync.WaitGroup
	wg.Add(3)
	go func() { defer wg.Done(); acq.Run(ctx) }()
	go func() { defer wg.Done(); sess.Run() }()
	go func() {
		defer wg.Done()
		sim.NewDeck(sim.DeckOptions{Seed: 1, Speed: 50}).Run(ctx, pw)
		pw.Close()
	}()
	defer wg.Wait()
	defer cancel()

	m := New(Options{Feed: sess, Title: "flow", Styles: asciiStyles(), Records: mem, Clock: fixedClock})
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
	if e.Meta.Get("sample") == "" || e.Meta.Get("alloy") == "" {
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
	if c := fm.live.activeCup(); c.state() != sample.Done && !fm.live.recording() {
		t.Errorf("cup state %v after the verdict", c.state())
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
		mem := &Memory{Clock: fixedClock}
		f := newTestFeed(sample.Config{NewAnalyzer: newConstructedAnalyzer, Judge: constructedJudge}, mem)
		m := New(Options{Feed: f, Title: "t", Styles: NewStyles(r), Records: mem, Clock: fixedClock}).resize(100, 30)
		return play(m, constructedBatches("1", 230, 10, 5)).View()
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

// The limits editor works on a copy of the book, checked and swapped in
// when its save is written: pressing w again while a slow save runs, and
// editing during it, neither touch the book being saved nor the one in
// use (go test -race watches the saver read its book while the keys
// arrive). Both edits end up in the file, and the saved book is the one
// the session judges by. (Before, the editor wrote into the shared book
// while the save read it on another goroutine: a data race.)
func TestLimitsSavedTwiceWithoutRace(t *testing.T) {
	path := filepath.Join(t.TempDir(), "limits.toml")
	if err := os.WriteFile(path, limits.Example(), 0o644); err != nil {
		t.Fatal(err)
	}
	book, err := limits.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	var mu sync.Mutex
	saves := 0
	gate := make(chan struct{}) // the first save waits for the test's edits
	save := func(_ context.Context, b *limits.Book) (string, error) {
		for range 200 { // a slow save: the book read over and over
			_ = b.Validate()
		}
		<-gate
		mu.Lock()
		saves++
		mu.Unlock()
		return path, limits.Save(path, b)
	}
	mem := &Memory{Clock: fixedClock}
	f := &raceFeed{}
	m := New(Options{Feed: f, Styles: asciiStyles(), Limits: book, SaveLimits: save, Records: mem, Clock: fixedClock})
	tm := teatest.NewTestModel(t, m, teatest.WithInitialTermSize(100, 30))
	key := func(s string) { tm.Send(tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune(s)}) }
	key("3")
	rows := m.lim.rows()
	edit := func(v string) {
		tm.Send(tea.KeyMsg{Type: tea.KeyEnter})
		tm.Send(tea.KeyMsg{Type: tea.KeyCtrlU})
		key(v)
		tm.Send(tea.KeyMsg{Type: tea.KeyEnter})
	}
	edit("0.05")
	key("w")
	key("w")     // pressed twice: refused while the save runs
	key("l")     // the next bound
	edit("0.07") // edited during the save
	teatest.WaitFor(t, tm.Output(), func(b []byte) bool { return strings.Contains(stripANSI(string(b)), "0.07 *") },
		teatest.WithDuration(20*time.Second))
	close(gate)
	teatest.WaitFor(t, tm.Output(), func(b []byte) bool { return strings.Contains(stripANSI(string(b)), "saved to") },
		teatest.WithDuration(20*time.Second))
	key("w") // the second edit, saved now: its row loses the '*' of an unsaved edit
	saved := regexp.MustCompile(regexp.QuoteMeta(metricLabel(rows[1].metric)) + `.* \[0\.07\]`)
	teatest.WaitFor(t, tm.Output(), func(b []byte) bool { return saved.MatchString(stripANSI(string(b))) },
		teatest.WithDuration(20*time.Second))
	key("q")
	fm := tm.FinalModel(t, teatest.WithFinalTimeout(10*time.Second)).(Model)
	again, err := limits.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	al, _ := again.Alloy(m.lim.alloyName())
	for i, want := range []float64{0.05, 0.07} {
		r := rows[i]
		if got := *r.b.of(al.Metrics[r.metric]); got == nil || *got != want {
			t.Errorf("%s %s = %v in the file, want %v", r.metric, boundNames[r.b], got, want)
		}
	}
	if saves != 2 || len(fm.lim.pending) != 0 || fm.opt.Limits == book {
		t.Errorf("%d saves, %d edits pending, the book in use swapped: %v", saves, len(fm.lim.pending), fm.opt.Limits != book)
	}
	f.mu.Lock()
	defer f.mu.Unlock()
	if len(f.limits) != 2 || f.limits[1] != fm.opt.Limits {
		t.Errorf("the session was given %d books, not the one in use", len(f.limits))
	}
	// the book first loaded was never written to
	if b0 := book.Alloys[m.lim.alloyName()].Metrics[rows[0].metric]; *rows[0].b.of(b0) != nil && **rows[0].b.of(b0) == 0.05 {
		t.Error("the edit went into the book in use")
	}
}

// raceFeed is a session without a source, for the limits test: it keeps
// the books it is given.
type raceFeed struct {
	mu     sync.Mutex
	limits []*limits.Book
}

func (f *raceFeed) Updates() <-chan sample.Update { return nil }
func (f *raceFeed) SetForm(string, sample.Meta)   {}
func (f *raceFeed) SetLimits(b *limits.Book) {
	f.mu.Lock()
	f.limits = append(f.limits, b)
	f.mu.Unlock()
}
func (f *raceFeed) Start(string) {}
func (f *raceFeed) Stop(string)  {}
