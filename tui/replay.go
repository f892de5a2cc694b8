package tui

import (
	"context"
	"sync"
	"time"

	"github.com/undercool-foundry/undercool/internal/curvefile"
)

// Replay feeds a curve file's readings to the dashboard as acquirer-like
// batches, so a logged sample runs through the same live path (the same
// model code, the same growing-curve analysis) at 1× to 50× or straight to
// the end. It implements Source.
type Replay struct {
	curve *curvefile.Curve
	path  string
	ch    string
	out   chan Batch
	every time.Duration

	mu      sync.Mutex
	speed   float64
	toEnd   bool
	restart bool
	meta    []curvefile.Meta
}

// NewReplay prepares a replay of curve (read from path) on channel ch.
// speed is clamped to 1…50.
func NewReplay(curve *curvefile.Curve, path, ch string, speed float64) *Replay {
	if ch == "" {
		ch = "1"
	}
	r := &Replay{curve: curve, path: path, ch: ch, out: make(chan Batch, 1), every: 33 * time.Millisecond}
	r.SetSpeed(speed)
	return r
}

// Batches implements Source.
func (r *Replay) Batches() <-chan Batch { return r.out }

// SetMeta implements Source; a replay keeps the form only for its own record.
func (r *Replay) SetMeta(_ string, meta []curvefile.Meta) {
	r.mu.Lock()
	r.meta = meta
	r.mu.Unlock()
}

// Start implements Source: it replays the file again from its beginning.
func (r *Replay) Start(string) {
	r.mu.Lock()
	r.restart, r.toEnd = true, false
	r.mu.Unlock()
}

// Stop implements Source: the rest of the file is fed at once.
func (r *Replay) Stop(string) { r.SkipToEnd() }

// SetSpeed sets the pace, clamped to 1…50 times real time.
func (r *Replay) SetSpeed(x float64) {
	r.mu.Lock()
	r.speed = min(max(x, 1), 50)
	r.mu.Unlock()
}

// Speed is the pace.
func (r *Replay) Speed() float64 {
	r.mu.Lock()
	defer r.mu.Unlock()
	return r.speed
}

// SkipToEnd feeds the rest of the file at the next tick.
func (r *Replay) SkipToEnd() {
	r.mu.Lock()
	r.toEnd = true
	r.mu.Unlock()
}

// info is the file's sample metadata as a device-info event gives it.
func (r *Replay) info() map[string]string {
	info := map[string]string{}
	for _, k := range []string{"sample", "alloy", "operator", "note"} {
		if v := r.curve.Get(k); v != "" {
			info[k] = v
		}
	}
	if info["sample"] == "" {
		if v := r.curve.Get("ladle"); v != "" {
			info["sample"] = v
		}
	}
	return info
}

// Run feeds the file, one batch per tick, until it ends or ctx is done.
// It closes Batches when it returns. It never blocks on the consumer:
// readings not taken yet go into the next batch.
func (r *Replay) Run(ctx context.Context) error {
	defer close(r.out)
	tk := time.NewTicker(r.every)
	defer tk.Stop()
	c := r.curve
	var pending Batch
	st := Status{Port: "replay " + r.path, Connected: true, Channels: map[string]State{r.ch: StateWaiting}}
	i, clock, started, done := 0, 0.0, false, false
	for {
		r.mu.Lock()
		speed, toEnd := r.speed, r.toEnd
		if r.restart {
			i, clock, started, done, r.restart = 0, 0, false, false, false
		}
		r.mu.Unlock()
		if !started && len(c.Time) > 0 {
			started = true
			clock = c.Time[0]
			pending.Events = append(pending.Events,
				Event{Kind: EventConnected, TimeS: c.Time[0], Text: "replaying " + r.path},
				Event{Kind: EventDeviceInfo, Channel: r.ch, TimeS: c.Time[0], Info: r.info()},
				Event{Kind: EventSampleStarted, Channel: r.ch, TimeS: c.Time[0], Path: r.path})
			st.Channels = map[string]State{r.ch: StateRecording}
		}
		clock += r.every.Seconds() * speed
		n := 0
		for ; i < len(c.Time) && (toEnd || c.Time[i] <= clock); i++ {
			pending.Readings = append(pending.Readings, Reading{TimeS: c.Time[i], TempC: c.Temp[i], Channel: r.ch})
			n++
		}
		st.Lines += n
		st.Readings += n
		if len(c.Time) > 1 {
			st.ReadingsPerS = speed * float64(len(c.Time)-1) / (c.Time[len(c.Time)-1] - c.Time[0])
		}
		if i >= len(c.Time) && started && !done {
			done = true
			end := 0.0
			if len(c.Time) > 0 {
				end = c.Time[len(c.Time)-1]
			}
			pending.Events = append(pending.Events, Event{Kind: EventSampleDone, Channel: r.ch, TimeS: end, Path: r.path})
			st.Channels = map[string]State{r.ch: StateDone}
			st.SamplesDone++
		}
		if len(pending.Readings) > 0 || len(pending.Events) > 0 {
			pending.Status = st
			pending.Status.Channels = map[string]State{r.ch: st.Channels[r.ch]}
			select {
			case r.out <- pending:
				pending = Batch{}
			default:
			}
		}
		select {
		case <-ctx.Done():
			return ctx.Err()
		case <-tk.C:
		}
	}
}
