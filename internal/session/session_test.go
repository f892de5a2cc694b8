package session

import (
	"context"
	"fmt"
	"io"
	"math"
	"strings"
	"sync"
	"testing"

	"github.com/undercool-foundry/undercool/acquire"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/sample"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// pipeOpener is a port that is one pipe, opened once.
func pipeOpener() (acquire.Opener, *io.PipeWriter) {
	pr, pw := io.Pipe()
	var once sync.Once
	return func(ctx context.Context) (io.ReadCloser, error) {
		var rc io.ReadCloser
		once.Do(func() { rc = pr })
		if rc == nil {
			<-ctx.Done()
			return nil, ctx.Err()
		}
		return rc, nil
	}, pw
}

// run runs an acquirer on open through a session until stop is closed;
// it returns every update and every finished sample.
type run struct {
	updates  []sample.Update
	finished []sample.Finished
}

func start(t *testing.T, open acquire.Opener, cfg acquire.Config, tcfg sample.Config) (*run, *Session, func()) {
	t.Helper()
	acq := acquire.New(open, cfg)
	r := &run{}
	var mu sync.Mutex
	sess := New(acq, sample.New(tcfg), Options{Finished: func(f sample.Finished) { mu.Lock(); r.finished = append(r.finished, f); mu.Unlock() }})
	ctx, cancel := context.WithCancel(context.Background())
	var wg sync.WaitGroup
	wg.Go(func() { acq.Run(ctx) })
	wg.Go(sess.Run)
	stop := func() { cancel(); wg.Wait() }
	t.Cleanup(stop)
	return r, sess, stop
}

// A SIMULATED grey-iron cup (internal/sim, a physics model, not measured
// data) sent at 10 Hz device time through the real acquirer: the tracker
// sees freezing end soon after the model's own end of freezing, the
// acquirer stops on its word after the margin, and the finished sample is
// handed on once, its file holding every reading the tracker's curve has.
func TestFreezingDoneStopsTheAcquirer(t *testing.T) {
	p, err := sim.Preset(sim.GreyIron, 0.5, 7)
	if err != nil {
		t.Fatal(err)
	}
	o := sim.Simulate(p)
	open, w := pipeOpener()
	r, sess, _ := start(t, open, acquire.Config{Dir: t.TempDir()}, sample.Config{Meta: sample.Meta{{Key: "alloy", Value: "grey-iron"}}})
	go func() {
		for i := range o.Time {
			fmt.Fprintf(w, "ms=%d c=%.2f\n", int(math.Round(o.Time[i]*1000)), o.Temp[i])
		}
		for i := range 600 { // the thermocouple in air afterwards
			fmt.Fprintf(w, "ms=%d c=25\n", int(math.Round(o.Time[len(o.Time)-1]*1000))+100*(i+1))
		}
	}()
	var frozen *sample.Event
	for u := range sess.Updates() {
		r.updates = append(r.updates, u)
		for i, e := range u.Events {
			if e.Kind == sample.EventFrozen {
				frozen = &u.Events[i]
			}
		}
		if len(u.Finished) > 0 {
			break
		}
	}
	if frozen == nil {
		t.Fatal("freezing never ended")
	}
	f := r.finished[0]
	c, err := curvefile.ReadFile(f.Path)
	if err != nil {
		t.Fatal(err)
	}
	if c.Get("ended") != "freezing done" || c.Get("alloy") != "grey-iron" {
		t.Errorf("file metadata %v", c.Meta)
	}
	if len(c.Time) != len(f.T) {
		t.Fatalf("file %d readings, the tracker's curve %d", len(c.Time), len(f.T))
	}
	for i := range f.T {
		if c.Time[i] != f.T[i] || c.Temp[i] != f.V[i] {
			t.Fatalf("reading %d: file %v %v, tracker %v %v", i, c.Time[i], c.Temp[i], f.T[i], f.V[i])
		}
	}
	// seen done after the model's own end of freezing, within the
	// detector's confirmation (Hints.ConfirmS, some seconds: practice)
	at := frozen.TimeS // acquisition time
	start := 0.0
	for _, u := range r.updates {
		for _, e := range u.Events {
			if e.Kind == sample.EventStarted {
				start = e.TimeS
			}
		}
	}
	if solidus := o.Truth.Solidus.TimeS - o.Time[0]; at < solidus || at > solidus+20 {
		t.Errorf("freezing seen done at %.1f s, the model's end of freezing at %.1f s", at, solidus)
	}
	// and the margin after it recorded: the stop came on the tracker's word
	if got := f.T[len(f.T)-1] + start - at; got < sample.DefaultFreezeMarginS {
		t.Errorf("recorded %.1f s after freezing ended, want at least the margin", got)
	}
}

// The simulated melt deck (internal/sim, a physics model behind the line
// protocol, with checksums, two stands) run 400 times faster than real
// time through the acquirer and the tracker: every line parses (no
// garbage), and each cup becomes its own sample file carrying the deck's
// sample metadata, which the tracker took from the deck's lines.
func TestSimulatedDeck(t *testing.T) {
	dir := t.TempDir()
	open, w := pipeOpener()
	r, sess, _ := start(t, open, acquire.Config{Dir: dir}, sample.Config{})
	deck := sim.NewDeck(sim.DeckOptions{Seed: 11, Speed: 400, Channels: []string{"1", "tell"}, Checksum: true})
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	go deck.Run(ctx, w)
	var last sample.Update
	n := 0
	for u := range sess.Updates() {
		last = u
		n += len(u.Finished)
		if n >= 4 {
			break
		}
	}
	cancel()
	if s := last.Status; s.Garbage != 0 || s.Lines == 0 {
		t.Fatalf("status %+v", s)
	}
	for _, f := range r.finished[:4] {
		c, err := curvefile.ReadFile(f.Path)
		if err != nil {
			t.Fatal(err)
		}
		if !strings.HasPrefix(c.Get("sample"), "L-") || c.Get("operator") == "" || c.Get("alloy") == "" || c.Get("channel") != f.Channel {
			t.Errorf("%s: metadata %v", f.Path, c.Meta)
		}
		if c.Get("sample") != f.Meta.Get("sample") || c.Get("alloy") != f.Record.Alloy {
			t.Errorf("%s names %q (%s), its record %q (%s)", f.Path, c.Get("sample"), c.Get("alloy"), f.Meta.Get("sample"), f.Record.Alloy)
		}
		if len(c.Time) < 300 { // 30 s at 10 Hz: the pour and more
			t.Errorf("%s: only %d rows", f.Path, len(c.Time))
		}
		if first := c.Temp[0]; first > 60 {
			t.Errorf("%s: starts at %v °C, not near ambient (the tail of the cup before)", f.Path, first)
		}
	}
}
