// Package replay is a source of items beside the acquirer: it feeds a
// curve file's readings as the acquirer would have sent them (the same
// item stream, package feed), paced at 1× to 50× or straight to the end, so
// that a logged sample runs through the same live path (the same tracker,
// the same growing-curve analysis, the same screen).
package replay

import (
	"context"
	"math"
	"sync"
	"time"

	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/feed"
)

// Replay feeds one curve file on one channel.
type Replay struct {
	curve *curvefile.Curve
	path  string
	ch    string
	out   chan feed.Batch
	every time.Duration

	mu      sync.Mutex
	speed   float64
	toEnd   bool
	restart bool
	stop    string // the reason of a stop asked, "" for none
	stopN   int    // the sample it is for (0: the one replaying)

	wall   []float64 // a two-thermocouple cup's wall column (NaN: no reading), nil for one
	wallCh string    // the channel it is replayed on
}

// New prepares a replay of curve (read from path) on channel ch ("": the
// file's own channel, else "1"). speed is clamped to 1…50.
func New(curve *curvefile.Curve, path, ch string, speed float64) *Replay {
	if ch == "" {
		ch = curve.Get("channel")
	}
	if ch == "" {
		ch = "1"
	}
	r := &Replay{curve: curve, path: path, ch: ch, out: make(chan feed.Batch, 1), every: 33 * time.Millisecond}
	if wall, err := curve.Wall(); err == nil && wall != nil {
		// a two-thermocouple cup: its wall thermocouple on a channel of its
		// own, as the acquirer sent it (the file's, else "wall")
		p, _ := curvefile.PairOf(curve.Meta)
		r.wall, r.wallCh = wall, p.WallChannel
		if r.wallCh == "" || r.wallCh == ch {
			r.wallCh = "wall"
		}
	}
	r.SetSpeed(speed)
	return r
}

// Batches delivers the items; it is closed when Run returns.
func (r *Replay) Batches() <-chan feed.Batch { return r.out }

// SetMeta does nothing: a replay writes no file.
func (r *Replay) SetMeta(string, int, []curvefile.Meta) {}

// Start replays the file again from its beginning, as a new sample.
func (r *Replay) Start(string) {
	r.mu.Lock()
	r.restart, r.toEnd = true, false
	r.mu.Unlock()
}

// Stop ends the sample replaying at the next tick (sample 0: whichever
// it is), as the acquirer ends a sample; the rest of the file goes on as
// readings outside any sample.
func (r *Replay) Stop(_ string, sample int, reason string) {
	r.mu.Lock()
	r.stop, r.stopN = reason, sample
	r.mu.Unlock()
}

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

// Run feeds the file, one batch per tick, until ctx is done, and closes
// Batches when it returns. Its items are the acquirer's: connected, the
// file's metadata as a device line (the tracker names the sample from
// it), the sample's start, its readings, and its end when the tracker (or
// the operator) stops it or the file ends. A two-thermocouple cup's wall
// column is replayed as its wall channel's readings, each after the
// centre's reading of the same time (a fault reading where the column is
// empty), so that the tracker puts back the column as the file holds it. It never blocks on the
// consumer: items not taken yet go into the next batch.
func (r *Replay) Run(ctx context.Context) error {
	defer close(r.out)
	tk := time.NewTicker(r.every)
	defer tk.Stop()
	c := r.curve
	var pending feed.Batch
	st := feed.Status{Port: "replay " + r.path, Connected: true}
	cs := feed.ChannelStatus{}
	i, clock, n, started, recording := 0, 0.0, 0, false, false
	end := func(why string) {
		t := clock
		if i > 0 {
			t = c.Time[i-1]
		}
		pending.Items = append(pending.Items, feed.Item{Kind: feed.KindEnded, Channel: r.ch, TimeS: t, Sample: n, Path: r.path, Text: why})
		recording = false
		st.SamplesDone++
	}
	for {
		r.mu.Lock()
		speed, toEnd, stop, stopN := r.speed, r.toEnd, r.stop, r.stopN
		r.stop = ""
		if r.restart {
			if recording {
				end("replay started again")
			}
			i, started, r.restart = 0, false, false
		}
		r.mu.Unlock()
		if stop != "" && recording && (stopN == 0 || stopN == n) {
			end(stop)
		}
		if !started && len(c.Time) > 0 {
			started, recording = true, true
			n++
			clock = c.Time[0]
			pending.Items = append(pending.Items,
				feed.Item{Kind: feed.KindConnected, TimeS: clock, Text: "replaying " + r.path},
				feed.Item{Kind: feed.KindDeviceInfo, Channel: r.ch, TimeS: clock, Meta: c.Meta, Text: "the file's metadata"},
				feed.Item{Kind: feed.KindStarted, Channel: r.ch, TimeS: clock, Sample: n, Path: r.path, Meta: c.Meta,
					StartS: c.Time[0], Wall: r.wallCh, Text: "replaying " + r.path})
		}
		clock += r.every.Seconds() * speed
		k := 0
		for ; i < len(c.Time) && (toEnd || c.Time[i] <= clock); i++ {
			rd := feed.Reading{TimeS: c.Time[i], TempC: c.Temp[i], Channel: r.ch}
			pending.Items = append(pending.Items, feed.Item{Kind: feed.KindReading, Channel: r.ch, TimeS: rd.TimeS, Reading: rd})
			k++
			if r.wall != nil {
				w := feed.Reading{TimeS: c.Time[i], TempC: r.wall[i], Channel: r.wallCh}
				if math.IsNaN(w.TempC) {
					w.Flags = feed.FlagFault
				}
				pending.Items = append(pending.Items, feed.Item{Kind: feed.KindReading, Channel: r.wallCh, TimeS: w.TimeS, Reading: w})
				k++
			}
		}
		st.Lines += k
		st.Readings += k
		cs.Readings += k
		if len(c.Time) > 1 {
			st.ReadingsPerS = speed * float64(len(c.Time)-1) / (c.Time[len(c.Time)-1] - c.Time[0])
		}
		if i >= len(c.Time) && recording {
			end("end of the file")
		}
		if len(pending.Items) > 0 {
			cs.Recording, cs.Sample = recording, n
			pending.Status = st
			pending.Status.Channels = map[string]feed.ChannelStatus{r.ch: cs}
			if r.wall != nil {
				pending.Status.Channels[r.wallCh] = feed.ChannelStatus{WallOf: r.ch}
			}
			select {
			case r.out <- pending:
				pending = feed.Batch{}
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
