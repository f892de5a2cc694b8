//go:build linux

package acquire

import (
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/creack/pty"
	"github.com/undercool-foundry/undercool/internal/feed"
	"golang.org/x/sys/unix"
)

// fakeAmp is a thermocouple amplifier on a pseudo-terminal: the test writes
// to the master, the acquirer opens the slave through SerialOpener by a
// symlink that a re-plug points at a new pseudo-terminal, like a USB
// adapter that comes back under the same name.
type fakeAmp struct {
	t             testing.TB
	link          string
	mu            sync.Mutex
	master, slave *os.File
}

func newFakeAmp(t testing.TB) *fakeAmp {
	f := &fakeAmp{t: t, link: filepath.Join(t.TempDir(), "ttyAMP0")}
	f.plug()
	t.Cleanup(f.unplug)
	return f
}

// plug opens a new pseudo-terminal in raw mode and points the link at it.
func (f *fakeAmp) plug() {
	f.t.Helper()
	m, s, err := pty.Open()
	if err != nil {
		f.t.Fatal(err)
	}
	for _, fd := range []int{int(m.Fd()), int(s.Fd())} {
		tio, err := unix.IoctlGetTermios(fd, unix.TCGETS)
		if err != nil {
			f.t.Fatal(err)
		}
		// raw: no echo, no line editing, no CR/LF translation
		tio.Iflag &^= unix.IGNBRK | unix.BRKINT | unix.PARMRK | unix.ISTRIP | unix.INLCR | unix.IGNCR | unix.ICRNL | unix.IXON
		tio.Oflag &^= unix.OPOST
		tio.Lflag &^= unix.ECHO | unix.ECHONL | unix.ICANON | unix.ISIG | unix.IEXTEN
		tio.Cflag = tio.Cflag&^(unix.CSIZE|unix.PARENB) | unix.CS8
		if err := unix.IoctlSetTermios(fd, unix.TCSETS, tio); err != nil {
			f.t.Fatal(err)
		}
	}
	tmp := f.link + ".new"
	os.Remove(tmp)
	if err := os.Symlink(s.Name(), tmp); err != nil {
		f.t.Fatal(err)
	}
	if err := os.Rename(tmp, f.link); err != nil {
		f.t.Fatal(err)
	}
	f.mu.Lock()
	f.master, f.slave = m, s
	f.mu.Unlock()
}

// unplug makes the device vanish: the link is removed and the
// pseudo-terminal closed.
func (f *fakeAmp) unplug() {
	f.mu.Lock()
	defer f.mu.Unlock()
	// As a USB adapter pulled out: its device node goes first, so that no
	// reopen finds the dying terminal (or a new one given the same number).
	os.Remove(f.link)
	if f.master != nil {
		f.master.Close()
		f.slave.Close()
		f.master, f.slave = nil, nil
	}
}

func (f *fakeAmp) write(s string) {
	f.t.Helper()
	f.mu.Lock()
	m := f.master
	f.mu.Unlock()
	if _, err := m.Write([]byte(s)); err != nil {
		f.t.Errorf("fake amplifier: %v", err)
	}
}

// send writes readings at rateHz (real time) on channel "1".
func (f *fakeAmp) send(rs []cupReading, rateHz float64) {
	tick := time.NewTicker(time.Duration(float64(time.Second) / rateHz))
	defer tick.Stop()
	for _, r := range rs {
		f.write(r.line("1"))
		<-tick.C
	}
}

func ptyConfig(amp *fakeAmp, dir string) (Opener, Config) {
	return SerialOpener(amp.link, PortMode{Baud: 115200, DataBits: 8, Parity: 'N', StopBits: 1}),
		Config{Port: amp.link, Dir: dir, ReconnectMin: 50 * time.Millisecond, ReconnectMax: 200 * time.Millisecond}
}

// TestPTYCup: a fake amplifier on a pseudo-terminal sends a constructed
// cup curve in real time at 10 and 200 Hz; the recorded file matches what
// was sent, reading for reading.
func TestPTYCup(t *testing.T) {
	for _, hz := range []float64{10, 200} {
		t.Run(fmt.Sprintf("%gHz", hz), func(t *testing.T) {
			amp := newFakeAmp(t)
			dir := t.TempDir()
			open, cfg := ptyConfig(amp, dir)
			a, col, _ := startAcq(t, open, cfg)
			col.until("connected", 5*time.Second, func() bool { return col.has(feed.KindConnected, "") != nil })
			sent := cupCurve(hz, 0.5, 4)
			var wg sync.WaitGroup
			wg.Go(func() { amp.send(sent, hz) })
			defer wg.Wait()
			col.until("every reading", 15*time.Second, func() bool { return len(col.readings) == len(sent) })
			a.Stop("1", 0, "freezing done")
			col.until("sample done", 15*time.Second, func() bool { return col.has(feed.KindEnded, "1") != nil })
			c := readRows(t, col.has(feed.KindEnded, "1").Path)
			checkRowsMatch(t, c, sent, 0)
			if len(c.rows) != len(sent) {
				t.Fatalf("%d rows, %d sent", len(c.rows), len(sent))
			}
			if col.last.Garbage != 0 || col.last.Port != amp.link {
				t.Fatalf("status %+v", col.last)
			}
		})
	}
}

// TestPTYFaults: garbage and wrong-baud bytes, a long stall, a burst and an
// unplug with re-plug at the same path, all in one sample: every reading
// sent is recorded, in order, and each fault is counted and reported.
func TestPTYFaults(t *testing.T) {
	amp := newFakeAmp(t)
	dir := t.TempDir()
	open, cfg := ptyConfig(amp, dir)
	cfg.Trigger.Manual = true
	cfg.SilentAfter = 700 * time.Millisecond
	a, col, _ := startAcq(t, open, cfg)
	col.until("connected", 5*time.Second, func() bool { return col.has(feed.KindConnected, "") != nil })
	a.Start("1")
	col.until("started", 5*time.Second, func() bool { return col.has(feed.KindStarted, "1") != nil })

	sent := cupCurve(100, 0.3, 8)
	garbage := 0
	// Garbage: noise bytes, and what 8N1 text read at the wrong baud rate
	// looks like (bytes with the high bit set, framing debris).
	noise := []string{"\x13\xf7\x02\x99zz\n", "\xf8\x80\xf8\x00\xe6\x1e\xfe\r\n", "c=12.5*00\n", "ch=1 ms=\n"}
	for i, r := range sent[:150] {
		amp.write(r.line("1"))
		if i%30 == 29 {
			amp.write(noise[garbage%len(noise)])
			garbage++
		}
		time.Sleep(2 * time.Millisecond)
	}
	// A long stall: the device says nothing for over a second.
	time.Sleep(1200 * time.Millisecond)
	// A burst: 300 readings at once (a device emptying its buffer).
	var burst strings.Builder
	for _, r := range sent[150:450] {
		burst.WriteString(r.line("1"))
	}
	amp.write(burst.String())
	col.until("burst", 10*time.Second, func() bool { return len(col.readings) == 450 })
	// Unplug and re-plug at the same path.
	amp.unplug()
	col.until("disconnect", 5*time.Second, func() bool { return col.has(feed.KindDisconnected, "") != nil })
	time.Sleep(300 * time.Millisecond)
	amp.plug()
	col.until("reconnect", 10*time.Second, func() bool { return col.count(feed.KindConnected) == 2 })
	for _, r := range sent[450:600] {
		amp.write(r.line("1"))
		time.Sleep(time.Millisecond)
	}
	col.until("all readings", 10*time.Second, func() bool { return len(col.readings) == 600 })
	a.Stop("1", 0, "")
	col.until("done", 5*time.Second, func() bool { return col.has(feed.KindEnded, "1") != nil })

	c := readRows(t, col.has(feed.KindEnded, "1").Path)
	checkRowsMatch(t, c, sent[:600], 0)
	if len(c.rows) != 600 {
		t.Fatalf("%d rows, want 600", len(c.rows))
	}
	fl := c.col("flags")
	if c.rows[449][fl] != "gap_after" || c.rows[450][fl] != "gap_before" {
		t.Fatalf("gap flags %q %q", c.rows[449][fl], c.rows[450][fl])
	}
	s := col.last
	if s.Garbage != garbage || s.Reconnects != 1 {
		t.Fatalf("garbage %d (sent %d), reconnects %d", s.Garbage, garbage, s.Reconnects)
	}
	var texts []string
	for _, e := range col.events {
		if e.Kind == feed.KindWarning {
			texts = append(texts, e.Text)
		}
	}
	joined := strings.Join(texts, "\n")
	for _, want := range []string{"garbage", "--baud", "no data from " + amp.link, "no such port"} {
		if !strings.Contains(joined, want) {
			t.Errorf("no warning saying %q in:\n%s", want, joined)
		}
	}
}

// BenchmarkLatencyPTY measures the time from a line written to the
// pseudo-terminal to its reading leaving the acquirer in a batch, at 200
// Hz: with the default 2 ms batch interval (the target: at most 5 ms),
// with a 1 ms interval (what the reading pipeline itself adds) and with a
// 33 ms interval (one batch per frame, for comparison).
func BenchmarkLatencyPTY(b *testing.B) {
	for _, every := range []time.Duration{2 * time.Millisecond, time.Millisecond, 33 * time.Millisecond} {
		b.Run("batch="+every.String(), func(b *testing.B) {
			amp := newFakeAmp(b)
			open, cfg := ptyConfig(amp, b.TempDir())
			cfg.Trigger.Manual = true
			cfg.BatchEvery = every
			a := New(open, cfg)
			ctx, cancel := contextWithCancel()
			defer cancel()
			go a.Run(ctx)
			for bt := range a.Batches() { // wait for the connection
				if slices.ContainsFunc(bt.Items, func(it feed.Item) bool { return it.Kind == feed.KindConnected }) {
					break
				}
			}
			var mu sync.Mutex
			sentAt := map[int]time.Time{}
			var lat []float64
			got := make(chan struct{})
			n := 0
			go func() {
				defer close(got)
				for bt := range a.Batches() {
					now := time.Now()
					mu.Lock()
					for _, it := range bt.Items {
						if it.Kind != feed.KindReading {
							continue
						}
						i := int(it.Reading.TempC)
						lat = append(lat, now.Sub(sentAt[i]).Seconds()*1000)
					}
					done := len(lat) >= n && n > 0
					mu.Unlock()
					if done {
						return
					}
				}
			}()
			tick := time.NewTicker(5 * time.Millisecond)
			defer tick.Stop()
			i := 0
			for b.Loop() {
				<-tick.C
				mu.Lock()
				sentAt[i] = time.Now()
				mu.Unlock()
				amp.write("c=" + strconv.Itoa(i) + "\n")
				i++
			}
			mu.Lock()
			n = i
			mu.Unlock()
			amp.write("c=" + strconv.Itoa(i) + "\n") // wake the collector past the last
			mu.Lock()
			sentAt[i] = time.Now()
			mu.Unlock()
			<-got
			b.StopTimer()
			mu.Lock()
			defer mu.Unlock()
			slices.Sort(lat)
			b.ReportMetric(lat[len(lat)/2], "ms-median")
			b.ReportMetric(lat[len(lat)*99/100], "ms-p99")
			b.ReportMetric(0, "ns/op")
		})
	}
}
