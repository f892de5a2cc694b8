package acquire

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/feed"
)

const tornPartial = `# sample: L-2417 cup 3
# channel: 1
time_s,temp_c,flags
0,25.1,
0.1,25.2,
0.2,1290.5,
0.3,1288,gap_before
0.4,1287.6,
0.5,128`

func TestRecover(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "20260302-063000-ch1.partial.csv")
	if err := os.WriteFile(p, []byte(tornPartial), 0o644); err != nil {
		t.Fatal(err)
	}
	recs, err := recoverDir(dir, time.Now())
	if err != nil || len(recs) != 1 {
		t.Fatalf("Recover: %v %v", recs, err)
	}
	r := recs[0]
	if r.Path != filepath.Join(dir, "20260302-063000-ch1.csv") || r.Rows != 5 || !r.Torn || r.Channel != "1" {
		t.Fatalf("recovered %+v", r)
	}
	c := readRows(t, r.Path)
	if c.meta["interrupted"] != "true" || c.meta["recovered"] == "" || c.meta["sample"] != "L-2417 cup 3" {
		t.Fatalf("metadata %v", c.meta)
	}
	fl := c.col("flags")
	if len(c.rows) != 5 || c.rows[2][fl] != "gap_after" || c.rows[3][fl] != "gap_before" || c.rows[4][1] != "1287.6" {
		t.Fatalf("rows %q", c.rows)
	}
	if _, err := os.Stat(p); !errors.Is(err, os.ErrNotExist) {
		t.Fatalf("partial file still there: %v", err)
	}
	if cv, err := curvefile.ReadFile(r.Path); err != nil || len(cv.Time) != 5 || cv.Get("interrupted") != "true" {
		t.Fatalf("curve reader: %v %+v", err, cv)
	}
	// A second run finds nothing more.
	if recs, err := recoverDir(dir, time.Now()); err != nil || len(recs) != 0 {
		t.Fatalf("second Recover: %v %v", recs, err)
	}
}

// TestRecoverLeavesLiveLog: a raw log that a recorder is writing (locked)
// is not taken over.
func TestRecoverLeavesLiveLog(t *testing.T) {
	if !keepOpenWhileCompleting {
		t.Skip("this system has no advisory file locks")
	}
	dir := t.TempDir()
	l, err := createLog(filepath.Join(dir, "live.csv"), nil, false, 100*time.Millisecond)
	if err != nil {
		t.Fatal(err)
	}
	if err := l.write(feed.Reading{TimeS: 1, TempC: 1300}, 0); err != nil {
		t.Fatal(err)
	}
	recs, err := recoverDir(dir, time.Now())
	if err != nil || len(recs) != 0 {
		t.Fatalf("Recover took a live log: %v %v", recs, err)
	}
	path, err := l.finish()
	if err != nil {
		t.Fatal(err)
	}
	if c := readRows(t, path); len(c.rows) != 1 {
		t.Fatalf("rows %q", c.rows)
	}
}

// TestRecoverAfterCompleting: a crash after the completed file was renamed
// but before the partial one was removed leaves both; the completed one is
// kept as it is.
func TestRecoverAfterCompleting(t *testing.T) {
	dir := t.TempDir()
	final := filepath.Join(dir, "s.csv")
	// the completed form: the partial's metadata (its sample id as the
	// tracker decided it), the end
	os.WriteFile(final, []byte("# sample: L-2417 cup 4\n# channel: 1\n# ended: freezing done\ntime_s,temp_c,flags\n0,1,\n"), 0o644)
	os.WriteFile(partialName(final), []byte(tornPartial), 0o644)
	if recs, err := recoverDir(dir, time.Now()); err != nil || len(recs) != 0 {
		t.Fatalf("Recover: %v %v", recs, err)
	}
	b, _ := os.ReadFile(final)
	if !strings.HasPrefix(string(b), "# sample: L-2417 cup 4") || exists(partialName(final)) {
		t.Fatalf("final %q, partial left %v", b, exists(partialName(final)))
	}
}

// TestRecoverBesideAnotherFile: the final name of an interrupted sample is
// taken by a file that is not its completed form (another program's, or
// the reason completing failed): the readings are completed under a name
// of their own and the other file is left as it is. Before, the partial
// file was removed as if completed, and its readings were lost.
func TestRecoverBesideAnotherFile(t *testing.T) {
	dir := t.TempDir()
	final := filepath.Join(dir, "s.csv")
	os.WriteFile(final, []byte("taken\n"), 0o644)
	os.WriteFile(partialName(final), []byte(tornPartial), 0o644)
	recs, err := recoverDir(dir, time.Now())
	want := filepath.Join(dir, "s-recovered.csv")
	if err != nil || len(recs) != 1 || recs[0].Path != want || recs[0].Rows != 5 {
		t.Fatalf("Recover: %+v %v", recs, err)
	}
	if b, _ := os.ReadFile(final); string(b) != "taken\n" || exists(partialName(final)) {
		t.Fatalf("the other file %q; partial left %v", b, exists(partialName(final)))
	}
	c, err := curvefile.ReadFile(want)
	if err != nil || len(c.Time) != 5 || c.Get("interrupted") != "true" {
		t.Fatalf("recovered file: %v %v", c, err)
	}
}

// TestRunRecovers: Run completes interrupted samples in its directory
// first and says so.
func TestRunRecovers(t *testing.T) {
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "x.partial.csv"), []byte(tornPartial), 0o644)
	port := newPipePort()
	_, col, _ := startAcq(t, port.open, Config{Dir: dir})
	col.until("recovered", 5*time.Second, func() bool { return col.has(feed.KindRecovered, "") != nil })
	if e := col.has(feed.KindRecovered, ""); e.Path != filepath.Join(dir, "x.csv") || e.Channel != "1" {
		t.Fatalf("event %+v", e)
	}
}

func TestOutPathNotOverwritten(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "cup.csv")
	os.WriteFile(out, []byte("keep me\n"), 0o644)
	port := newPipePort()
	_, _, stop := startAcq(t, port.open, Config{OutPath: out})
	err := stop()
	if err == nil || !strings.Contains(err.Error(), "already exists") {
		t.Fatalf("Run: %v", err)
	}
	if b, _ := os.ReadFile(out); string(b) != "keep me\n" {
		t.Fatalf("overwritten: %q", b)
	}
}

// TestFaultsInFile: fault readings are kept as #fault lines in place, and
// the completed file reads back with the project's curve reader (which
// passes over them and counts them).
func TestFaultsInFile(t *testing.T) {
	dir := t.TempDir()
	port := newPipePort()
	a, col, _ := startAcq(t, port.open, Config{Dir: dir, Trigger: Trigger{Manual: true}})
	w := port.plug()
	w.Write([]byte("ms=0 mv=40.276 cj=25\n"))
	col.until("first", 5*time.Second, func() bool { return len(col.readings) == 1 })
	a.Start("1")
	w.Write([]byte("ms=100 f=open\nms=200 mv=99 cj=25\nms=300 c=990.5\n"))
	col.until("four", 5*time.Second, func() bool { return len(col.readings) == 4 })
	a.Stop("1", 0, "")
	col.until("done", 5*time.Second, func() bool { return col.has(feed.KindEnded, "1") != nil })
	path := col.has(feed.KindEnded, "1").Path
	b, _ := os.ReadFile(path)
	if !strings.Contains(string(b), "\n#fault 0.1 open\n#fault 0.2 fault emf_mv=99 cj_c=25\n0.3,990.5,,,\n") {
		t.Fatalf("file:\n%s", b)
	}
	cv, err := curvefile.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(cv.Time) != 2 || cv.Skipped != 2 || cv.Temp[1] != 990.5 || math.Abs(cv.Temp[0]-1000) > 0.05 || !strings.HasPrefix(cv.Get("faults"), "2 ") {
		t.Fatalf("read back: %+v", cv)
	}
}
