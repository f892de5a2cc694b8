//go:build linux

package main

import (
	"context"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/creack/pty"
	"golang.org/x/sys/unix"

	"github.com/undercool-foundry/undercool/internal/store"
)

// acqPTY is a fake amplifier on a raw pseudo-terminal: the test writes to
// master, record opens the slave's name.
func acqPTY(t *testing.T) (master *os.File, name string) {
	t.Helper()
	m, s, err := pty.Open()
	if err != nil {
		t.Fatal(err)
	}
	for _, fd := range []int{int(m.Fd()), int(s.Fd())} {
		tio, err := unix.IoctlGetTermios(fd, unix.TCGETS)
		if err != nil {
			t.Fatal(err)
		}
		tio.Iflag &^= unix.ICRNL | unix.INLCR | unix.IGNCR | unix.IXON | unix.ISTRIP
		tio.Oflag &^= unix.OPOST
		tio.Lflag &^= unix.ECHO | unix.ICANON | unix.ISIG | unix.IEXTEN
		if err := unix.IoctlSetTermios(fd, unix.TCSETS, tio); err != nil {
			t.Fatal(err)
		}
	}
	t.Cleanup(func() { m.Close(); s.Close() })
	return m, s.Name()
}

// acqCup is a constructed (simulated) cup curve, not measured data: line i
// at device time 10·i ms (100 Hz), ambient for 1 s, then a pour to 1330 °C
// and cooling at 5 °C/s.
func acqCup(i int) (ms int, temp float64) {
	t := float64(i) / 100
	switch {
	case t < 1:
		temp = 24.5
	case t < 1.5:
		temp = 24.5 + 2600*(t-1)
	default:
		temp = 1324.5 - 5*(t-1.5)
	}
	v, _ := strconv.ParseFloat(strconv.FormatFloat(temp, 'f', 2, 64), 64)
	return 10 * i, v
}

// acqSend writes the cup from line from on at 100 Hz until stop closes,
// returning how many lines went out in all. Line i goes out 10·i ms after
// the first, by the clock: when the sender was held up (a loaded machine),
// the lines due are written at once, so that the device's time keeps up
// with the host's as a real amplifier's does. (A ticker drops ticks under
// load: the device time then fell behind, and record's host-clock bound on
// the time limit ended TestRecordPTY's sample short now and then.)
func acqSend(m *os.File, from int, stop <-chan struct{}) int {
	return acqSendEvery(m, from, 10*time.Millisecond, stop)
}

// acqSendEvery is acqSend with one line every `every` of host time. A
// test that records to a --max-s limit sends faster than real time: the
// limit is reached in device time while the host-clock stop (--max-s + 2 s
// after the file's first reading arrived, for a device that goes silent)
// is still seconds away, however long the test waits for the CPU.
func acqSendEvery(m *os.File, from int, every time.Duration, stop <-chan struct{}) int {
	start := time.Now()
	for i := from; ; i++ {
		ms, c := acqCup(i)
		if _, err := fmt.Fprintf(m, "ms=%d c=%s\n", ms, strconv.FormatFloat(c, 'f', -1, 64)); err != nil {
			return i
		}
		t := time.NewTimer(time.Until(start.Add(time.Duration(i+1-from) * every)))
		select {
		case <-stop:
			t.Stop()
			return i + 1
		case <-t.C:
		}
	}
}

// acqCheckRows checks a curve file against the constructed cup: row k is
// line k (the pour came after less than the pre-trigger buffer, so the
// file starts with the first line).
func acqCheckRows(t *testing.T, path string, minRows int) map[string]string {
	t.Helper()
	meta, header, rows := readCurve(t, path)
	if strings.Join(header, ",") != "time_s,temp_c,flags" || len(rows) < minRows {
		t.Fatalf("%s: header %v, %d rows (want ≥ %d)", path, header, len(rows), minRows)
	}
	for k, row := range rows {
		ms, c := acqCup(k)
		if row[0] != strconv.FormatFloat(float64(ms)/1000, 'f', -1, 64) || row[1] != strconv.FormatFloat(c, 'f', -1, 64) {
			t.Fatalf("row %d is %v, sent ms=%d c=%v", k, row, ms, c)
		}
	}
	return meta
}

// TestRecordPTY records a sample from a fake amplifier on a pseudo-terminal
// until the --max-s time limit.
func TestRecordPTY(t *testing.T) {
	m, name := acqPTY(t)
	out := filepath.Join(t.TempDir(), "cup.csv")
	stop := make(chan struct{})
	var wg sync.WaitGroup
	wg.Go(func() { acqSendEvery(m, 0, 2500*time.Microsecond, stop) })
	code, stdout, stderr := acqRun(t, context.Background(), "record", "--port", name, "--out", out, "--max-s", "2",
		"--sample", "L-2417 cup 1", "--operator", "Odile Flintcaster", "--alloy", "grey-iron")
	close(stop)
	wg.Wait()
	if code != 0 || strings.TrimSpace(stdout) != out {
		t.Fatalf("exit %d, stdout %q, stderr:\n%s", code, stdout, stderr)
	}
	meta := acqCheckRows(t, out, 201)
	if meta["sample"] != "L-2417 cup 1" || meta["operator"] != "Odile Flintcaster" || meta["alloy"] != "grey-iron" ||
		!strings.Contains(meta["ended"], "time limit") || meta["port"] != name {
		t.Fatalf("metadata %v", meta)
	}
	for _, want := range []string{"connected to " + name, "pour detected", "sample done", "verdict ", "stored in "} {
		if !strings.Contains(stderr, want) {
			t.Errorf("stderr lacks %q:\n%s", want, stderr)
		}
	}
	// The finished sample is in the records database, with its curve file.
	db, err := store.Open(context.Background(), acqDB(t))
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	hist, err := db.History(context.Background(), store.Filter{Full: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(hist) != 1 || hist[0].Sample.CurvePath != out || hist[0].Sample.Operator != "Odile Flintcaster" {
		t.Fatalf("stored samples %+v, want the one recorded in %s", hist, out)
	}
}

// TestRecordSilentDevice: a device that never sends makes record give up
// at its time limit (--max-s, or --wait-s for the wait alone), saying what
// to check; with --start the sample ends at the time limit, empty, and
// record says so.
func TestRecordSilentDevice(t *testing.T) {
	for _, limit := range [][]string{{"--wait-s", "0.5"}, {"--max-s", "0.5"}} {
		_, name := acqPTY(t)
		args := append([]string{"record", "--port", name, "--dir", t.TempDir()}, limit...)
		code, _, stderr := acqRun(t, context.Background(), args...)
		if code != 1 || !strings.Contains(stderr, "no data from "+name+" in 0.5 s") || !strings.Contains(stderr, "--baud") {
			t.Fatalf("%v: exit %d, stderr:\n%s", limit, code, stderr)
		}
	}
	_, name := acqPTY(t)
	code, _, stderr := acqRun(t, context.Background(), "record", "--port", name, "--dir", t.TempDir(), "--start", "--max-s", "0.2", "--wait-s", "0")
	if code != 1 || !strings.Contains(stderr, "no readings from "+name) {
		t.Fatalf("--start: exit %d, stderr:\n%s", code, stderr)
	}
}

// TestRecordWrongBaud: what a port set to the wrong baud rate delivers
// (bytes with the high bit set, framing debris) is garbage, reported as
// such.
func TestRecordWrongBaud(t *testing.T) {
	m, name := acqPTY(t)
	go func() {
		for range 20 {
			if _, err := m.Write([]byte("\xf8\x80\xfe\x1e\x98\xe6\xe0\x80\r\n")); err != nil {
				return
			}
			time.Sleep(5 * time.Millisecond)
		}
	}()
	code, _, stderr := acqRun(t, context.Background(), "record", "--port", name, "--dir", t.TempDir(), "--wait-s", "0.6")
	if code != 1 || !strings.Contains(stderr, "only garbage from "+name) || !strings.Contains(stderr, "--baud") {
		t.Fatalf("exit %d, stderr:\n%s", code, stderr)
	}
}

// TestRecordWrongBaudWithNoise: at the wrong baud rate a few garbage
// lines happen to read as numbers. Most lines are garbage, so the hint is
// still the line settings, naming the port and the baud rate. Before the
// fix the message became "no pour seen (5 readings)".
func TestRecordWrongBaudWithNoise(t *testing.T) {
	m, name := acqPTY(t)
	var b strings.Builder
	for i := range 100 {
		if i%20 == 7 {
			b.WriteString("7\r\n") // debris that reads as a plain-number reading
		} else {
			b.WriteString("\xf8\x80\xfe\x1e\x98\xe6\xe0\x80\r\n")
		}
	}
	if _, err := m.Write([]byte(b.String())); err != nil {
		t.Fatal(err)
	}
	code, _, stderr := acqRun(t, context.Background(), "record", "--port", name, "--baud", "9600", "--dir", t.TempDir(), "--wait-s", "0.6")
	if code != 1 || !strings.Contains(stderr, "mostly garbage from "+name+" at 9600 baud, 8N1") || !strings.Contains(stderr, "95 garbage lines, 5 readings") ||
		!strings.Contains(stderr, "check --baud") {
		t.Fatalf("exit %d, stderr:\n%s", code, stderr)
	}
}

func TestRecordUsage(t *testing.T) {
	dir := t.TempDir()
	for _, tt := range []struct {
		args []string
		code int
		msg  string
	}{
		{[]string{"record"}, 2, "--port is required"},
		{[]string{"record", "--port", "/dev/null", "--frame", "9X1"}, 2, "data bits"},
		{[]string{"record", "--port", "/dev/null", "--baud", "7"}, 1, "baud rate 7"},
		{[]string{"record", "--port", "/dev/null", "--out", filepath.Join(dir, "cup.txt")}, 1, "must end in .csv"},
		{[]string{"record", "--port", "/dev/null", "--tc", "Q"}, 1, "unknown type"},
		{[]string{"record", "--port", "/dev/null", "--cj", "warm"}, 2, "cold-junction temperature"},
		{[]string{"record", "--port", filepath.Join(dir, "ttyNONE"), "--dir", dir, "--wait-s", "0.3"}, 1, "no such port"},
	} {
		code, _, stderr := acqRun(t, context.Background(), tt.args...)
		if code != tt.code || !strings.Contains(stderr, tt.msg) {
			t.Errorf("%v: exit %d, stderr:\n%s", tt.args, code, stderr)
		}
	}
}

// TestRecordHelperProcess is the child that TestRecordKill9 kills: with
// UNDERCOOL_RECORD_ARGS set it runs undercool with those arguments.
func TestRecordHelperProcess(t *testing.T) {
	args := os.Getenv("UNDERCOOL_RECORD_ARGS")
	if args == "" {
		t.Skip("the child process of TestRecordKill9")
	}
	env := &environ{stdin: os.Stdin, stdout: os.Stdout, stderr: os.Stderr, getenv: os.Getenv}
	os.Exit(runMain(context.Background(), env, strings.Split(args, "\x1f")))
}

// TestRecordKill9: record is killed with SIGKILL mid-sample; the next
// record run recovers the sample, marked interrupted, with every reading
// sent up to the last second before the kill.
func TestRecordKill9(t *testing.T) {
	m, name := acqPTY(t)
	dir := t.TempDir()
	out := filepath.Join(dir, "cup.csv")
	child := exec.Command(os.Args[0], "-test.run=^TestRecordHelperProcess$")
	child.Env = append(os.Environ(), "UNDERCOOL_DB="+filepath.Join(dir, "undercool.db"),
		"UNDERCOOL_RECORD_ARGS="+strings.Join([]string{"record", "--port", name, "--out", out}, "\x1f"))
	var childErr strings.Builder
	child.Stderr = &childErr
	if err := child.Start(); err != nil {
		t.Fatal(err)
	}
	stop := make(chan struct{})
	sentc := make(chan int, 1)
	go func() { sentc <- acqSend(m, 0, stop) }()
	// Wait until the raw log holds at least 2 s of the sample.
	partial := filepath.Join(dir, "cup.partial.csv")
	deadline := time.Now().Add(15 * time.Second)
	for {
		b, _ := os.ReadFile(partial)
		if strings.Count(string(b), "\n") > 250 {
			break
		}
		if time.Now().After(deadline) {
			child.Process.Kill()
			t.Fatalf("no raw log growing in %s; child stderr:\n%s", partial, childErr.String())
		}
		time.Sleep(20 * time.Millisecond)
	}
	close(stop)
	sent := <-sentc
	if err := child.Process.Signal(unix.SIGKILL); err != nil {
		t.Fatal(err)
	}
	child.Wait()
	if _, err := os.Stat(partial); err != nil {
		t.Fatalf("no partial file after the kill: %v", err)
	}

	// The next run recovers it (and then gives up: this device is silent).
	_, name2 := acqPTY(t)
	code, _, stderr := acqRun(t, context.Background(), "record", "--port", name2, "--dir", dir, "--wait-s", "0.3")
	if code != 1 || !strings.Contains(stderr, "recovered interrupted sample "+out) {
		t.Fatalf("exit %d, stderr:\n%s", code, stderr)
	}
	// At most the last second (100 lines at 100 Hz) may be missing.
	meta := acqCheckRows(t, out, sent-100)
	if meta["interrupted"] != "true" || meta["recovered"] == "" {
		t.Fatalf("metadata %v", meta)
	}
	// The recovered sample is analysed and stored like a finished one.
	db, err := store.Open(context.Background(), acqDB(t))
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	hist, err := db.History(context.Background(), store.Filter{Full: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(hist) != 1 || hist[0].Sample.CurvePath != out || !hist[0].Sample.Interrupted {
		t.Fatalf("stored samples %+v, want the recovered %s marked interrupted", hist, out)
	}
}

// TestRecordForwardsToPlant: with a plant database set, record forwards
// the sample it stored, as the dashboard does, and says how the link is.
// Before the fix only `sync` forwarded: a deck that ran only record kept
// every sample queued. (The plant database here is a second SQLite file,
// which the forwarder takes as it takes a PostgreSQL server; the server
// half is tested in internal/store.)
func TestRecordForwardsToPlant(t *testing.T) {
	m, name := acqPTY(t)
	dir := t.TempDir()
	out := filepath.Join(dir, "cup.csv")
	plant := filepath.Join(dir, "plant.db")
	stop := make(chan struct{})
	var wg sync.WaitGroup
	wg.Go(func() { acqSendEvery(m, 0, 2500*time.Microsecond, stop) })
	code, stdout, stderr := acqRun(t, context.Background(), "record", "--port", name, "--out", out, "--max-s", "2",
		"--sample", "L-2419 cup 1", "--alloy", "grey-iron", "--plant", plant)
	close(stop)
	wg.Wait()
	if code != 0 || strings.TrimSpace(stdout) != out {
		t.Fatalf("exit %d, stdout %q, stderr:\n%s", code, stdout, stderr)
	}
	if !strings.Contains(stderr, "plant: linked, nothing queued") {
		t.Errorf("stderr does not say the link:\n%s", stderr)
	}
	if hist := storedSamples(t, plant); len(hist) != 1 || hist[0].Sample.Sample != "L-2419 cup 1" {
		t.Fatalf("plant database holds %+v, want the sample recorded", hist)
	}
}

// TestRecordFileNotCompleted: the curve file cannot be completed (another
// program took its name meanwhile); record exits 1 naming the partial
// file, which keeps the readings, and stores nothing until it is
// recovered.
func TestRecordFileNotCompleted(t *testing.T) {
	m, name := acqPTY(t)
	dir := t.TempDir()
	out := filepath.Join(dir, "cup.csv")
	stop := make(chan struct{})
	var wg sync.WaitGroup
	wg.Go(func() { acqSend(m, 0, stop) })
	wg.Go(func() {
		for { // once the sample records, its final name is taken
			if _, err := os.Stat(filepath.Join(dir, "cup.partial.csv")); err == nil {
				os.WriteFile(out, []byte("taken\n"), 0o644)
				return
			}
			select {
			case <-stop:
				return
			case <-time.After(10 * time.Millisecond):
			}
		}
	})
	code, _, stderr := acqRun(t, context.Background(), "record", "--port", name, "--out", out, "--max-s", "2")
	close(stop)
	wg.Wait()
	partial := filepath.Join(dir, "cup.partial.csv")
	if code != 1 || !strings.Contains(stderr, "already exists") || !strings.Contains(stderr, "kept in "+partial) {
		t.Fatalf("exit %d, stderr:\n%s", code, stderr)
	}
	acqCheckRows(t, partial, 150)
	if n := len(storedSamples(t, acqDB(t))); n != 0 {
		t.Errorf("%d samples stored from a file that was not completed", n)
	}
}
