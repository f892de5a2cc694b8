//go:build linux

package main

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/creack/pty"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sim"
	"github.com/undercool-foundry/undercool/internal/store"
)

// These tests cross the boundaries a sample passes on its way from the
// port to the screen and the records: a fake amplifier on a
// pseudo-terminal, the real acquirer, the real dashboard (on a second
// pseudo-terminal, as an operator's terminal) or its headless lines, the
// real analysis and the real records database. They go through runMain,
// as a user would.

// fakeAmp is a SIMULATED amplifier on a pseudo-terminal: it writes the line
// protocol with device times, as fast as the terminal takes it.
type fakeAmp struct {
	w    *os.File
	name string
	ms   uint64 // device time of the next reading
	last float64
}

func newFakeAmp(t *testing.T) *fakeAmp {
	m, name := acqPTY(t)
	return &fakeAmp{w: m, name: name, last: 25}
}

// line sends one line. Write errors end nothing: the amplifier writes on
// after its reader has gone (as a real one does), until the test closes it.
func (a *fakeAmp) line(s string) { io.WriteString(a.w, s+"\n") }

// idle sends s seconds of room-temperature readings at 10 Hz (a bead
// cooling in air towards 25 °C).
func (a *fakeAmp) idle(s float64) {
	var b bytes.Buffer
	for i := 0; i < int(s*10); i++ {
		a.last = 25 + (a.last-25)*math.Exp(-1/30.0)
		fmt.Fprintf(&b, "ms=%d c=%.2f\n", a.ms, a.last)
		a.ms += 100
	}
	a.w.Write(b.Bytes())
}

// cup sends the readings of a simulated cup from index from to to (10 Hz).
func (a *fakeAmp) cup(out sim.Output, from, to int) {
	var b bytes.Buffer
	for i := from; i < min(to, len(out.Temp)); i++ {
		a.last = out.Temp[i]
		fmt.Fprintf(&b, "ms=%d c=%.2f\n", a.ms, a.last)
		a.ms += 100
	}
	a.w.Write(b.Bytes())
}

// paced sends what f writes at about 200 times real time (2 s of 10 Hz
// readings every 10 ms), as a device that sends as it measures, until
// stop is closed; what comes after the last write of f is idle readings.
// A burst of minutes of readings at once would run ahead of the tracker's
// word (a stop arrives milliseconds after the readings it follows).
func (a *fakeAmp) paced(stop <-chan struct{}, f func(emit func(float64))) {
	var b bytes.Buffer
	n := 0
	flush := func() {
		a.w.Write(b.Bytes())
		b.Reset()
		select {
		case <-stop:
		case <-time.After(10 * time.Millisecond):
		}
	}
	emit := func(v float64) {
		a.last = v
		fmt.Fprintf(&b, "ms=%d c=%.2f\n", a.ms, v)
		a.ms += 100
		if n++; n%20 == 0 {
			flush()
		}
	}
	f(emit)
	for {
		select {
		case <-stop:
			return
		default:
		}
		emit(25 + (a.last-25)*math.Exp(-1/30.0))
	}
}

// simulatedReadings is a SIMULATED cup (internal/sim) of the alloy at 10 Hz,
// poured 3 s into its readings.
func simulatedReadings(t *testing.T, alloy string, seed uint64) sim.Output {
	t.Helper()
	p, err := sim.Preset(alloy, 0.8, seed)
	if err != nil {
		t.Fatal(err)
	}
	p.Logger.RateHz = 10
	p.Logger.NoiseC = 0.05
	return sim.Simulate(p)
}

// logWatch waits on the dashboard's log file.
type logWatch struct {
	t    *testing.T
	path string
}

// wait returns once the log holds n lines containing s (polled; the
// deadline only bounds a failing test).
func (l logWatch) wait(s string, n int) {
	l.t.Helper()
	deadline := time.Now().Add(60 * time.Second)
	for {
		b, _ := os.ReadFile(l.path)
		if strings.Count(string(b), s) >= n {
			return
		}
		if time.Now().After(deadline) {
			l.t.Fatalf("the log never held %d × %q:\n%s", n, s, b)
		}
		time.Sleep(20 * time.Millisecond)
	}
}

// terminal is an operator's terminal on a pseudo-terminal: the dashboard
// reads its keys from it and draws on it.
type terminal struct {
	master, slave *os.File
	mu            sync.Mutex
	screen        bytes.Buffer // everything drawn, escapes stripped
}

var escapes = regexp.MustCompile("\x1b(\\[[0-9;?<>=]*[ -/]*[@-~]|\\][^\x07\x1b]*(\x07|\x1b\\\\)|[()][0-9A-Za-z]|[=>78DEHMNOZc])")

func newTerminal(t *testing.T) *terminal {
	t.Helper()
	m, s, err := pty.Open()
	if err != nil {
		t.Fatal(err)
	}
	if err := pty.Setsize(m, &pty.Winsize{Rows: 30, Cols: 100}); err != nil {
		t.Fatal(err)
	}
	term := &terminal{master: m, slave: s}
	go func() {
		r := bufio.NewReader(m)
		buf := make([]byte, 4096)
		for {
			n, err := r.Read(buf)
			term.mu.Lock()
			term.screen.Write(escapes.ReplaceAll(buf[:n], nil))
			term.mu.Unlock()
			if err != nil {
				return
			}
		}
	}()
	t.Cleanup(func() { s.Close(); m.Close() })
	return term
}

func (term *terminal) keys(s string) { term.master.WriteString(s) }

// waitScreen returns once s has been drawn (polled).
func (term *terminal) waitScreen(t *testing.T, s string) {
	t.Helper()
	deadline := time.Now().Add(60 * time.Second)
	for {
		term.mu.Lock()
		ok := strings.Contains(term.screen.String(), s)
		term.mu.Unlock()
		if ok {
			return
		}
		if time.Now().After(deadline) {
			t.Fatalf("%q never drawn", s)
		}
		time.Sleep(20 * time.Millisecond)
	}
}

// monitorOnTerminal runs `undercool monitor` on the fake amplifier with the
// dashboard on term, in the background; wait returns its exit status.
func monitorOnTerminal(t *testing.T, amp *fakeAmp, term *terminal, data string, extra ...string) (wait func() int) {
	t.Helper()
	env := &environ{stdin: term.slave, stdout: term.slave, stderr: io.Discard, getenv: func(string) string { return "" }}
	done := make(chan int, 1)
	args := append([]string{"monitor", "--port", amp.name, "--data", data}, extra...)
	go func() { done <- runMain(context.Background(), env, args) }()
	return func() int {
		select {
		case code := <-done:
			return code
		case <-time.After(60 * time.Second):
			term.mu.Lock()
			scr := term.screen.String()
			term.mu.Unlock()
			t.Fatalf("monitor did not exit; the screen's last 3000 bytes:\n%s", scr[max(0, len(scr)-3000):])
			return -1
		}
	}
}

// storedSamples is every sample in the records database at path, oldest
// first.
func storedSamples(t *testing.T, path string) []store.Entry {
	t.Helper()
	db, err := store.Open(context.Background(), path)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	hist, err := db.History(context.Background(), store.Filter{Full: true})
	if err != nil {
		t.Fatal(err)
	}
	sort.Slice(hist, func(i, j int) bool { return hist[i].Sample.ID < hist[j].Sample.ID })
	return hist
}

// quitKeys quit the dashboard, saying yes when it asks because a sample is
// recording. Runes that arrive together reach the dashboard as one key
// message, so a control key (ctrl+@, which does nothing) separates them.
const quitKeys = "q\x00y"

// formKeys fills in the dashboard's sample form (s opens it; ctrl+u clears
// a field; enter moves on and saves on the last field).
func formKeys(sample, alloy, operator string) string {
	return "s" + "\x15" + sample + "\r" + "\x15" + alloy + "\r" + "\x15" + operator + "\r" + "\r"
}

// The sample form filled in before a pour, while a cup records and after
// it is DONE: every stored row names the same ladle as its curve file.
// (Before the sample tracker, a form saved while recording went into the
// current cup's file while its row kept the old sample: the row said
// "L-1 cup 1", its file "L-2 cup 1".)
func TestFormNamesTheSameLadleInRowAndFile(t *testing.T) {
	amp, term := newFakeAmp(t), newTerminal(t)
	data := t.TempDir()
	log := logWatch{t, filepath.Join(data, "undercool.log")}
	wait := monitorOnTerminal(t, amp, term, data)
	cup := simulatedReadings(t, sim.GreyIron, 3)

	amp.idle(3)
	term.waitScreen(t, "WAITING FOR POUR")
	term.keys(formKeys("L-1 cup 1", "grey-iron", "Tobin Quenchmoor")) // before the pour
	log.wait("sample form for cup 1", 1)
	amp.cup(cup, 0, 600) // the pour and the first minute
	log.wait(`sample started: cup "1"`, 1)
	term.keys(formKeys("L-2 cup 1", "grey-iron", "Tobin Quenchmoor")) // while it records: the next sample
	log.wait("sample form for cup 1", 2)
	amp.cup(cup, 600, len(cup.Temp))
	amp.idle(40)
	log.wait(`sample done: cup "1"`, 1)
	term.keys(formKeys("L-3 cup 1", "grey-iron", "Tobin Quenchmoor")) // after DONE: still the next sample
	log.wait("sample form for cup 1", 3)
	amp.cup(cup, 0, len(cup.Temp))
	amp.idle(40)
	log.wait(`sample done: cup "1"`, 2)
	term.keys(quitKeys)
	if code := wait(); code != 0 {
		t.Fatalf("monitor exit %d", code)
	}

	rows := storedSamples(t, filepath.Join(data, "undercool.db"))
	var got []string
	for _, r := range rows {
		meta, _, _ := readCurve(t, r.Sample.CurvePath)
		got = append(got, r.Sample.Sample+" / file "+meta["sample"])
		if r.Sample.Sample != meta["sample"] {
			t.Errorf("row %d names %q, its curve file %s names %q", r.Sample.ID, r.Sample.Sample, r.Sample.CurvePath, meta["sample"])
		}
	}
	// The first cup is the one named before its pour; the form saved while
	// it recorded was for the next cup, and the one saved after DONE
	// replaced it.
	if want := []string{"L-1 cup 1 / file L-1 cup 1", "L-3 cup 1 / file L-3 cup 1"}; strings.Join(got, "; ") != strings.Join(want, "; ") {
		t.Errorf("stored samples %q, want %q", got, want)
	}
}

// Quitting as a sample finishes keeps its record: the operator answers
// the quit question while the cup's last seconds arrive, and when monitor
// returns the sample's file is complete and its row is in the database.
// (Before the sample tracker the dashboard stored a finished sample on a
// goroutine of its own once the acquirer's batch had reached it, and the
// database was closed as soon as the dashboard returned: the record was
// lost.)
func TestQuitAsASampleFinishesKeepsItsRecord(t *testing.T) {
	amp, term := newFakeAmp(t), newTerminal(t)
	data := t.TempDir()
	log := logWatch{t, filepath.Join(data, "undercool.log")}
	wait := monitorOnTerminal(t, amp, term, data)
	cup := simulatedReadings(t, sim.GreyIron, 5)
	amp.line(`! sample="L-7 cup 1" alloy=grey-iron operator="Odile Flintcaster"`)
	amp.idle(3)
	amp.cup(cup, 0, len(cup.Temp)-300)
	log.wait(`sample started: cup "1"`, 1)
	term.keys(quitKeys)
	amp.cup(cup, len(cup.Temp)-300, len(cup.Temp))
	amp.idle(40)
	if code := wait(); code != 0 {
		t.Fatalf("monitor exit %d", code)
	}
	rows := storedSamples(t, filepath.Join(data, "undercool.db"))
	if len(rows) != 1 || rows[0].Sample.Sample != "L-7 cup 1" || rows[0].Result.Record.Verdict == "" {
		t.Fatalf("stored %+v, want the one sample L-7 cup 1 with its verdict", rows)
	}
	if meta, _, _ := readCurve(t, rows[0].Sample.CurvePath); meta["sample"] != "L-7 cup 1" {
		t.Errorf("its curve file names %q", meta["sample"])
	}
}

// customLimits is the shipped example book with the Al-Si7Mg entry renamed
// a356: a name outside the naming rule of limits.Family, whose
// `family = "aluminum"` must decide how it is analysed everywhere.
func customLimits(t *testing.T) string {
	t.Helper()
	text := strings.ReplaceAll(strings.ReplaceAll(string(limits.Example()), "[alloy.al-si7mg", "[alloy.a356"), `"al-si7mg"`, `"a356"`)
	path := filepath.Join(t.TempDir(), "limits.toml")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	b, err := limits.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	if _, ok := b.Alloy("a356"); !ok || limits.Family("a356") == "aluminum" {
		t.Fatal("the test needs an alloy the name rule does not place")
	}
	return path
}

// analyzeJSON runs `analyze --json` on one file.
func analyzeJSON(t *testing.T, path string, args ...string) assess.Record {
	t.Helper()
	code, out, errs := acqRun(t, context.Background(), append(append([]string{"analyze", "--json"}, args...), path)...)
	if code != 0 {
		t.Fatalf("analyze %s: exit %d: %s", path, code, errs)
	}
	var rec assess.Record
	if err := json.Unmarshal([]byte(out), &rec); err != nil {
		t.Fatalf("analyze %s: %v: %s", path, err, out)
	}
	return rec
}

// samePoints reports the characteristic points where two records differ.
func samePoints(a, b assess.Record) string {
	var diff []string
	for _, p := range []struct {
		name string
		x, y *float64
	}{{"liquidus_c", a.LiquidusC, b.LiquidusC}, {"eutectic_min_c", a.EutecticMinC, b.EutecticMinC},
		{"eutectic_max_c", a.EutecticMaxC, b.EutecticMaxC}, {"solidus_c", a.SolidusC, b.SolidusC}} {
		switch {
		case (p.x == nil) != (p.y == nil):
			diff = append(diff, fmt.Sprintf("%s %v / %v", p.name, p.x != nil, p.y != nil))
		case p.x != nil && *p.x != *p.y:
			diff = append(diff, fmt.Sprintf("%s %v / %v", p.name, *p.x, *p.y))
		}
	}
	if a.Verdict != b.Verdict {
		diff = append(diff, "verdict "+a.Verdict+" / "+b.Verdict)
	}
	return strings.Join(diff, ", ")
}

// A custom-named alloy (a356 with family = "aluminum" in the limits file)
// gives the same result through analyze, record, monitor and replay. (Before
// the sample tracker, record and monitor decided the end of freezing by the
// name rule alone and ran to the time limit, and the dashboard and replay
// judged the cup as cast iron: invalid, "no pour found … 1000 °C".)
func TestCustomAlloyTheSameEverywhere(t *testing.T) {
	lim := customLimits(t)
	cup := simulatedReadings(t, sim.AlSi7Mg, 11)

	// record
	amp := newFakeAmp(t)
	out := filepath.Join(t.TempDir(), "a356-record.csv")
	sendCup := func(amp *fakeAmp, stop <-chan struct{}) {
		amp.paced(stop, func(emit func(float64)) {
			for range 30 {
				emit(25)
			}
			for _, v := range cup.Temp {
				emit(v)
			}
		})
	}
	stop := make(chan struct{})
	go sendCup(amp, stop)
	code, stdout, stderr := acqRun(t, context.Background(), "record", "--port", amp.name, "--out", out, "--alloy", "a356", "--limits", lim)
	close(stop)
	if code != 0 || strings.TrimSpace(stdout) != out {
		t.Fatalf("record: exit %d, stdout %q, stderr:\n%s", code, stdout, stderr)
	}
	meta, _, _ := readCurve(t, out)
	if meta["ended"] != "freezing done" {
		t.Errorf("record: the sample ended %q, want when freezing was done", meta["ended"])
	}
	offline := analyzeJSON(t, out, "--limits", lim)
	if offline.Family != "aluminum" || offline.Verdict == assess.VerdictInvalid {
		t.Fatalf("analyze of the recorded cup: family %s, verdict %s %v", offline.Family, offline.Verdict, offline.Reasons)
	}
	stored := storedSamples(t, acqDB(t))
	if len(stored) != 1 {
		t.Fatalf("record stored %d samples", len(stored))
	}
	if d := samePoints(stored[0].Result.Record, offline); d != "" {
		t.Errorf("record stored a different result than analyze of its file: %s", d)
	}
	if !strings.Contains(stderr, "verdict "+offline.Verdict) {
		t.Errorf("record said:\n%s\nwant verdict %s", stderr, offline.Verdict)
	}

	// monitor, headless (its lines), until the first result
	amp2 := newFakeAmp(t)
	data := t.TempDir()
	pr, pw := io.Pipe()
	env := &environ{stdin: strings.NewReader(""), stdout: pw, stderr: io.Discard, getenv: func(string) string { return "" }}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	mdone := make(chan int, 1)
	go func() {
		mdone <- runMain(ctx, env, []string{"monitor", "--port", amp2.name, "--data", data, "--limits", lim})
		pw.Close()
	}()
	var lines bytes.Buffer
	stop2 := make(chan struct{})
	defer close(stop2)
	go func() {
		amp2.line("! alloy=a356 sample=\"L-31 cup 1\"")
		sendCup(amp2, stop2)
	}()
	sc := bufio.NewScanner(pr)
	for sc.Scan() {
		lines.WriteString(sc.Text() + "\n")
		if strings.HasPrefix(sc.Text(), "RESULT cup") {
			cancel()
			break
		}
	}
	go io.Copy(io.Discard, pr)
	<-mdone
	rows := storedSamples(t, filepath.Join(data, "undercool.db"))
	if len(rows) == 0 {
		t.Fatalf("monitor stored nothing; its lines:\n%s", lines.String())
	}
	mon := rows[0]
	if d := samePoints(mon.Result.Record, analyzeJSON(t, mon.Sample.CurvePath, "--limits", lim)); d != "" {
		t.Errorf("monitor stored a different result than analyze of its file: %s", d)
	}
	if mon.Result.Record.Verdict != offline.Verdict {
		t.Errorf("monitor: verdict %s, record %s", mon.Result.Record.Verdict, offline.Verdict)
	}
	mmeta, _, _ := readCurve(t, mon.Sample.CurvePath)
	if mmeta["ended"] != "freezing done" {
		t.Errorf("monitor: the sample ended %q, want when freezing was done", mmeta["ended"])
	}

	// replay of the recorded file, to its end
	code, stdout, stderr = acqRun(t, context.Background(), "replay", out, "--end", "--limits", lim)
	if code != 0 {
		t.Fatalf("replay: exit %d: %s", code, stderr)
	}
	m := regexp.MustCompile(`RESULT cup \S+ sample "[^"]*" alloy "a356": (.*)`).FindStringSubmatch(stdout)
	if m == nil {
		t.Fatalf("replay printed no result:\n%s", stdout)
	}
	if !strings.HasPrefix(m[1], strings.ToUpper(offline.Verdict)) { // the lines print FAIL, PASS, MARGINAL, INVALID · RE-SAMPLE
		t.Errorf("replay: %s, analyze of the same file: %s", m[1], offline.Verdict)
	}
}
