package acquire

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"sync"
	"sync/atomic"
	"time"

	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/escape"
	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/mailbox"
	"github.com/undercool-foundry/undercool/internal/protocol"
	"github.com/undercool-foundry/undercool/internal/thermocouple"
)

// Trigger is the pour detector: a channel waiting for the pour starts
// recording when a reading of at least MinC has risen by more than RiseC
// within the last WithinS seconds. The readings of the last PreS seconds
// before the trigger start the file, so nothing of the pour is cut.
//
// The defaults (a rise of 100 °C within 3 s to at least 300 °C, 10 s kept
// before) fit iron and aluminium cups poured from ambient (practice: a cup
// thermocouple goes from ambient to the melt temperature within seconds).
type Trigger struct {
	RiseC   float64 // °C
	WithinS float64 // s
	MinC    float64 // °C
	PreS    float64 // s, at least WithinS
	Manual  bool    // no automatic trigger: samples start only by Start
}

// Config sets up an Acquirer. The zero value of each field takes the
// default named beside it.
type Config struct {
	Port string // the port's name, for status, messages and the curve files

	// Thermocouple is the type that raw EMF readings (mv=) are converted
	// with; "" takes the type a device announces ("! tc=K"), else K.
	Thermocouple string
	// ColdJunctionC is the cold-junction temperature, °C, for EMF readings
	// that carry no cj=, used when ColdJunctionSet is true. Without it such
	// readings assume 25 °C and a warning says so.
	ColdJunctionC   float64
	ColdJunctionSet bool

	// Dir is where the curve files go ("" = the current directory). It is
	// searched for interrupted samples at the start of Run.
	Dir string
	// OutPath, when set, is the curve file of the first sample (it must end
	// in ".csv" and must not exist); later samples go beside it with
	// generated names.
	OutPath string
	// Meta is written into every sample's curve file (e.g. the shop, the
	// stand), before the form data of the sample.
	Meta []curvefile.Meta

	// Channels, when not empty, limits recording to these channel ids;
	// readings of other channels are still passed on in batches.
	Channels []string
	// Cups pairs channels into cups with two thermocouples: a wall
	// channel's readings go into its centre channel's samples (a device
	// line's wall_ch= pairs channels too, where Cups says nothing of the
	// centre channel). A wall channel is recorded even where Channels
	// leaves it out.
	Cups []Cup
	// MaxSamples stops starting new samples after this many (0 = no limit).
	MaxSamples int

	Trigger Trigger

	// MaxS is the time limit of a sample, s from its file's first reading
	// (default 600). A sample ends earlier when the tracker says freezing
	// is done (Stop), by hand, or when acquisition stops.
	MaxS float64

	BatchEvery   time.Duration // shortest time between batches, default 2 ms (the dashboard merges batches into at most 30 redraws a second)
	ReconnectMin time.Duration // first reconnection delay, default 100 ms, doubling
	ReconnectMax time.Duration // longest reconnection delay, default 2 s
	SyncEvery    time.Duration // fsync of the curve files, default 500 ms (at most 1 s)
	SilentAfter  time.Duration // warn when a connected port has been quiet this long, default 10 s

	// Now is the clock, default time.Now. Readings without device time
	// are timed by it (monotonic), as they are framed.
	Now func() time.Time
}

func (c Config) withDefaults() Config {
	def := func(v *float64, d float64) {
		if *v <= 0 {
			*v = d
		}
	}
	defDur := func(v *time.Duration, d time.Duration) {
		if *v <= 0 {
			*v = d
		}
	}
	def(&c.Trigger.RiseC, 100)
	def(&c.Trigger.WithinS, 3)
	def(&c.Trigger.MinC, 300)
	def(&c.Trigger.PreS, 10)
	c.Trigger.PreS = max(c.Trigger.PreS, c.Trigger.WithinS)
	def(&c.MaxS, 600)
	defDur(&c.BatchEvery, 2*time.Millisecond)
	defDur(&c.ReconnectMin, 100*time.Millisecond)
	defDur(&c.ReconnectMax, 2*time.Second)
	defDur(&c.SyncEvery, 500*time.Millisecond)
	c.SyncEvery = min(c.SyncEvery, time.Second)
	defDur(&c.SilentAfter, 10*time.Second)
	if c.Now == nil {
		c.Now = time.Now
	}
	return c
}

// Bounds on what a device can make the acquirer keep: a device that
// invents channel ids, device-information keys or thermocouple names
// cannot exhaust memory. What goes beyond them is counted as garbage.
const (
	MaxChannels   = 64  // distinct channel ids of one port
	MaxDeviceKeys = 64  // distinct device-information keys kept for the files' "device" line
	maxWarnings   = 256 // distinct once-only warnings
)

// Acquirer reads one port, parses the line protocol, converts raw EMF,
// watches each channel for the pour, keeps the crash-safe raw logs and hands
// everything over as one ordered stream of items per batch (package feed).
// What a sample is called and when its freezing is done is decided
// downstream, by the sample tracker: the acquirer writes what SetMeta tells
// it and stops a sample when Stop says. Start, Stop and SetMeta may be
// called from any goroutine; they never block.
type Acquirer struct {
	open Opener
	cfg  Config
	out  chan feed.Batch
	in   *mailbox.Box[item]
	ctl  *mailbox.Box[control]
	fr   protocol.Framer
	ran  atomic.Bool

	// Owned by the Run goroutine.
	st         feed.Status
	pending    feed.Batch
	lastIdx    map[string]int // channel → index of its last reading item in pending
	chans      map[string]*channel
	order      []string // channel ids in order of appearance
	tb         timebase
	tc         thermocouple.Type
	tcName     string
	devInfo    []curvefile.Meta // latest device info, the keys that are not sample keys
	nextMeta   []curvefile.Meta // sample metadata for channels not seen yet (SetMeta of channel "")
	started    int              // samples started
	lastLine   time.Time
	silentSaid bool
	warned     map[string]bool
	seen       map[string]bool // channel ids seen, at most MaxChannels
	lastOpen   string
	garbageAt  time.Time
	garbageN   int
	rateN      int
	rateAt     time.Time
	everConn   bool
	wantStatus bool      // send a batch even if it holds nothing but the status
	sentAt     time.Time // when the last batch went
	cups       cups      // channels paired into two-thermocouple cups
	startedAt  time.Time // when Run started, by cfg.Now
}

// New returns an Acquirer that reads from what open opens.
func New(open Opener, cfg Config) *Acquirer {
	return &Acquirer{
		open: open,
		cfg:  cfg.withDefaults(),
		out:  make(chan feed.Batch),
		in:   mailbox.New[item](),
		ctl:  mailbox.New[control](),
	}
}

// Batches is the stream of batches. It is closed when Run returns.
func (a *Acquirer) Batches() <-chan feed.Batch { return a.out }

// Start starts recording channel ch ("" = "1") now, with the pre-trigger
// readings, unless it is already recording.
func (a *Acquirer) Start(ch string) { a.ctl.Push(control{op: opStart, ch: ch}) }

// Stop ends sample number sample of channel ch ("" = "1"; sample 0: the
// one recording) and completes its file, with reason as its "ended"
// metadata. A sample that has ended already is left as it is.
func (a *Acquirer) Stop(ch string, sample int, reason string) {
	a.ctl.Push(control{op: opStop, ch: ch, sample: sample, reason: reason})
}

// StopAt is Stop with the sample time (s from the file's first reading) the
// sample ends at: readings after it, taken before the word arrived, are
// left out of the completed file (they stay in nothing: the sample ended
// before them). The tracker's stop after freezing uses it, so that a file
// does not depend on how long the word took.
func (a *Acquirer) StopAt(ch string, sample int, atS float64, reason string) {
	a.ctl.Push(control{op: opStop, ch: ch, sample: sample, reason: reason, atS: atS, cut: true})
}

// SetMeta sets the sample metadata (the sample keys of the line protocol:
// sample, alloy, operator, ...) of sample number sample of channel ch.
// With sample 0 it is for the channel's next sample file (ch "": for
// channels not seen yet), replacing what was set before; never for the one
// recording. With the number of the sample recording, its completed file
// says meta in place of the sample keys it started with.
func (a *Acquirer) SetMeta(ch string, sample int, meta []curvefile.Meta) {
	a.ctl.Push(control{op: opMeta, ch: ch, sample: sample, meta: slices.Clone(meta)})
}

type controlOp uint8

const (
	opStart controlOp = iota + 1
	opStop
	opMeta
)

type control struct {
	op     controlOp
	ch     string
	sample int
	reason string
	meta   []curvefile.Meta
	atS    float64 // opStop with cut: the sample time it ends at
	cut    bool
}

type itemKind uint8

const (
	itemLine itemKind = iota + 1
	itemConnected
	itemDisconnected
	itemOpenFailed
)

// item is what the reader goroutine hands to Run.
type item struct {
	kind itemKind
	line []byte
	at   time.Time
	err  error
}

// Run acquires until ctx ends: it recovers interrupted samples in the
// output directory, opens the port (and reopens it with back-off whenever
// it fails), and sends batches. When ctx ends, samples being recorded are
// completed, a last batch is offered for up to 2 s and Batches is closed.
// Run returns an error only for a setting it cannot work with or a curve
// file it cannot write; a port that fails is reopened, not an error.
func (a *Acquirer) Run(ctx context.Context) (err error) {
	defer close(a.out)
	if !a.ran.CompareAndSwap(false, true) {
		return errors.New("acquire: Run called twice")
	}
	if err := a.setup(); err != nil {
		return err
	}
	recs, rerr := recoverDir(a.outDir(), a.cfg.Now())
	for _, r := range recs {
		it := feed.Item{Kind: feed.KindRecovered, Path: r.Path, Channel: r.Channel,
			Text: fmt.Sprintf("recovered interrupted sample %s (%d readings)", r.Path, r.Rows)}
		if c, err := curvefile.ReadFile(r.Path); err == nil {
			it.Curve = c
		} else {
			a.warn("recover:"+r.Path, fmt.Sprintf("recovered %s cannot be read back: %v", r.Path, err))
		}
		a.item(it)
	}
	if rerr != nil {
		a.warn("recover", rerr.Error())
	}

	readCtx, stopRead := context.WithCancel(ctx)
	var wg sync.WaitGroup
	wg.Go(func() { a.readLoop(readCtx) })
	defer func() {
		stopRead()
		wg.Wait()
		// What the reader handed over before it stopped still counts.
		for _, it := range a.in.Take(nil) {
			if herr := a.handle(&it); herr != nil && err == nil {
				err = herr
			}
		}
		if ferr := a.finishAll("acquisition stopped"); ferr != nil && err == nil {
			err = ferr
		}
		if err != nil {
			// said in the stream too: the screen and its log show why
			// the feed ended, not only the command's exit
			a.item(feed.Item{Kind: feed.KindWarning, TimeS: a.tb.last, Text: "acquisition stopped: " + err.Error()})
		}
		a.flushLast()
	}()

	tick := time.NewTicker(250 * time.Millisecond)
	defer tick.Stop()
	send := time.NewTimer(time.Hour)
	defer send.Stop()
	var nextSend time.Time
	var items []item
	var ctls []control
	for {
		var out chan<- feed.Batch
		if a.hasPending() {
			if wait := time.Until(nextSend); wait <= 0 {
				out = a.out
			} else {
				send.Reset(wait)
			}
		}
		var b feed.Batch
		if out != nil {
			b = a.batch()
		}
		select {
		case <-ctx.Done():
			return nil
		case out <- b:
			a.pending = feed.Batch{}
			a.wantStatus = false
			clear(a.lastIdx)
			a.sentAt = a.cfg.Now()
			nextSend = time.Now().Add(a.cfg.BatchEvery)
		case <-send.C:
		case <-a.in.Ready():
			items = a.in.Take(items)
			for i := range items {
				if err := a.handle(&items[i]); err != nil {
					return err
				}
			}
		case <-a.ctl.Ready():
			ctls = a.ctl.Take(ctls)
			for _, c := range ctls {
				if err := a.control(c); err != nil {
					return err
				}
			}
		case <-tick.C:
			if err := a.tick(); err != nil {
				return err
			}
		}
	}
}

func (a *Acquirer) setup() error {
	a.startedAt = a.cfg.Now()
	a.lastIdx = map[string]int{}
	a.chans = map[string]*channel{}
	a.warned = map[string]bool{}
	a.seen = map[string]bool{}
	a.st.Port = a.cfg.Port
	a.st.ColdJunctionC = math.NaN()
	if a.cfg.ColdJunctionSet {
		a.st.ColdJunctionC = a.cfg.ColdJunctionC
	}
	if a.cfg.Thermocouple != "" {
		tc, err := thermocouple.Lookup(a.cfg.Thermocouple)
		if err != nil {
			return fmt.Errorf("acquire: %w", err)
		}
		a.tc, a.tcName = tc, tc.Name()
		a.st.Thermocouple = a.tcName
	}
	var err error
	if a.cups, err = newCups(a.cfg.Cups); err != nil {
		return err
	}
	if a.cfg.OutPath != "" && filepath.Ext(a.cfg.OutPath) != ".csv" {
		return fmt.Errorf("acquire: output file %s: the name must end in .csv", a.cfg.OutPath)
	}
	if a.cfg.OutPath != "" && exists(a.cfg.OutPath) {
		return fmt.Errorf("acquire: output file %s already exists; not overwritten", a.cfg.OutPath)
	}
	return checkDirWritable(a.outDir())
}

// checkDirWritable makes the curve directory and checks that a file can be
// created in it, so that a read-only or missing place fails at the start
// rather than at the pour, when the sample would be lost.
func checkDirWritable(dir string) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("acquire: curve file directory %s: %w", dir, err)
	}
	probe, err := os.CreateTemp(dir, ".undercool-probe-*")
	if err != nil {
		return fmt.Errorf("acquire: curve file directory %s cannot be written: %w", dir, err)
	}
	probe.Close()
	os.Remove(probe.Name())
	return nil
}

func (a *Acquirer) outDir() string {
	if a.cfg.OutPath != "" {
		return filepath.Dir(a.cfg.OutPath)
	}
	if a.cfg.Dir == "" {
		return "."
	}
	return a.cfg.Dir
}

// readLoop opens the port, reads it line by line and reopens it with
// back-off when it fails, until ctx ends.
func (a *Acquirer) readLoop(ctx context.Context) {
	delay := a.cfg.ReconnectMin
	for ctx.Err() == nil {
		rc, err := a.open(ctx)
		if err != nil {
			if ctx.Err() != nil {
				return
			}
			a.in.Push(item{kind: itemOpenFailed, err: err, at: a.cfg.Now()})
		} else {
			a.in.Push(item{kind: itemConnected, at: a.cfg.Now()})
			stop := context.AfterFunc(ctx, func() { rc.Close() })
			lines, err := a.readPort(ctx, rc)
			stop()
			rc.Close()
			if ctx.Err() != nil {
				return
			}
			if err == nil {
				err = errors.New("end of stream")
			}
			a.in.Push(item{kind: itemDisconnected, err: err, at: a.cfg.Now()})
			if lines > 0 {
				delay = a.cfg.ReconnectMin
			}
		}
		t := time.NewTimer(delay)
		select {
		case <-ctx.Done():
			t.Stop()
			return
		case <-t.C:
		}
		delay = min(2*delay, a.cfg.ReconnectMax)
	}
}

func (a *Acquirer) readPort(ctx context.Context, rc interface{ Read([]byte) (int, error) }) (lines int, err error) {
	a.fr.Reset()
	sc := bufio.NewScanner(waitForData(ctx, rc))
	sc.Buffer(make([]byte, 4096), 64*1024)
	sc.Split(a.fr.Split)
	for sc.Scan() {
		a.in.Push(item{kind: itemLine, line: slices.Clone(sc.Bytes()), at: a.cfg.Now()})
		lines++
	}
	return lines, sc.Err()
}

func (a *Acquirer) hasPending() bool {
	return len(a.pending.Items) > 0 || a.wantStatus
}

// batch is the pending batch with a fresh status.
func (a *Acquirer) batch() feed.Batch {
	b := a.pending
	b.Status = a.status()
	return b
}

func (a *Acquirer) status() feed.Status {
	s := a.st
	s.Overlong = int(a.fr.Overlong.Load())
	s.Partial = int(a.fr.Partial.Load())
	s.LF, s.CRLF, s.CR = int(a.fr.LF.Load()), int(a.fr.CRLF.Load()), int(a.fr.CR.Load())
	s.Garbage += s.Overlong
	now := a.cfg.Now()
	if !a.lastLine.IsZero() {
		s.SilentS = now.Sub(a.lastLine).Seconds()
	}
	// never 0 once running: 0 means "no host clock"
	s.HostS = max(now.Sub(a.startedAt).Seconds(), 1e-9)
	s.Channels = make(map[string]feed.ChannelStatus, len(a.chans))
	for id, c := range a.chans {
		cs := feed.ChannelStatus{Recording: c.log != nil, Sample: c.n, Readings: c.readings, Faults: c.faults, WallOf: a.wallCentre(id)}
		if !c.lastAt.IsZero() {
			cs.SilentS = now.Sub(c.lastAt).Seconds()
		}
		s.Channels[id] = cs
	}
	return s
}

// flushLast offers the final batch for up to 2 s.
func (a *Acquirer) flushLast() {
	if !a.hasPending() {
		return
	}
	t := time.NewTimer(2 * time.Second)
	defer t.Stop()
	select {
	case a.out <- a.batch():
	case <-t.C:
	}
}

func (a *Acquirer) item(it feed.Item) { a.pending.Items = append(a.pending.Items, it) }

// warn emits a warning once per key. Beyond maxWarnings distinct keys (a
// device that makes up a new thermocouple name on every line) a warning is
// counted as garbage instead.
func (a *Acquirer) warn(key, text string) {
	if a.warned[key] {
		return
	}
	if len(a.warned) >= maxWarnings {
		a.st.Garbage++
		return
	}
	a.warned[key] = true
	a.item(feed.Item{Kind: feed.KindWarning, Text: text, TimeS: a.tb.last})
}

func (a *Acquirer) handle(it *item) error {
	switch it.kind {
	case itemConnected:
		a.st.Connected, a.st.Reconnecting = true, false
		text := "connected to " + a.portName()
		if a.everConn {
			a.st.Reconnects++
			text = "reconnected to " + a.portName()
		}
		a.everConn = true
		a.lastOpen = ""
		a.lastLine = it.at
		a.silentSaid = false
		a.item(feed.Item{Kind: feed.KindConnected, TimeS: a.tb.last, Text: text})
	case itemDisconnected:
		a.st.Connected, a.st.Reconnecting = false, true
		for _, i := range a.lastIdx {
			a.pending.Items[i].Reading.Flags |= feed.FlagGapAfter
		}
		for _, c := range a.chans {
			c.markGap()
		}
		a.item(feed.Item{Kind: feed.KindDisconnected, TimeS: a.tb.last,
			Text: fmt.Sprintf("lost %s (%v); reconnecting", a.portName(), it.err)})
	case itemOpenFailed:
		a.st.Connected, a.st.Reconnecting = false, true
		if msg := it.err.Error(); msg != a.lastOpen {
			a.lastOpen = msg
			a.item(feed.Item{Kind: feed.KindWarning, TimeS: a.tb.last, Text: msg + "; retrying"})
		}
	case itemLine:
		return a.line(it)
	}
	return nil
}

func (a *Acquirer) portName() string {
	if a.cfg.Port == "" {
		return "the device"
	}
	return a.cfg.Port
}

func (a *Acquirer) line(it *item) error {
	a.lastLine = it.at
	a.silentSaid = false
	l, err := protocol.ParseLine(it.line)
	if err != nil {
		a.st.Lines++
		a.garbage(it.line, err)
		return nil
	}
	switch l.Kind {
	case protocol.LineBlank:
		a.st.Blank++
		return nil
	case protocol.LineInfo:
		a.st.Lines++
		a.info(&l)
		return nil
	}
	a.st.Lines++
	if !a.seen[l.Channel] {
		if len(a.seen) >= MaxChannels {
			a.garbage(it.line, fmt.Errorf("channel %s would be channel number %d of %s; at most %d are read", l.Channel, MaxChannels+1, a.portName(), MaxChannels))
			return nil
		}
		a.seen[l.Channel] = true
	}
	r := a.reading(&l, it.at)
	return a.accept(r, it.at)
}

// garbage counts a bad line and tells the operator about the first one and
// then at most one every 10 s.
func (a *Acquirer) garbage(b []byte, err error) {
	a.st.Garbage++
	a.garbageN++
	if len(b) > 60 {
		b = b[:60]
	}
	a.st.LastGarbage = escape.Line(fmt.Sprintf("%q: %v", b, err))
	now := a.cfg.Now()
	if !a.garbageAt.IsZero() && now.Sub(a.garbageAt) < 10*time.Second {
		return
	}
	a.garbageAt = now
	a.item(feed.Item{Kind: feed.KindWarning, TimeS: a.tb.last, Text: fmt.Sprintf(
		"%d garbage line(s) from %s, last %s (noise on the line, or the wrong --baud or --frame?)",
		a.garbageN, a.portName(), a.st.LastGarbage)})
	a.garbageN = 0
}

// info passes a device line on; its sample keys are the tracker's to
// decide on, the others describe the device (the file's "device" line).
func (a *Acquirer) info(l *protocol.Line) {
	ch := l.InfoValue("ch")
	kv := make([]curvefile.Meta, 0, len(l.Info))
	for _, x := range l.Info {
		kv = append(kv, curvefile.Meta{Key: x.Key, Value: x.Value})
		if !protocol.IsSampleKey(x.Key) && x.Key != "ch" && !isCupKey(x.Key) {
			if len(a.devInfo) >= MaxDeviceKeys && metaIndex(a.devInfo, x.Key) < 0 {
				a.st.Garbage++
				a.warn("devkeys", fmt.Sprintf("%s announces more than %d device keys; the others are not kept (counted as garbage)", a.portName(), MaxDeviceKeys))
				continue
			}
			a.devInfo = mergeMeta(a.devInfo, []curvefile.Meta{{Key: x.Key, Value: x.Value}})
		}
	}
	if tcName := l.InfoValue("tc"); tcName != "" {
		a.deviceTC(tcName)
	}
	a.deviceCup(ch, l)
	a.item(feed.Item{Kind: feed.KindDeviceInfo, Channel: ch, TimeS: a.tb.last, Meta: kv,
		Text: "device:" + string(protocol.AppendLine(nil, *l)[1:])})
}

func (a *Acquirer) deviceTC(name string) {
	tc, err := thermocouple.Lookup(name)
	if err != nil {
		// once: a device making up a name on every line must not fill the
		// warnings
		a.warn("devtc", fmt.Sprintf("the device announces thermocouple %q: %v", name, err))
		return
	}
	switch {
	case a.cfg.Thermocouple == "":
		a.tc, a.tcName = tc, tc.Name()
		a.st.Thermocouple = a.tcName
	case tc.Name() != a.tcName:
		a.warn("tcdiff", fmt.Sprintf("the device announces type %s but EMF is converted as type %s (--tc)", tc.Name(), a.tcName))
	}
}

// reading turns a parsed reading line into a Reading.
func (a *Acquirer) reading(l *protocol.Line, at time.Time) feed.Reading {
	r := feed.Reading{TimeS: a.tb.at(l, at), Channel: l.Channel}
	switch {
	case l.Fault == protocol.FaultOpen:
		r.Flags, r.TempC = feed.FlagOpen, math.NaN()
	case l.Fault != protocol.FaultNone:
		r.Flags, r.TempC = feed.FlagFault, math.NaN()
	case l.HasEMF:
		r.Flags |= feed.FlagEMF
		r.EMFmV = l.EMFmV
		switch {
		case l.HasCJ:
			r.ColdJctC = l.ColdJctC
		case a.cfg.ColdJunctionSet:
			r.ColdJctC = a.cfg.ColdJunctionC
		default:
			r.ColdJctC = 25
			a.warn("cj", "EMF readings without cj= and no --cj given: assuming a 25 °C cold junction")
		}
		if a.tcName == "" {
			a.tc, _ = thermocouple.Lookup("K")
			a.tcName = "K"
			a.st.Thermocouple = "K"
			a.warn("tc", "EMF readings and no thermocouple type given (--tc) or announced by the device: converting as type K")
		}
		t, err := a.tc.Temp(r.EMFmV, r.ColdJctC)
		if err != nil {
			r.Flags |= feed.FlagFault
			r.TempC = math.NaN()
			a.warn("emf:"+l.Channel, fmt.Sprintf("channel %s: %v", l.Channel, err))
		} else {
			r.TempC = t
		}
	default:
		r.TempC = l.TempC
	}
	if l.HasCJ && !l.HasEMF {
		r.ColdJctC = l.ColdJctC
	}
	return r
}

// accept passes a reading on and through its channel's lifecycle.
func (a *Acquirer) accept(r feed.Reading, at time.Time) error {
	if !r.Valid() {
		a.st.Faults++
	}
	a.st.Readings++
	a.rateN++
	c := a.channel(r.Channel)
	if c != nil && c.gapBefore {
		r.Flags |= feed.FlagGapBefore
	}
	a.lastIdx[r.Channel] = len(a.pending.Items)
	a.item(feed.Item{Kind: feed.KindReading, Channel: r.Channel, TimeS: r.TimeS, Reading: r})
	if c == nil {
		return nil
	}
	if centre := a.wallCentre(c.id); centre != "" && c.log == nil {
		return a.wallReading(c, centre, r, at)
	}
	return c.add(a, r, at)
}

// channel returns the lifecycle of channel id, creating it on first use;
// nil when the configuration leaves that channel out.
func (a *Acquirer) channel(id string) *channel {
	if c, ok := a.chans[id]; ok {
		return c
	}
	if len(a.cfg.Channels) > 0 && !slices.Contains(a.cfg.Channels, id) && a.wallCentre(id) == "" {
		return nil
	}
	c := &channel{id: id, next: slices.Clone(a.nextMeta)}
	a.chans[id] = c
	a.order = append(a.order, id)
	return c
}

func (a *Acquirer) control(c control) error {
	if c.ch == "" && c.op != opMeta {
		c.ch = "1" // the channel of lines that name none
	}
	switch c.op {
	case opMeta:
		if c.ch == "" {
			a.nextMeta = cleanMeta(c.meta)
			return nil
		}
		if ch := a.channel(c.ch); ch != nil {
			ch.setMeta(c.sample, cleanMeta(c.meta))
		}
	case opStart:
		if centre := a.wallCentre(c.ch); centre != "" {
			a.item(feed.Item{Kind: feed.KindWarning, Channel: c.ch, TimeS: a.tb.last,
				Text: fmt.Sprintf("channel %s is the wall thermocouple of channel %s's cup: start channel %s", c.ch, centre, centre)})
			return nil
		}
		ch := a.channel(c.ch)
		if ch == nil {
			a.item(feed.Item{Kind: feed.KindWarning, Channel: c.ch, TimeS: a.tb.last,
				Text: fmt.Sprintf("channel %q is not being recorded (channels: %v)", c.ch, a.cfg.Channels)})
			return nil
		}
		if ch.log == nil {
			return ch.start(a, "started by hand", a.tb.last, a.cfg.Now())
		}
	case opStop:
		if ch, ok := a.chans[c.ch]; ok && ch.log != nil && (c.sample == 0 || c.sample == ch.n) {
			reason := c.reason
			if reason == "" {
				reason = "stopped by hand"
			}
			if c.cut {
				ch.log.cutAfter(c.atS)
			}
			return ch.finish(a, reason)
		}
	}
	return nil
}

// tick runs four times a second: the reading rate, time limits of samples
// whose readings stopped, and a warning for a silent port.
func (a *Acquirer) tick() error {
	now := a.cfg.Now()
	if a.rateAt.IsZero() {
		a.rateAt = now
	} else if d := now.Sub(a.rateAt); d >= time.Second {
		a.st.ReadingsPerS = float64(a.rateN) / d.Seconds()
		a.rateN, a.rateAt = 0, now
	}
	for _, id := range a.order {
		c := a.chans[id]
		if c.log != nil && now.Sub(c.startHost).Seconds() > a.cfg.MaxS+2 {
			if err := c.finish(a, fmt.Sprintf("time limit of %g s reached (no readings for %.0f s)",
				a.cfg.MaxS, now.Sub(a.lastLine).Seconds())); err != nil {
				return err
			}
		}
	}
	if a.st.Connected && !a.silentSaid && !a.lastLine.IsZero() && now.Sub(a.lastLine) >= a.cfg.SilentAfter {
		a.silentSaid = true
		a.item(feed.Item{Kind: feed.KindWarning, TimeS: a.tb.last,
			Text: fmt.Sprintf("no data from %s for %.0f s (still connected)", a.portName(), now.Sub(a.lastLine).Seconds())})
	}
	if now.Sub(a.sentAt) >= time.Second {
		a.wantStatus = true // keep the status flowing while nothing happens
	}
	return nil
}

// finishAll completes every sample still recording.
func (a *Acquirer) finishAll(reason string) error {
	var first error
	for _, id := range a.order {
		c := a.chans[id]
		if c.log != nil {
			if err := c.finish(a, reason); err != nil && first == nil {
				first = err
			}
		}
	}
	return first
}

// timebase turns device times and host arrival times into acquisition
// seconds: device ms= times where the line has one (relative to the first,
// re-based when the device restarts), else the host's monotonic clock.
type timebase struct {
	started bool
	host0   time.Time
	haveMS  bool
	msBase  uint64
	offS    float64
	lastMS  uint64
	last    float64 // the latest time given
}

func (tb *timebase) at(l *protocol.Line, at time.Time) float64 {
	if !tb.started {
		tb.started, tb.host0 = true, at
	}
	host := at.Sub(tb.host0).Seconds()
	t := host
	if l.HasMS {
		restart := tb.haveMS && (l.MS+1000 < tb.lastMS || l.MS > tb.lastMS+3_600_000)
		if !tb.haveMS || restart {
			tb.haveMS, tb.msBase = true, l.MS
			tb.offS = 0
			if restart || tb.last > 0 {
				tb.offS = max(host, tb.last)
			}
		}
		tb.lastMS = l.MS
		t = tb.offS + float64(l.MS-tb.msBase)/1000
	}
	tb.last = max(tb.last, t)
	return t
}
