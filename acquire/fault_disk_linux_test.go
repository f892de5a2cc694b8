//go:build linux

package acquire

import (
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/feed"
)

// faultTmpfs mounts a tmpfs of the given size (e.g. "256k") in a temp dir
// and unmounts it when the test ends; read-only mounts it MS_RDONLY. Where
// mounting is not permitted (not root, no CAP_SYS_ADMIN) the test is
// skipped, saying why. A tmpfs stands in for a full disk and a read-only
// data directory: we run as root, and file permissions do not stop root.
func faultTmpfs(t *testing.T, size string, readOnly bool) string {
	t.Helper()
	dir := t.TempDir()
	var flags uintptr
	if readOnly {
		flags = syscall.MS_RDONLY
	}
	if err := syscall.Mount("tmpfs", dir, "tmpfs", flags, "size="+size); err != nil {
		t.Skipf("cannot mount a size-limited tmpfs here (needs root or CAP_SYS_ADMIN): %v", err)
	}
	t.Cleanup(func() {
		if err := syscall.Unmount(dir, 0); err != nil {
			t.Errorf("unmounting %s: %v", dir, err)
		}
	})
	return dir
}

// TestFaultRawLogDiskFull records a constructed (simulated) cup into a
// 256 KiB tmpfs that a filler file leaves only a few pages of: the raw log
// fills the disk mid-sample. Run stops with an error naming the raw log
// and the reading it could not write; the partial file stays; once space
// is freed, Recover completes it and every reading written before the
// disk filled is in the curve file, reading for reading.
func TestFaultRawLogDiskFull(t *testing.T) {
	dir := faultTmpfs(t, "256k", false)
	var st syscall.Statfs_t
	if err := syscall.Statfs(dir, &st); err != nil {
		t.Fatal(err)
	}
	filler := filepath.Join(dir, "filler")
	free := int64(st.Bavail) * st.Bsize
	if err := os.WriteFile(filler, make([]byte, free-4*4096), 0o644); err != nil {
		t.Fatalf("filling the tmpfs: %v", err)
	}
	port := newPipePort()
	a, col, stop := startAcq(t, port.open, Config{Port: "fake0", Dir: dir, SyncEvery: 20 * time.Millisecond})
	sent := cupCurve(100, 2, 60) // 6000 readings of about 20 bytes: far more than 16 KiB
	w := port.plug()
	go func() {
		for _, r := range sent {
			if _, err := w.Write([]byte(r.line("1"))); err != nil {
				return
			}
		}
	}()
	deadline := time.After(10 * time.Second)
wait:
	for {
		select {
		case b, ok := <-a.Batches():
			if !ok {
				break wait // Run has returned
			}
			for _, it := range b.Items {
				if it.Kind != feed.KindReading {
					col.events = append(col.events, it)
				}
			}
		case <-deadline:
			t.Fatalf("Run did not stop on the full disk; events: %v", col.eventTexts())
		}
	}
	runErr := stop()
	w.CloseWithError(os.ErrClosed)
	st0 := col.has(feed.KindStarted, "1")
	if st0 == nil {
		t.Fatalf("no sample started: %v", col.eventTexts())
	}
	partial := st0.Path
	if runErr == nil || !strings.Contains(runErr.Error(), partial) || !strings.Contains(runErr.Error(), "no space left on device") ||
		!strings.Contains(runErr.Error(), "writing reading at") {
		t.Fatalf("Run error %v; want one naming %s and the full disk", runErr, partial)
	}
	if _, err := os.Stat(partial); err != nil {
		t.Fatalf("the raw log is gone after the full disk: %v", err)
	}
	// the stream says why it ends (the dashboard showed only FEED ENDED)
	if !slices.ContainsFunc(col.events, func(it feed.Item) bool {
		return it.Kind == feed.KindWarning && strings.Contains(it.Text, "acquisition stopped: ") && strings.Contains(it.Text, "no space left")
	}) {
		t.Errorf("no warning saying why acquisition stopped: %v", col.eventTexts())
	}

	// Recovery, with space again.
	if err := os.Remove(filler); err != nil {
		t.Fatal(err)
	}
	recs, err := recoverDir(dir, time.Now())
	if err != nil || len(recs) != 1 {
		t.Fatalf("Recover: %v %v", recs, err)
	}
	c := readRows(t, recs[0].Path)
	if c.meta["interrupted"] != "true" {
		t.Errorf("metadata %v", c.meta)
	}
	first := int(st0.TimeS * 100) // the file starts with the pre-trigger readings
	checkRowsMatch(t, c, sent, first)
	// The reading named in the error is the first one not written: all
	// before it are there.
	var failedAt float64
	msg := runErr.Error()
	i := strings.Index(msg, "writing reading at ") + len("writing reading at ")
	if _, err := fmt.Sscan(msg[i:], &failedAt); err != nil {
		t.Fatalf("cannot read the time in %q: %v", msg, err)
	}
	last := c.float(t, len(c.rows)-1, "time_s")
	if n := len(c.rows); n < 200 || last+0.01+1e-9 < failedAt {
		t.Fatalf("%d rows up to %v s recovered, the disk filled at %v s: readings lost", n, last, failedAt)
	}
	t.Logf("disk full at %v s: %v; %d rows recovered, up to %v s", failedAt, runErr, len(c.rows), last)
	if cv, err := curvefile.ReadFile(recs[0].Path); err != nil || len(cv.Time) != len(c.rows) {
		t.Fatalf("the recovered file does not read back: %v", err)
	}
}

// TestFaultAcquireReadOnlyDir: an acquirer whose curve directory is
// read-only stops at once with an error naming the directory, before a
// cup is poured (not at the pour, when the sample would be lost).
func TestFaultAcquireReadOnlyDir(t *testing.T) {
	dir := faultTmpfs(t, "64k", true)
	port := newPipePort()
	for _, cfg := range []Config{{Dir: dir}, {OutPath: filepath.Join(dir, "L-2417-cup1.csv")}} {
		a := New(port.open, cfg)
		errc := make(chan error, 1)
		go func() { errc <- a.Run(t.Context()) }()
		select {
		case err := <-errc:
			if err == nil || !strings.Contains(err.Error(), dir) || !strings.Contains(err.Error(), "read-only") {
				t.Errorf("%+v: Run error %v; want one naming %s as read-only", cfg, err, dir)
			}
		case <-time.After(5 * time.Second):
			t.Fatalf("%+v: Run still waiting for a pour with a read-only curve directory", cfg)
		}
	}
}
