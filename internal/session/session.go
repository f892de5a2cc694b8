// Package session runs one live session: a source of items (the acquirer,
// or the replay of a curve file) read by the sample tracker on a goroutine
// of its own, the tracker's word passed back to the source (stop a sample
// whose freezing is done, what to write into its file), every finished
// sample handed to the record keeper, and the tracker's updates offered to
// whoever shows them (the dashboard, its headless lines, `record`), never
// waiting on them. The reading's way is one way: port, acquirer, tracker,
// screen and records.
package session

import (
	"time"

	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/mailbox"
	"github.com/undercool-foundry/undercool/internal/sample"
)

// Source is a stream of items with the controls the tracker and the
// operator use: *acquire.Acquirer, or a replay.
type Source interface {
	// Batches delivers the items; it is closed when the source ends.
	Batches() <-chan feed.Batch
	// Start starts a sample on a channel by hand.
	Start(ch string)
	// Stop ends a channel's sample (sample 0: the one recording).
	Stop(ch string, sample int, reason string)
	// SetMeta is a sample's metadata for its file (sample 0: the next).
	SetMeta(ch string, sample int, meta []curvefile.Meta)
}

// stopperAt is a source that can end a sample at a given sample time,
// leaving out of its file the readings after it that it took before the
// command arrived (*acquire.Acquirer).
type stopperAt interface {
	StopAt(ch string, sample int, atS float64, reason string)
}

// Options configure a session.
type Options struct {
	// Finished is given every finished sample, in order, on the session's
	// goroutine; it must not block (the store writer queues them).
	Finished func(sample.Finished)
}

// Session is one source read by one tracker.
type Session struct {
	src Source
	tr  *sample.Tracker
	opt Options
	out chan sample.Update
	ctl *mailbox.Box[control]
}

type control struct {
	form   bool
	ch     string
	meta   sample.Meta
	limits *limits.Book
}

// New makes a session of src read by tr. Only the session may use tr
// from now on.
func New(src Source, tr *sample.Tracker, opt Options) *Session {
	if opt.Finished == nil {
		opt.Finished = func(sample.Finished) {}
	}
	if _, ok := src.(stopperAt); ok {
		tr.EndAtStop() // the source's files end where the tracker says
	}
	return &Session{src: src, tr: tr, opt: opt, out: make(chan sample.Update), ctl: mailbox.New[control]()}
}

// Updates are the tracker's updates; when they are not taken as fast as
// they come, they are merged into the next (events and finished samples
// kept in order, the latest status and channels). It is closed when Run
// returns.
func (s *Session) Updates() <-chan sample.Update { return s.out }

// SetForm hands the operator's sample form for channel ch to the tracker:
// it names the channel's next sample. It never blocks.
func (s *Session) SetForm(ch string, m sample.Meta) { s.ctl.Push(control{form: true, ch: ch, meta: m}) }

// SetLimits hands a saved limits book to the tracker. It never blocks.
func (s *Session) SetLimits(b *limits.Book) { s.ctl.Push(control{limits: b}) }

// Start starts a sample on channel ch by hand.
func (s *Session) Start(ch string) { s.src.Start(ch) }

// Stop ends the sample recording on channel ch by hand.
func (s *Session) Stop(ch string) { s.src.Stop(ch, 0, "stopped by hand") }

// Run reads the source until its batches are closed (the source's own
// context decides when), passes every batch to the tracker, does what the
// tracker asks of the source, hands finished samples on and offers the
// updates. It returns once the last batch is handled, so a sample that
// finished as the source stopped is handed on before Run returns.
func (s *Session) Run() {
	defer close(s.out)
	var pending sample.Update
	have := false
	take := func(u sample.Update) {
		for _, c := range u.Commands {
			switch c.Kind {
			case sample.CommandStop:
				if at, ok := s.src.(stopperAt); ok {
					at.StopAt(c.Channel, c.Sample, c.AtS, c.Reason)
				} else {
					s.src.Stop(c.Channel, c.Sample, c.Reason)
				}
			case sample.CommandMeta:
				s.src.SetMeta(c.Channel, c.Sample, c.Meta)
			}
		}
		u.Commands = nil
		for _, f := range u.Finished {
			s.opt.Finished(f)
		}
		pending, have = sample.Merge(pending, u), true
	}
	take(s.tr.Initial())
	batches := s.src.Batches()
	var ctls []control
	for {
		var out chan<- sample.Update
		if have {
			out = s.out
		}
		select {
		case b, ok := <-batches:
			if !ok {
				if have { // a last offer, for a reader still there
					t := time.NewTimer(2 * time.Second)
					select {
					case s.out <- pending:
					case <-t.C:
					}
					t.Stop()
				}
				return
			}
			take(s.tr.Apply(b))
		case <-s.ctl.Ready():
			ctls = s.ctl.Take(ctls)
			for _, c := range ctls {
				switch {
				case c.form:
					take(s.tr.SetForm(c.ch, c.meta))
				case c.limits != nil:
					s.tr.SetLimits(c.limits)
				}
			}
		case out <- pending:
			pending, have = sample.Update{}, false
		}
	}
}
