package sim

import (
	"bufio"
	"bytes"
	"context"
	"math"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"
)

// fakeClock advances only when the deck waits.
type fakeClock struct {
	mu     sync.Mutex
	now    time.Time
	waited time.Duration
}

func (c *fakeClock) Now() time.Time {
	c.mu.Lock()
	defer c.mu.Unlock()
	return c.now
}

func (c *fakeClock) After(d time.Duration) <-chan time.Time {
	c.mu.Lock()
	defer c.mu.Unlock()
	c.now = c.now.Add(d)
	c.waited += d
	ch := make(chan time.Time, 1)
	ch <- c.now
	return ch
}

// lineSink collects lines and cancels once it holds n of them.
type lineSink struct {
	buf    bytes.Buffer
	n      int
	cancel context.CancelFunc
}

func (s *lineSink) Write(p []byte) (int, error) {
	s.buf.Write(p)
	if bytes.Count(s.buf.Bytes(), []byte{'\n'}) >= s.n {
		s.cancel()
	}
	return len(p), nil
}

func runDeck(t *testing.T, opt DeckOptions, lines int) ([]string, *fakeClock) {
	t.Helper()
	clk := &fakeClock{now: time.Date(2026, 3, 2, 6, 0, 0, 0, time.UTC)}
	opt.Clock = clk
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	sink := &lineSink{n: lines, cancel: cancel}
	if err := NewDeck(opt).Run(ctx, sink); err != nil {
		t.Fatal(err)
	}
	var out []string
	sc := bufio.NewScanner(&sink.buf)
	for sc.Scan() {
		out = append(out, sc.Text())
	}
	return out, clk
}

// parseTokens splits a protocol line into key=value tokens (values may be
// double-quoted).
func parseTokens(t *testing.T, line string) map[string]string {
	t.Helper()
	m := map[string]string{}
	for s := strings.TrimPrefix(line, "!"); ; {
		s = strings.TrimLeft(s, " ")
		if s == "" {
			return m
		}
		eq := strings.IndexByte(s, '=')
		if eq < 0 {
			t.Fatalf("token without = in %q", line)
		}
		k, rest := s[:eq], s[eq+1:]
		if strings.HasPrefix(rest, `"`) {
			v, err := strconv.QuotedPrefix(rest)
			if err != nil {
				t.Fatalf("bad quoted value in %q: %v", line, err)
			}
			m[k], _ = strconv.Unquote(v)
			s = rest[len(v):]
			continue
		}
		end := strings.IndexByte(rest, ' ')
		if end < 0 {
			end = len(rest)
		}
		m[k], s = rest[:end], rest[end:]
	}
}

func TestDeckStreamFollowsPlan(t *testing.T) {
	opt := DeckOptions{Seed: 11, Speed: 50, RateHz: 10}
	lines, clk := runDeck(t, opt, 20000)
	plan := NewDeck(opt)
	if !strings.HasPrefix(lines[0], "! dev=") {
		t.Fatalf("first line %q, want the device line", lines[0])
	}
	cups, readings, open := 0, 0, 0
	var lastMS int64 = -1
	for _, ln := range lines[1:] {
		tok := parseTokens(t, ln)
		if strings.HasPrefix(ln, "!") {
			want := plan.Next()
			if tok["sample"] != want.Sample || tok["alloy"] != want.Params.Alloy || tok["operator"] != want.Operator {
				t.Fatalf("info line %q, plan says %+v", ln, want)
			}
			if !strings.HasPrefix(tok["sample"], "L-24") {
				t.Errorf("sample %q is not one of our invented ladles", tok["sample"])
			}
			cups++
			continue
		}
		ms, err := strconv.ParseInt(tok["ms"], 10, 64)
		if err != nil || ms <= lastMS {
			t.Fatalf("line %q: ms not increasing after %d", ln, lastMS)
		}
		lastMS = ms
		switch {
		case tok["f"] == "open":
			open++
		case tok["c"] != "":
			v, err := strconv.ParseFloat(tok["c"], 64)
			if err != nil || v < -50 || v > 1500 {
				t.Fatalf("line %q: temperature %v %v", ln, v, err)
			}
			readings++
		default:
			t.Fatalf("line %q carries no reading", ln)
		}
		if _, ok := tok["ch"]; ok {
			t.Fatalf("single-channel deck wrote a ch token: %q", ln)
		}
	}
	if cups < 5 || readings < 15000 {
		t.Errorf("%d cups, %d readings in 20000 lines", cups, readings)
	}
	// Paced at Speed × real time: ticks·(1/rate)/speed of waiting.
	ticks := readings + open
	want := time.Duration(float64(ticks-1) / 10 / 50 * float64(time.Second))
	if d := clk.waited - want; d < -50*time.Millisecond || d > 50*time.Millisecond {
		t.Errorf("deck waited %v for %d ticks at 10 Hz ×50, want ≈%v", clk.waited, ticks, want)
	}
}

func TestDeckMixesAlloysAndBadSamples(t *testing.T) {
	d := NewDeck(DeckOptions{Seed: 3})
	alloys := map[string]int{}
	labels := map[string]int{}
	ladles := map[string]bool{}
	for range 300 {
		l := d.Next()
		alloys[l.Params.Alloy]++
		labels[l.Label]++
		ladles[l.Ladle] = true
		if err := l.Params.withDefaults().Validate(); err != nil {
			t.Fatalf("planned ladle %+v: %v", l, err)
		}
	}
	for _, a := range []string{GreyIron, DuctileIron, AlSi7Mg, WhiteIron} {
		if alloys[a] == 0 {
			t.Errorf("no %s cup in 300 ladles: %v", a, alloys)
		}
	}
	for _, l := range []string{"open thermocouple", "short, cold pour", "cup pulled early", "poorly inoculated", "unrefined", "unmodified"} {
		if labels[l] == 0 {
			t.Errorf("no %q cup in 300 ladles: %v", l, labels)
		}
	}
	if !ladles["L-2401"] {
		t.Error("ladles do not start at L-2401")
	}
}

func TestDeckChannelsAndChecksum(t *testing.T) {
	lines, _ := runDeck(t, DeckOptions{Seed: 5, Speed: 1000, Channels: []string{"1", "tell"}, Checksum: true}, 500)
	seen := map[string]int{}
	for _, ln := range lines {
		star := strings.LastIndexByte(ln, '*')
		if star < 0 {
			t.Fatalf("line %q has no checksum", ln)
		}
		var x byte
		for i := 0; i < star; i++ {
			x ^= ln[i]
		}
		if got := strings.ToUpper(strconv.FormatUint(uint64(x)|0x100, 16)[1:]); got != ln[star+1:] {
			t.Fatalf("line %q: checksum %s, want %s", ln, ln[star+1:], got)
		}
		tok := parseTokens(t, ln[:star])
		if !strings.HasPrefix(ln, "! dev=") {
			seen[tok["ch"]]++
		}
	}
	if seen["1"] < 200 || seen["tell"] < 200 || len(seen) != 2 {
		t.Errorf("lines per channel %v", seen)
	}
}

func TestDeckStopsOnCancel(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	var b bytes.Buffer
	if err := NewDeck(DeckOptions{Seed: 1, Clock: &fakeClock{}}).Run(ctx, &b); err != nil {
		t.Fatalf("Run after cancel = %v, want nil", err)
	}
}

// A deck with a wall thermocouple: its channel's cups are radial, each
// cup's info line pairs the two channels with the wall thermocouple's
// radius, and each reading of the centre is followed by the wall's at the
// same device time: the cup's Output.Wall to 0.01 °C, until the pull-out.
func TestDeckWallThermocouple(t *testing.T) {
	opt := DeckOptions{Seed: 4, Speed: 50, RateHz: 10, Channels: []string{"1"}, Walls: map[string]string{"1": "2"}}
	lines, _ := runDeck(t, opt, 6000)
	plan := NewDeck(opt)
	var out Output
	k := -1 // the centre's reading in out
	var centreMS string
	for i, ln := range lines[1:] {
		tok := parseTokens(t, ln)
		switch {
		case strings.HasPrefix(ln, "!"):
			l := plan.Next()
			l.Params.Cup = CupRadial
			out, k = Simulate(l.Params), -1
			if want := strconv.FormatFloat(math.Round(out.Truth.WallTCRadiusMm*100)/100, 'f', -1, 64); tok["ch"] != "1" || tok["wall_ch"] != "2" ||
				tok["wall_r_mm"] != want || tok["centre_r_mm"] != "0" || out.Wall == nil {
				t.Fatalf("info line %q: want the pairing with wall_r_mm=%s", ln, want)
			}
		case tok["ch"] == "1":
			k++
			centreMS = tok["ms"]
		case tok["ch"] == "2":
			if tok["ms"] != centreMS || !strings.Contains(lines[i], "ch=1 ") {
				t.Fatalf("line %d %q does not follow its centre reading at ms=%s", i+1, ln, centreMS)
			}
			if k < len(out.Wall) {
				want, _ := strconv.ParseFloat(strconv.FormatFloat(out.Wall[k], 'f', 2, 64), 64)
				if got, err := strconv.ParseFloat(tok["c"], 64); err != nil || got != want {
					t.Fatalf("wall reading %d: %q, want %v", k, tok["c"], want)
				}
			}
		default:
			t.Fatalf("line %q", ln)
		}
	}
	if k < 0 {
		t.Fatal("no readings")
	}
}
