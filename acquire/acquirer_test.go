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

	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/protocol"
)

// TestLifecycle: a constructed cup curve (sent as fast as the pipe takes
// it, timed by device ms) is triggered by its pour, recorded with the
// pre-trigger readings and completed when told to stop; the file holds the
// sent readings exactly, its sample metadata as set (SetMeta), and the
// start item hands over the pre-trigger readings and the file's metadata.
func TestLifecycle(t *testing.T) {
	sent, col := recordCup(t, `! dev=test-amp fw=2.1 sample="L-2417 cup 9" operator="Pell Brasswick"`)

	st := col.has(feed.KindStarted, "1")
	done := col.has(feed.KindEnded, "1")
	if st == nil || !strings.Contains(st.Text, "pour detected") || st.Sample != 1 || done.Sample != 1 {
		t.Fatalf("events: %v", col.eventTexts())
	}
	if len(st.Pre) != 201 || st.Pre[0].TimeS != st.StartS || st.StartS != st.TimeS || metaValue(st.Meta, "sample") != "L-2417 cup 1" {
		t.Fatalf("start item: %d pre-trigger readings from %v, start %v, metadata %v", len(st.Pre), st.Pre[0].TimeS, st.StartS, st.Meta)
	}
	if di := col.has(feed.KindDeviceInfo, ""); di == nil || metaValue(di.Meta, "sample") != "L-2417 cup 9" {
		t.Fatalf("device info item %+v", di)
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
	// Stopped at 35 s of sample time.
	last := c.float(t, len(c.rows)-1, "time_s")
	if last != 35 {
		t.Fatalf("last row at %v s, want 35, where it was stopped", last)
	}
	for _, k := range []string{"sample", "operator", "channel", "started", "trigger", "device", "ended"} {
		if c.meta[k] == "" {
			t.Errorf("metadata %q missing: %v", k, c.meta)
		}
	}
	// The device's own sample keys are the tracker's to decide on: the file
	// carries what SetMeta said.
	if c.meta["sample"] != "L-2417 cup 1" || c.meta["operator"] != "Tobin Quenchmoor" || c.meta["ended"] != "freezing done" ||
		c.meta["simulated"] != "" || !strings.Contains(c.meta["device"], "fw=2.1") || strings.Contains(c.meta["device"], "sample") {
		t.Errorf("metadata %v", c.meta)
	}
	if !strings.Contains(filepath.Base(done.Path), "L-2417-cup-1") {
		t.Errorf("file name %s does not carry the sample", done.Path)
	}
	if _, err := os.Stat(partialName(done.Path)); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("partial file left: %v", err)
	}
	if cs := col.last.Channels["1"]; cs.Recording || cs.Sample != 1 || cs.Readings != len(sent) {
		t.Errorf("channel status %+v, want sample 1 done after %d readings", cs, len(sent))
	}
}

// TestTwoChannels: a plain and a tellurium cup on one port are triggered
// and completed independently.
func TestTwoChannels(t *testing.T) {
	dir := t.TempDir()
	port := newPipePort()
	a, col, _ := startAcq(t, port.open, Config{Dir: dir})
	plain := cupCurve(10, 11, 40)
	tell := cupCurve(10, 16, 40)
	w := port.plug()
	go func() {
		for i := range plain {
			w.Write([]byte(plain[i].line("1") + tell[i].line("tell")))
		}
	}()
	col.until("every reading", 10*time.Second, func() bool { return len(col.readings) == 2*len(plain) })
	a.Stop("tell", 0, "freezing done")
	a.Stop("1", 0, "freezing done")
	col.until("both done", 10*time.Second, func() bool {
		return col.has(feed.KindEnded, "1") != nil && col.has(feed.KindEnded, "tell") != nil
	})
	p := readRows(t, col.has(feed.KindEnded, "1").Path)
	q := readRows(t, col.has(feed.KindEnded, "tell").Path)
	checkRowsMatch(t, p, plain, int(col.has(feed.KindStarted, "1").TimeS*10+0.5))
	checkRowsMatch(t, q, tell, int(col.has(feed.KindStarted, "tell").TimeS*10+0.5))
	if d := col.has(feed.KindStarted, "tell").TimeS - col.has(feed.KindStarted, "1").TimeS; math.Abs(d-5) > 0.01 {
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
	a, col, _ := startAcq(t, port.open, Config{Dir: dir})
	sent := cupCurve(10, 3, 40)
	cut := 150
	w := port.plug()
	for _, r := range sent[:cut] {
		w.Write([]byte(r.line("1")))
	}
	col.until("readings before the unplug", 5*time.Second, func() bool { return len(col.readings) == cut })
	w.Write([]byte("ch=1 ms=99 c=12")) // cut off by the unplug: a partial line
	w.CloseWithError(errors.New("device unplugged"))
	col.until("disconnect", 5*time.Second, func() bool { return col.has(feed.KindDisconnected, "") != nil })
	w = port.plug()
	col.until("reconnect", 5*time.Second, func() bool { return col.count(feed.KindConnected) == 2 })
	for _, r := range sent[cut:] {
		w.Write([]byte(r.line("1")))
	}
	col.until("every reading", 10*time.Second, func() bool { return len(col.readings) == len(sent) })
	a.Stop("1", 0, "freezing done")
	col.until("sample done", 10*time.Second, func() bool { return col.has(feed.KindEnded, "1") != nil })

	c := readRows(t, col.has(feed.KindEnded, "1").Path)
	checkRowsMatch(t, c, sent, 0)
	fl := c.col("flags")
	if c.rows[cut-1][fl] != "gap_after" || c.rows[cut][fl] != "gap_before" {
		t.Fatalf("flags around the gap: %q %q", c.rows[cut-1][fl], c.rows[cut][fl])
	}
	if col.readings[cut].Flags&feed.FlagGapBefore == 0 {
		t.Fatalf("first reading after the gap not flagged: %+v", col.readings[cut])
	}
	if col.last.Reconnects != 1 || col.last.Partial != 1 {
		t.Fatalf("reconnects %d partial %d, want 1 and 1", col.last.Reconnects, col.last.Partial)
	}
	if e := col.has(feed.KindDisconnected, ""); !strings.Contains(e.Text, "device unplugged") {
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
	if r[1].Flags&feed.FlagOpen == 0 || r[2].Flags&feed.FlagFault == 0 || r[3].Flags&(feed.FlagFault|feed.FlagEMF) != feed.FlagFault|feed.FlagEMF || r[4].TempC != 21 {
		t.Fatalf("readings %+v", r)
	}
	w2 := col.has(feed.KindWarning, "")
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
		if r.Flags&feed.FlagEMF == 0 || math.Abs(r.TempC-want[i]) > 0.05 || r.ColdJctC != 25 {
			t.Errorf("reading %d: %+v, want %v °C", i, r, want[i])
		}
	}
	if e := col.has(feed.KindDeviceInfo, ""); e == nil || metaValue(e.Meta, "tc") != "J" {
		t.Fatalf("device info event: %v", col.eventTexts())
	}
}

// TestManualStartStopMeta: a sample started and stopped by hand carries
// the sample metadata set for it while it records (its completed file says
// them in place of those it started with); metadata set for the next
// sample goes into the next file, never the one recording.
func TestManualStartStopMeta(t *testing.T) {
	dir := t.TempDir()
	port := newPipePort()
	a, col, _ := startAcq(t, port.open, Config{Dir: dir, Trigger: Trigger{Manual: true},
		Meta: []curvefile.Meta{{Key: "shop", Value: "Cindermoth Iron & Light Alloy works"}}})
	w := port.plug()
	io.WriteString(w, "ms=0 c=700\nms=100 c=701\n")
	col.until("two readings", 5*time.Second, func() bool { return len(col.readings) == 2 })
	a.SetMeta("1", 0, []curvefile.Meta{{Key: "sample", Value: "L-2417 cup 1"}, {Key: "alloy", Value: "grey-iron"}})
	a.Start("1")
	col.until("started", 5*time.Second, func() bool { return col.has(feed.KindStarted, "1") != nil })
	a.SetMeta("1", 1, []curvefile.Meta{{Key: "sample", Value: "L-2417 cup 2"}, {Key: "operator", Value: "Tobin Quenchmoor"}, {Key: "note", Value: "two\nlines"}})
	a.SetMeta("1", 0, []curvefile.Meta{{Key: "sample", Value: "L-2418 cup 1"}})
	io.WriteString(w, "ms=200 c=690\nms=300 c=680\n")
	col.until("four readings", 5*time.Second, func() bool { return len(col.readings) == 4 })
	a.Stop("1", 0, "")
	col.until("done", 5*time.Second, func() bool { return col.has(feed.KindEnded, "1") != nil })
	c := readRows(t, col.has(feed.KindEnded, "1").Path)
	if len(c.rows) != 4 || c.meta["sample"] != "L-2417 cup 2" || c.meta["operator"] != "Tobin Quenchmoor" || c.meta["alloy"] != "" ||
		c.meta["note"] != "two lines" || c.meta["ended"] != "stopped by hand" || c.meta["shop"] == "" {
		t.Fatalf("file %+v", c)
	}
	if st := col.has(feed.KindStarted, "1"); metaValue(st.Meta, "sample") != "L-2417 cup 1" || metaValue(st.Meta, "alloy") != "grey-iron" {
		t.Fatalf("the file started with %v", st.Meta)
	}
	a.Start("1")
	col.until("second", 5*time.Second, func() bool { return col.count(feed.KindStarted) == 2 })
	if st := col.events[len(col.events)-1]; st.Sample != 2 || metaValue(st.Meta, "sample") != "L-2418 cup 1" {
		t.Fatalf("the next file started as %+v", st)
	}
}

// TestTimeLimits: a sample ends at its time limit, by its own readings or,
// when they stop coming, by the (injected) host clock.
func TestTimeLimits(t *testing.T) {
	t.Run("readings", func(t *testing.T) {
		port := newPipePort()
		_, col, _ := startAcq(t, port.open, Config{Dir: t.TempDir(), MaxS: 5})
		w := port.plug()
		sent := cupCurve(10, 2, 20)
		go func() {
			for _, r := range sent {
				w.Write([]byte(r.line("1")))
			}
		}()
		col.until("done", 5*time.Second, func() bool { return col.has(feed.KindEnded, "1") != nil })
		c := readRows(t, col.has(feed.KindEnded, "1").Path)
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
		col.until("started", 5*time.Second, func() bool { return col.has(feed.KindStarted, "1") != nil })
		now.Store(int64(63 * time.Second)) // the device went quiet for a minute
		col.until("done", 5*time.Second, func() bool { return col.has(feed.KindEnded, "1") != nil })
		e := col.has(feed.KindEnded, "1")
		if !strings.Contains(e.Text, "no readings") {
			t.Fatalf("done: %q", e.Text)
		}
		if w := col.has(feed.KindWarning, ""); w == nil || !strings.Contains(w.Text, "no data") {
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

// BenchmarkAcquirerRecording: lines through the whole acquirer (framing,
// parsing, lifecycle, one raw-log write per reading, batches) into a
// recording sample, as fast as a pipe delivers them.
func BenchmarkAcquirerRecording(b *testing.B) {
	port := newPipePort()
	a := New(port.open, Config{Dir: b.TempDir(), Trigger: Trigger{Manual: true}, MaxS: 1e9})
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	go a.Run(ctx)
	w := port.plug()
	a.Start("1")
	var got atomic.Int64
	go func() {
		for bt := range a.Batches() {
			for _, it := range bt.Items {
				if it.Kind == feed.KindReading {
					got.Add(1)
				}
			}
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
	c := readRows(t, col.has(feed.KindEnded, "1").Path)
	if c.meta["simulated"] != "true" || !strings.Contains(c.meta["device"], "simulated=true") {
		t.Errorf("metadata %v, want simulated: true", c.meta)
	}
}

// recordCup sends the device-info lines and then a constructed cup curve
// (cupCurve(20, 12, 50), channel 1) to an acquirer on a pipe port, with
// the sample metadata "L-2417 cup 1" operated by Tobin Quenchmoor set for
// the next file (as the tracker sets it), stops the sample at 35 s of its
// own time (as the tracker does once freezing is done) and waits until it
// is done; it returns the readings sent and the events.
func recordCup(t *testing.T, info ...string) ([]cupReading, *collector) {
	t.Helper()
	port := newPipePort()
	a, col, _ := startAcq(t, port.open, Config{Port: "fake0", Dir: t.TempDir()})
	a.SetMeta("1", 0, []curvefile.Meta{{Key: "sample", Value: "L-2417 cup 1"}, {Key: "operator", Value: "Tobin Quenchmoor"}})
	sent := cupCurve(20, 12, 50)
	w := port.plug()
	for _, l := range info {
		w.Write([]byte(l + "\n"))
	}
	// The trigger is at 12.25 s, the file starts 10 s before it (index 45).
	k := col.stopAt(w, "1", sent, 0, 45, 35)
	return sent[:k], col
}

// TestFlappingPortCountsEachReconnect: a port that comes back and is lost
// again while it is being re-plugged (a loose connector, two flaps with a
// line each) counts every opening after a loss as a reconnection: three
// here, each with its disconnection, which is what tells a technician the
// cable is bad. The readings of every connection are kept, in order.
func TestFlappingPortCountsEachReconnect(t *testing.T) {
	port := newPipePort()
	a, col, _ := startAcq(t, port.open, Config{Dir: t.TempDir(), ReconnectMin: time.Millisecond, ReconnectMax: time.Millisecond})
	w := port.plug()
	w.Write([]byte("c=20\n"))
	col.until("first reading", 5*time.Second, func() bool { return len(col.readings) == 1 })
	w.CloseWithError(errors.New("unplugged"))
	for i := range 2 { // two flaps: back for one line, then gone again
		w = port.plug()
		w.Write([]byte(fmt.Sprintf("c=%d\n", 21+i)))
		w.CloseWithError(errors.New("flapped"))
		col.until("the flap's reading", 5*time.Second, func() bool { return len(col.readings) == 2+i })
	}
	w = port.plug()
	w.Write([]byte("c=23\n"))
	col.until("steady again", 5*time.Second, func() bool { return len(col.readings) == 4 && col.count(feed.KindConnected) == 4 })
	if s := col.last; s.Reconnects != 3 || col.count(feed.KindDisconnected) != 3 {
		t.Fatalf("reconnects %d, disconnections %d: want 3 and 3", s.Reconnects, col.count(feed.KindDisconnected))
	}
	for i, r := range col.readings {
		if r.TempC != float64(20+i) {
			t.Fatalf("reading %d is %v", i, r.TempC)
		}
	}
	a.Stop("1", 0, "")
}

// TestStopAtLeavesLaterReadingsOut: the tracker's word to stop after the
// margin names the sample time it ends at; readings the acquirer took
// before the word arrived (a loaded machine, a burst) are left out of the
// completed file, so that the file does not depend on how long the word
// took. Before, the file ran on to wherever the word arrived: under load
// TestTwoThermocoupleCupRecorded got 24 s more of tail, and a Fourier
// latent heat 4.6 times the model's.
func TestStopAtLeavesLaterReadingsOut(t *testing.T) {
	port := newPipePort()
	a, col, _ := startAcq(t, port.open, Config{Dir: t.TempDir()})
	sent := cupCurve(10, 3, 40)
	w := port.plug()
	for _, r := range sent {
		w.Write([]byte(r.line("1")))
	}
	col.until("every reading", 10*time.Second, func() bool { return len(col.readings) == len(sent) })
	st := col.has(feed.KindStarted, "1")
	if st == nil {
		t.Fatal("no sample started")
	}
	atS := 20.0 // s in the file; readings up to 36 s have been taken
	a.StopAt("1", st.Sample, atS, "freezing done")
	col.until("sample done", 10*time.Second, func() bool { return col.has(feed.KindEnded, "1") != nil })
	c, err := curvefile.ReadFile(col.has(feed.KindEnded, "1").Path)
	if err != nil {
		t.Fatal(err)
	}
	if last := c.Time[len(c.Time)-1]; last > atS || last < atS-0.1 {
		t.Fatalf("the file ends at %v s, want %v", last, atS)
	}
	if c.Get("ended") != "freezing done" {
		t.Errorf("ended %q", c.Get("ended"))
	}
}
