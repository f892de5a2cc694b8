package acquire

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"sync/atomic"
	"testing"
	"testing/iotest"
	"time"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/protocol"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// TestLifecycle: a constructed cup curve (sent as fast as the pipe takes
// it, timed by device ms) is triggered by its pour, recorded with the
// pre-trigger readings, frozen by the injected rule and completed after
// the margin; the file holds the sent readings exactly.
func TestLifecycle(t *testing.T) {
	sent, col := recordCup(t, `! dev=test-amp fw=2.1 sample="L-2417 cup 1" operator="Pell Brasswick"`)

	st := col.has(EventSampleStarted, "1")
	fr := col.has(EventSampleFrozen, "1")
	done := col.has(EventSampleDone, "1")
	if st == nil || fr == nil || !strings.Contains(st.Text, "pour detected") {
		t.Fatalf("events: %v", col.eventTexts())
	}
	// The pre-trigger buffer is 10 s: the file starts 10 s before the
	// reading that triggered (ambient lasted 12 s).
	first := int((st.TimeS) * 20)
	c := readRows(t, done.Path)
	checkRowsMatch(t, c, sent, first)
	// The trigger is the first reading of at least 300 °C (and 100 °C above
	// ambient): 25 + 1315·0.25 at 12.25 s.
	if trig := 12.25; math.Abs(st.TimeS-(trig-10)) > 1e-9 {
		t.Fatalf("file starts at %v s of acquisition, want %v (10 s before the trigger)", st.TimeS, trig-10)
	}
	// Frozen at 30 s of sample time, done 5 s later.
	last := c.float(t, len(c.rows)-1, "time_s")
	if last < 35 || last > 35.1 {
		t.Fatalf("last row at %v s, want 35 (frozen at 30 + margin 5)", last)
	}
	for _, k := range []string{"sample", "operator", "channel", "started", "trigger", "device", "ended"} {
		if c.meta[k] == "" {
			t.Errorf("metadata %q missing: %v", k, c.meta)
		}
	}
	if c.meta["sample"] != "L-2417 cup 1" || c.meta["operator"] != "Pell Brasswick" || c.meta["ended"] != "freezing done" || c.meta["simulated"] != "" {
		t.Errorf("metadata %v", c.meta)
	}
	if !strings.Contains(filepath.Base(done.Path), "L-2417-cup-1") {
		t.Errorf("file name %s does not carry the sample", done.Path)
	}
	if _, err := os.Stat(partialName(done.Path)); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("partial file left: %v", err)
	}
	if col.last.Channels["1"] != StateDone {
		t.Errorf("state %v, want done", col.last.Channels["1"])
	}
}

// TestTwoChannels: a plain and a tellurium cup on one port are triggered
// and completed independently.
func TestTwoChannels(t *testing.T) {
	dir := t.TempDir()
	port := newPipePort()
	_, col, _ := startAcq(t, port.open, Config{Dir: dir, Finished: finishedAfter(20), FreezeMarginS: 1})
	plain := cupCurve(10, 11, 40)
	tell := cupCurve(10, 16, 40)
	w := port.plug()
	go func() {
		for i := range plain {
			w.Write([]byte(plain[i].line("1") + tell[i].line("tell")))
		}
	}()
	col.until("both done", 10*time.Second, func() bool {
		return col.has(EventSampleDone, "1") != nil && col.has(EventSampleDone, "tell") != nil
	})
	p := readRows(t, col.has(EventSampleDone, "1").Path)
	q := readRows(t, col.has(EventSampleDone, "tell").Path)
	checkRowsMatch(t, p, plain, int(col.has(EventSampleStarted, "1").TimeS*10+0.5))
	checkRowsMatch(t, q, tell, int(col.has(EventSampleStarted, "tell").TimeS*10+0.5))
	if d := col.has(EventSampleStarted, "tell").TimeS - col.has(EventSampleStarted, "1").TimeS; math.Abs(d-5) > 0.01 {
		t.Fatalf("tellurium cup started %v s after the plain one, want 5", d)
	}
	if p.meta["channel"] != "1" || q.meta["channel"] != "tell" {
		t.Fatalf("channels %q %q", p.meta["channel"], q.meta["channel"])
	}
}

// TestReconnect: the device is unplugged mid-sample and plugged back; the
// sample goes on, nothing sent is lost and the gap is marked.
func TestReconnect(t *testing.T) {
	dir := t.TempDir()
	port := newPipePort()
	_, col, _ := startAcq(t, port.open, Config{Dir: dir, Finished: finishedAfter(25), FreezeMarginS: 1})
	sent := cupCurve(10, 3, 40)
	cut := 150
	w := port.plug()
	for _, r := range sent[:cut] {
		w.Write([]byte(r.line("1")))
	}
	col.until("readings before the unplug", 5*time.Second, func() bool { return len(col.readings) == cut })
	w.Write([]byte("ch=1 ms=99 c=12")) // cut off by the unplug: a partial line
	w.CloseWithError(errors.New("device unplugged"))
	col.until("disconnect", 5*time.Second, func() bool { return col.has(EventDisconnected, "") != nil })
	w = port.plug()
	col.until("reconnect", 5*time.Second, func() bool { return col.count(EventConnected) == 2 })
	for _, r := range sent[cut:] {
		w.Write([]byte(r.line("1")))
	}
	col.until("sample done", 10*time.Second, func() bool { return col.has(EventSampleDone, "1") != nil })

	c := readRows(t, col.has(EventSampleDone, "1").Path)
	checkRowsMatch(t, c, sent, 0)
	fl := c.col("flags")
	if c.rows[cut-1][fl] != "gap_after" || c.rows[cut][fl] != "gap_before" {
		t.Fatalf("flags around the gap: %q %q", c.rows[cut-1][fl], c.rows[cut][fl])
	}
	if col.readings[cut].Flags&FlagGapBefore == 0 {
		t.Fatalf("first reading after the gap not flagged: %+v", col.readings[cut])
	}
	if col.last.Reconnects != 1 || col.last.Partial != 1 {
		t.Fatalf("reconnects %d partial %d, want 1 and 1", col.last.Reconnects, col.last.Partial)
	}
	if e := col.has(EventDisconnected, ""); !strings.Contains(e.Text, "device unplugged") {
		t.Fatalf("disconnect text %q", e.Text)
	}
}

// TestIotestPorts: the port is, connection after connection, an iotest
// reader that ends (EOF, or a timeout error): the acquirer reconnects
// each time and every reading arrives in order.
func TestIotestPorts(t *testing.T) {
	parts := []string{"c=1\r\nc=2\r\n", "c=3\rc=4\r", "c=5\nc=6\n", "c=7\nc=8\n", "c=9\n"}
	wraps := []func(io.Reader) io.Reader{iotest.OneByteReader, iotest.HalfReader, iotest.DataErrReader,
		iotest.TimeoutReader, // the first read takes the whole part, the second times out
		func(r io.Reader) io.Reader { return zeroReads(r, 500) }}
	var n atomic.Int32
	open := func(ctx context.Context) (io.ReadCloser, error) {
		i := int(n.Add(1)) - 1
		if i >= len(parts) {
			<-ctx.Done()
			return nil, ctx.Err()
		}
		return io.NopCloser(wraps[i](strings.NewReader(parts[i]))), nil
	}
	_, col, _ := startAcq(t, open, Config{Dir: t.TempDir(), ReconnectMin: time.Millisecond, ReconnectMax: 2 * time.Millisecond})
	col.until("nine readings", 5*time.Second, func() bool { return len(col.readings) == 9 })
	for i, r := range col.readings {
		if r.TempC != float64(i+1) {
			t.Fatalf("reading %d is %v", i, r.TempC)
		}
	}
	col.until("status", 5*time.Second, func() bool { return col.last.Reconnects >= 4 })
	if col.last.CRLF != 2 || col.last.CR != 2 || col.last.LF != 5 {
		t.Fatalf("terminators LF %d CRLF %d CR %d", col.last.LF, col.last.CRLF, col.last.CR)
	}
}

// zeroReads returns (0, nil) n times before each real read, like a serial
// port whose read timeout fires.
func zeroReads(r io.Reader, n int) io.Reader {
	k := 0
	return readFunc(func(b []byte) (int, error) {
		if k < n {
			k++
			return 0, nil
		}
		k = 0
		return r.Read(b)
	})
}

// TestLaggingConsumer: while nobody takes batches the readings pile up
// for the next one; none is dropped, and the reader is not held up.
func TestLaggingConsumer(t *testing.T) {
	port := newPipePort()
	_, col, _ := startAcq(t, port.open, Config{Dir: t.TempDir(), Trigger: Trigger{Manual: true}})
	w := port.plug()
	done := make(chan struct{})
	go func() {
		for i := range 5000 {
			w.Write([]byte("ms=" + itoa(i) + " c=" + itoa(i%1000) + "\n"))
		}
		close(done)
	}()
	select {
	case <-done: // the device wrote everything without anyone reading batches
	case <-time.After(10 * time.Second):
		t.Fatal("the reader was held up by a consumer that does not read")
	}
	col.until("all readings", 10*time.Second, func() bool { return len(col.readings) == 5000 })
	for i, r := range col.readings {
		if r.TimeS != float64(i)/1000 {
			t.Fatalf("reading %d at %v s", i, r.TimeS)
		}
	}
	if col.batches > 50 {
		t.Fatalf("%d batches for a backlog, want it gathered", col.batches)
	}
}

func itoa(i int) string { return strconv.Itoa(i) }

// TestGarbageAndFaults: garbage, over-long lines, checksum errors, open
// circuits and faults are counted and reported, never fatal.
func TestGarbageAndFaults(t *testing.T) {
	port := newPipePort()
	_, col, _ := startAcq(t, port.open, Config{Dir: t.TempDir(), Trigger: Trigger{Manual: true}})
	w := port.plug()
	go func() {
		io.WriteString(w, "c=20\n\xf8\x80\x9e\x00\xfe\n"+strings.Repeat("z", 2000)+"\nc=25.25*3B\nf=open\nf=short\nmv=99\n\n  \nc=21\n")
	}()
	col.until("c=21", 5*time.Second, func() bool { return len(col.readings) == 5 })
	s := col.last
	if s.Garbage != 3 || s.Overlong != 1 || s.Faults != 3 || s.Blank != 2 || s.Lines != 7 {
		t.Fatalf("status %+v", s)
	}
	r := col.readings
	if r[1].Flags&FlagOpen == 0 || r[2].Flags&FlagFault == 0 || r[3].Flags&(FlagFault|FlagEMF) != FlagFault|FlagEMF || r[4].TempC != 21 {
		t.Fatalf("readings %+v", r)
	}
	w2 := col.has(EventWarning, "")
	if w2 == nil || !strings.Contains(w2.Text, "garbage") {
		t.Fatalf("no garbage warning: %v", col.eventTexts())
	}
	if !strings.Contains(s.LastGarbage, "checksum") {
		t.Fatalf("last garbage %q", s.LastGarbage)
	}
}

// TestEMF converts raw EMF with the reference functions: type K 40.276 mV
// with the cold junction at 25 °C (1.000 mV) is 41.276 mV from 0 °C, the
// NIST SRD 60 table value for 1000 °C; type J (announced by the device)
// 31.825 mV at cj 25 °C (1.277 mV) is 33.102 mV, the NIST SRD 60 value for
// 600 °C. Tolerance 0.05 °C (the table's 0.001 mV rounding is ≈0.02 °C).
func TestEMF(t *testing.T) {
	port := newPipePort()
	_, col, _ := startAcq(t, port.open, Config{Dir: t.TempDir(), Trigger: Trigger{Manual: true},
		ColdJunctionC: 25, ColdJunctionSet: true})
	w := port.plug()
	go io.WriteString(w, "mv=40.276 cj=25\nmv=40.276\n! tc=J\nmv=31.825\n")
	col.until("three readings", 5*time.Second, func() bool { return len(col.readings) == 3 })
	want := []float64{1000, 1000, 600}
	for i, r := range col.readings {
		if r.Flags&FlagEMF == 0 || math.Abs(r.TempC-want[i]) > 0.05 || r.ColdJctC != 25 {
			t.Errorf("reading %d: %+v, want %v °C", i, r, want[i])
		}
	}
	if e := col.has(EventDeviceInfo, ""); e == nil || e.Info["tc"] != "J" {
		t.Fatalf("device info event: %v", col.eventTexts())
	}
}

// TestManualStartStopMeta: a sample started and stopped by hand carries
// the form data set while it records.
func TestManualStartStopMeta(t *testing.T) {
	dir := t.TempDir()
	port := newPipePort()
	a, col, _ := startAcq(t, port.open, Config{Dir: dir, Trigger: Trigger{Manual: true},
		Meta: []curvefile.Meta{{Key: "shop", Value: "Cindermoth Iron & Light Alloy works"}}})
	w := port.plug()
	io.WriteString(w, "ms=0 c=700\nms=100 c=701\n")
	col.until("two readings", 5*time.Second, func() bool { return len(col.readings) == 2 })
	a.Start("1")
	col.until("started", 5*time.Second, func() bool { return col.has(EventSampleStarted, "1") != nil })
	a.SetMeta("1", []curvefile.Meta{{Key: "sample", Value: "L-2417 cup 2"}, {Key: "operator", Value: "Tobin Quenchmoor"}, {Key: "note", Value: "two\nlines"}})
	io.WriteString(w, "ms=200 c=690\nms=300 c=680\n")
	col.until("four readings", 5*time.Second, func() bool { return len(col.readings) == 4 })
	a.Stop("1")
	col.until("done", 5*time.Second, func() bool { return col.has(EventSampleDone, "1") != nil })
	c := readRows(t, col.has(EventSampleDone, "1").Path)
	if len(c.rows) != 4 || c.meta["sample"] != "L-2417 cup 2" || c.meta["operator"] != "Tobin Quenchmoor" ||
		c.meta["note"] != "two lines" || c.meta["ended"] != "stopped by hand" || c.meta["shop"] == "" {
		t.Fatalf("file %+v", c)
	}
}

// TestTimeLimits: a sample ends at its time limit, by its own readings or,
// when they stop coming, by the (injected) host clock.
func TestTimeLimits(t *testing.T) {
	t.Run("readings", func(t *testing.T) {
		port := newPipePort()
		_, col, _ := startAcq(t, port.open, Config{Dir: t.TempDir(), MaxS: 5, Finished: func(_, _ []float64) bool { return false }})
		w := port.plug()
		sent := cupCurve(10, 2, 20)
		go func() {
			for _, r := range sent {
				w.Write([]byte(r.line("1")))
			}
		}()
		col.until("done", 5*time.Second, func() bool { return col.has(EventSampleDone, "1") != nil })
		c := readRows(t, col.has(EventSampleDone, "1").Path)
		if got := c.float(t, len(c.rows)-1, "time_s"); got != 5 || !strings.Contains(c.meta["ended"], "time limit") {
			t.Fatalf("ended at %v s: %q", got, c.meta["ended"])
		}
	})
	t.Run("silent", func(t *testing.T) {
		var now atomic.Int64
		base := time.Date(2026, 3, 2, 6, 30, 0, 0, time.UTC)
		clock := func() time.Time { return base.Add(time.Duration(now.Load())) }
		port := newPipePort()
		_, col, _ := startAcq(t, port.open, Config{Dir: t.TempDir(), MaxS: 60, Now: clock, SilentAfter: 30 * time.Second})
		w := port.plug()
		io.WriteString(w, "ms=0 c=25\nms=500 c=600\n")
		col.until("started", 5*time.Second, func() bool { return col.has(EventSampleStarted, "1") != nil })
		now.Store(int64(63 * time.Second)) // the device went quiet for a minute
		col.until("done", 5*time.Second, func() bool { return col.has(EventSampleDone, "1") != nil })
		e := col.has(EventSampleDone, "1")
		if !strings.Contains(e.Text, "no readings") {
			t.Fatalf("done: %q", e.Text)
		}
		if w := col.has(EventWarning, ""); w == nil || !strings.Contains(w.Text, "no data") {
			t.Fatalf("no silence warning: %v", col.eventTexts())
		}
		if c := readRows(t, e.Path); c.meta["started"] != "2026-03-02T06:30:00.000Z" || len(c.rows) != 2 {
			t.Fatalf("file %+v", c)
		}
	})
}

// TestStopCompletes: ending Run completes a sample being recorded.
func TestStopCompletes(t *testing.T) {
	dir := t.TempDir()
	port := newPipePort()
	_, col, stop := startAcq(t, port.open, Config{Dir: dir})
	w := port.plug()
	io.WriteString(w, "c=25\nc=900\nc=880\n")
	col.until("started", 5*time.Second, func() bool { return len(col.readings) == 3 })
	if err := stop(); err != nil {
		t.Fatal(err)
	}
	names, _ := filepath.Glob(filepath.Join(dir, "*"))
	if len(names) != 1 || strings.HasSuffix(names[0], partialSuffix) {
		t.Fatalf("files %v", names)
	}
	if c := readRows(t, names[0]); len(c.rows) != 3 || c.meta["ended"] != "acquisition stopped" {
		t.Fatalf("file %+v", c)
	}
}

func TestTimebase(t *testing.T) {
	h := time.Date(2026, 1, 5, 7, 0, 0, 0, time.UTC)
	at := func(s float64) time.Time { return h.Add(time.Duration(s * float64(time.Second))) }
	var tb timebase
	steps := []struct {
		ms    int64 // -1: no device time
		hostS float64
		want  float64
	}{
		{-1, 0, 0},          // host clock from the first reading
		{-1, 0.25, 0.25},    //
		{5000, 0.5, 0.5},    // first device time: continues from the host time
		{5100, 0.7, 0.6},    // device time rules
		{6100, 9, 1.6},      // even when the host saw it late (burst)
		{200, 10, 10},       // the device restarted: re-based on the host clock
		{300, 10.05, 10.1},  //
		{4000000, 11, 11},   // a jump of over an hour: re-based
		{4000100, 11, 11.1}, //
	}
	for i, s := range steps {
		l := protocol.Line{HasMS: s.ms >= 0, MS: uint64(max(s.ms, 0))}
		if got := tb.at(&l, at(s.hostS)); math.Abs(got-s.want) > 1e-9 {
			t.Fatalf("step %d: %v, want %v", i, got, s.want)
		}
	}
}

// TestSimulatedCupDefaultFinished: a simulated grey-iron cup (internal/sim,
// a physics model, not measured data) sent at 10 Hz device time is
// triggered by its pour and stopped by the default end-of-freezing rule
// (arrest.Analyze(...).Complete) after the model's own end of freezing,
// plus the margin; the file holds every reading sent from the start of the
// pre-trigger buffer.
func TestSimulatedCupDefaultFinished(t *testing.T) {
	p, err := sim.Preset("grey-iron", 0.5, 7)
	if err != nil {
		t.Fatal(err)
	}
	o := sim.Simulate(p)
	sent := make([]cupReading, len(o.Time))
	for i := range o.Time {
		sent[i] = cupReading{ms: uint64(math.Round(o.Time[i] * 1000)), temp: o.Temp[i]}
	}
	port := newPipePort()
	_, col, _ := startAcq(t, port.open, Config{Dir: t.TempDir(), Family: arrest.FamilyIron})
	w := port.plug()
	go func() {
		for _, r := range sent {
			w.Write([]byte(r.line("1")))
		}
	}()
	col.until("done", 20*time.Second, func() bool { return col.has(EventSampleDone, "1") != nil })
	st, fr := col.has(EventSampleStarted, "1"), col.has(EventSampleFrozen, "1")
	if fr == nil {
		t.Fatalf("never frozen: %v", col.eventTexts())
	}
	if solidus := o.Truth.Solidus.TimeS; fr.TimeS < solidus {
		t.Fatalf("frozen at %v s, before the model's end of freezing at %v s", fr.TimeS, solidus)
	}
	c := readRows(t, col.has(EventSampleDone, "1").Path)
	if c.meta["ended"] != "freezing done" {
		t.Fatalf("ended %q", c.meta["ended"])
	}
	first := 0
	for sent[first].ms < uint64(math.Round((st.TimeS+o.Time[0])*1000)) {
		first++
	}
	checkRowsMatch(t, c, sent, first)
	if got := c.float(t, len(c.rows)-1, "time_s") + st.TimeS - (fr.TimeS - o.Time[0]); got < 15 || got > 15.2 {
		t.Fatalf("recorded %v s after freezing ended, want the 15 s margin", got)
	}
}

// TestSimulatedDeck: the simulated melt deck (internal/sim, a physics model
// behind the line protocol, with checksums, two stands) run 400 times
// faster than real time: every line it writes parses (no garbage), and each
// cup becomes its own sample file carrying the deck's form data.
func TestSimulatedDeck(t *testing.T) {
	dir := t.TempDir()
	port := newPipePort()
	_, col, _ := startAcq(t, port.open, Config{Dir: dir})
	w := port.plug()
	deck := sim.NewDeck(sim.DeckOptions{Seed: 11, Speed: 400, Channels: []string{"1", "tell"}, Checksum: true})
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	go deck.Run(ctx, w)
	col.until("four samples", 30*time.Second, func() bool { return col.count(EventSampleDone) >= 4 })
	cancel()
	if s := col.last; s.Garbage != 0 || s.Lines == 0 {
		t.Fatalf("status %+v", s)
	}
	for _, e := range col.events {
		if e.Kind != EventSampleDone {
			continue
		}
		c := readRows(t, e.Path)
		if !strings.HasPrefix(c.meta["sample"], "L-") || c.meta["operator"] == "" || c.meta["alloy"] == "" || c.meta["channel"] != e.Channel {
			t.Errorf("%s: metadata %v", e.Path, c.meta)
		}
		if len(c.rows) < 300 { // 30 s at 10 Hz: the pour and more
			t.Errorf("%s: only %d rows", e.Path, len(c.rows))
		}
		if first := c.float(t, 0, "temp_c"); first > 60 {
			t.Errorf("%s: starts at %v °C, not near ambient (the tail of the cup before)", e.Path, first)
		}
	}
}

// BenchmarkAcquirerRecording: lines through the whole acquirer (framing,
// parsing, lifecycle, one raw-log write per reading, batches) into a
// recording sample, as fast as a pipe delivers them.
func BenchmarkAcquirerRecording(b *testing.B) {
	port := newPipePort()
	a := New(port.open, Config{Dir: b.TempDir(), Trigger: Trigger{Manual: true}, MaxS: 1e9,
		Finished: func(_, _ []float64) bool { return false }})
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	go a.Run(ctx)
	w := port.plug()
	a.Start("1")
	var got atomic.Int64
	go func() {
		for bt := range a.Batches() {
			got.Add(int64(len(bt.Readings)))
		}
	}()
	line := []byte("ms=0000000 c=1234.56\n")
	sent := 0
	t0 := time.Now()
	for b.Loop() {
		copy(line[3:10], fmt.Sprintf("%07d", sent%10000000))
		w.Write(line)
		sent++
	}
	for got.Load() < int64(sent) { // until every line has left in a batch
		time.Sleep(time.Millisecond)
	}
	b.ReportMetric(float64(sent)/time.Since(t0).Seconds(), "lines/s")
}

// A device that announces simulated=true (as the virtual melt deck does)
// makes its samples '# simulated: true', as the simulator's own curve files
// are, so that no record or report passes one off as a measurement.
func TestSimulatedDeviceMarksItsSamples(t *testing.T) {
	_, col := recordCup(t, `! dev=undercool-sim fw=1.0 tc=K simulated=true`, `! sample="L-2451 cup 1" alloy=grey-iron simulated=true`)
	c := readRows(t, col.has(EventSampleDone, "1").Path)
	if c.meta["simulated"] != "true" || c.meta["sample"] != "L-2451 cup 1" || !strings.Contains(c.meta["device"], "simulated=true") {
		t.Errorf("metadata %v, want simulated: true", c.meta)
	}
}

// recordCup sends the device-info lines and then a constructed cup curve
// (cupCurve(20, 12, 50), channel 1) to an acquirer on a pipe port that
// judges the cup frozen at 30 s and completes it 5 s later, and waits
// until the sample is done; it returns the readings sent and the events.
func recordCup(t *testing.T, info ...string) ([]cupReading, *collector) {
	t.Helper()
	port := newPipePort()
	_, col, _ := startAcq(t, port.open, Config{Port: "fake0", Dir: t.TempDir(),
		Finished: finishedAfter(30), FreezeMarginS: 5})
	sent := cupCurve(20, 12, 50)
	w := port.plug()
	go func() {
		for _, l := range info {
			w.Write([]byte(l + "\n"))
		}
		for _, r := range sent {
			w.Write([]byte(r.line("1")))
		}
	}()
	col.until("sample done", 10*time.Second, func() bool { return col.has(EventSampleDone, "1") != nil })
	return sent, col
}
