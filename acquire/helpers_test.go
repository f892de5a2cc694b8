package acquire

import (
	"context"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/undercool-foundry/undercool/internal/feed"
)

// cupReading is one reading a fake amplifier sends.
type cupReading struct {
	ms   uint64
	temp float64
}

// cupCurve is a constructed (simulated) cup curve, not measured data:
// ambient at 25 °C, a pour rising to 1340 °C within a second, the liquid
// cooling at 6 °C/s, a eutectic-like plateau near 1148 °C and cooling after
// freezing. rateHz readings a second of device time, lasting totalS.
func cupCurve(rateHz, ambientS, totalS float64) []cupReading {
	n := int(totalS * rateHz)
	out := make([]cupReading, n)
	for i := range out {
		t := float64(i) / rateHz
		var T float64
		switch s := t - ambientS; {
		case s < 0:
			T = 25 + 0.2*float64(i%3)
		case s < 1:
			T = 25 + 1315*s
		case s < 33:
			T = max(1340-6*(s-1), 1148+0.3*float64(i%2))
		default:
			T = 1148 - 4*(s-33)
		}
		out[i] = cupReading{ms: uint64(1000 + i*int(1000/rateHz)), temp: roundTo(T, 2)}
	}
	return out
}

func roundTo(v float64, digits int) float64 {
	s := strconv.FormatFloat(v, 'f', digits, 64)
	r, _ := strconv.ParseFloat(s, 64)
	return r
}

func (r cupReading) line(ch string) string {
	return fmt.Sprintf("ch=%s ms=%d c=%s\n", ch, r.ms, strconv.FormatFloat(r.temp, 'f', -1, 64))
}

// pipePort is a fake port: each Open hands out the next connection the
// test plugs in.
type pipePort struct {
	conns chan io.ReadCloser
	mu    sync.Mutex
	opens int
}

func newPipePort() *pipePort { return &pipePort{conns: make(chan io.ReadCloser, 8)} }

func (p *pipePort) open(ctx context.Context) (io.ReadCloser, error) {
	select {
	case c := <-p.conns:
		p.mu.Lock()
		p.opens++
		p.mu.Unlock()
		return c, nil
	case <-ctx.Done():
		return nil, ctx.Err()
	}
}

// plug connects a new device and returns its end to write to.
func (p *pipePort) plug() *io.PipeWriter {
	r, w := io.Pipe()
	p.conns <- r
	return w
}

// collector gathers batches until a condition holds.
type collector struct {
	t        *testing.T
	a        *Acquirer
	readings []feed.Reading
	events   []feed.Item
	last     feed.Status
	batches  int
}

func (c *collector) until(what string, timeout time.Duration, done func() bool) {
	c.t.Helper()
	deadline := time.After(timeout)
	for !done() {
		select {
		case b, ok := <-c.a.Batches():
			if !ok {
				c.t.Fatalf("batches closed while waiting for %s", what)
			}
			for _, it := range b.Items {
				if it.Kind == feed.KindReading {
					c.readings = append(c.readings, it.Reading)
				} else {
					c.events = append(c.events, it)
				}
			}
			c.last = b.Status
			c.batches++
		case <-deadline:
			c.t.Fatalf("timed out waiting for %s; events: %v", what, c.eventTexts())
		}
	}
}

func (c *collector) has(kind feed.Kind, ch string) *feed.Item {
	for i := range c.events {
		if c.events[i].Kind == kind && (ch == "" || c.events[i].Channel == ch) {
			return &c.events[i]
		}
	}
	return nil
}

func (c *collector) count(kind feed.Kind) int {
	n := 0
	for _, e := range c.events {
		if e.Kind == kind {
			n++
		}
	}
	return n
}

func (c *collector) eventTexts() []string {
	var s []string
	for _, e := range c.events {
		s = append(s, e.Kind.String()+": "+e.Text)
	}
	return s
}

// startAcq runs an Acquirer until the test ends.
func startAcq(t *testing.T, open Opener, cfg Config) (*Acquirer, *collector, func() error) {
	t.Helper()
	a := New(open, cfg)
	ctx, cancel := context.WithCancel(context.Background())
	errc := make(chan error, 1)
	go func() { errc <- a.Run(ctx) }()
	stopped := false
	var runErr error
	stop := func() error {
		if !stopped {
			stopped = true
			cancel()
			for range a.Batches() {
			}
			runErr = <-errc
		}
		return runErr
	}
	t.Cleanup(func() { stop() })
	return a, &collector{t: t, a: a}, stop
}

// curveRows reads a curve file as our writer writes it.
type curveRows struct {
	meta   map[string]string
	header []string
	rows   [][]string
}

func readRows(t *testing.T, path string) curveRows {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	c := curveRows{meta: map[string]string{}}
	for _, line := range strings.Split(strings.TrimSuffix(string(b), "\n"), "\n") {
		switch {
		case strings.HasPrefix(line, "# "):
			k, v, _ := strings.Cut(line[2:], ": ")
			c.meta[k] = v
		case c.header == nil:
			c.header = strings.Split(line, ",")
		default:
			c.rows = append(c.rows, strings.Split(line, ","))
		}
	}
	return c
}

func (c curveRows) col(name string) int {
	for i, h := range c.header {
		if h == name {
			return i
		}
	}
	return -1
}

func (c curveRows) float(t *testing.T, row int, name string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(c.rows[row][c.col(name)], 64)
	if err != nil {
		t.Fatalf("row %d column %s: %v", row, name, err)
	}
	return v
}

// checkRowsMatch checks that the file holds exactly the sent readings
// from index from on, reading for reading: time from device ms, °C.
func checkRowsMatch(t *testing.T, c curveRows, sent []cupReading, from int) {
	t.Helper()
	if len(c.rows) == 0 {
		t.Fatal("no rows")
	}
	ms0 := sent[from].ms
	for i, row := range c.rows {
		if from+i >= len(sent) {
			t.Fatalf("file has %d rows, more than the %d sent from index %d", len(c.rows), len(sent)-from, from)
		}
		s := sent[from+i]
		wantT := float64(s.ms-ms0) / 1000
		if got := c.float(t, i, "time_s"); got != wantT {
			t.Fatalf("row %d (%v): time %v, want %v", i, row, got, wantT)
		}
		if got := c.float(t, i, "temp_c"); got != s.temp {
			t.Fatalf("row %d (%v): temp %v, want %v", i, row, got, s.temp)
		}
	}
}

// stopAt sends readings sent[:k] up to (and with) the first one at or past
// sample time s (device time from the file's first reading at
// sent[first]), waits until they are all in, and stops the sample there:
// what the tracker does when freezing is done. It returns k.
func (c *collector) stopAt(w io.Writer, ch string, sent []cupReading, from, first int, s float64) int {
	c.t.Helper()
	k := max(from, first)
	for k < len(sent) && float64(sent[k].ms-sent[first].ms)/1000 < s {
		k++
	}
	k = min(k+1, len(sent))
	go func() {
		for _, r := range sent[from:k] {
			w.Write([]byte(r.line(ch)))
		}
	}()
	want := len(c.readings) + k - from
	c.until("readings up to the stop", 10*time.Second, func() bool { return len(c.readings) >= want })
	c.a.Stop(ch, 0, "freezing done")
	c.until("sample done", 10*time.Second, func() bool { return c.has(feed.KindEnded, ch) != nil })
	return k
}

func contextWithCancel() (context.Context, context.CancelFunc) {
	return context.WithCancel(context.Background())
}
