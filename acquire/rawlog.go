package acquire

import (
	"bytes"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/undercool-foundry/undercool/internal/atomicfile"
	"github.com/undercool-foundry/undercool/internal/curvefile"
)

// The crash-safe raw log. While a sample records, its readings go to
// NAME.partial.csv, one write per reading, the file fsynced at least every
// SyncEvery by its own goroutine. When the sample is done the file is
// completed (metadata added at the end of recording go in with the rest) into
// a temporary file beside NAME.csv, fsynced, renamed to NAME.csv and the partial file removed.
// A kill -9 leaves NAME.partial.csv behind; Recover completes it, marked
// "# interrupted: true".
//
// Columns: time_s, temp_c, flags (see Flag.String), and emf_mv, cj_c when
// the channel sends raw EMF. A fault reading (open circuit, short, out of
// range) has no temperature: it is kept as a comment line in its place,
// "#fault TIME FLAGS [emf_mv=MV cj_c=C]", which curve readers pass over
// (and count); the completed file says "# faults: N". In the partial file a
// gap shows as gap_before on the first reading after it; the completed file
// also marks gap_after on the last reading before it.

const partialSuffix = ".partial.csv"

// partialName is the in-progress name of the curve file final (".csv").
func partialName(final string) string {
	return strings.TrimSuffix(final, ".csv") + partialSuffix
}

func finalName(partial string) string {
	return strings.TrimSuffix(partial, partialSuffix) + ".csv"
}

type rawLog struct {
	partial, final string
	f              *os.File
	w              *curvefile.Writer
	emf            bool
	rows, faults   int
	extra          []curvefile.Meta // metadata added at the end
	gapAtEnd       bool             // the port was lost after the last row so far
	unlock         func()

	stop chan struct{}
	done sync.WaitGroup
	mu   sync.Mutex // guards err
	err  error      // the first fsync error
}

// createLog starts the raw log of a sample whose completed file is final.
func createLog(final string, meta []curvefile.Meta, emf bool, syncEvery time.Duration) (*rawLog, error) {
	partial := partialName(final)
	if exists(final) {
		return nil, fmt.Errorf("acquire: curve file %s already exists; not overwritten", final)
	}
	if err := os.MkdirAll(filepath.Dir(final), 0o755); err != nil {
		return nil, fmt.Errorf("acquire: curve file directory: %w", err)
	}
	f, err := os.OpenFile(partial, os.O_WRONLY|os.O_CREATE|os.O_EXCL|os.O_APPEND, 0o644)
	if err != nil {
		return nil, fmt.Errorf("acquire: creating the raw log: %w", err)
	}
	unlock, err := lockFile(f)
	if err != nil {
		f.Close()
		os.Remove(partial)
		return nil, fmt.Errorf("acquire: locking %s: %w", partial, err)
	}
	cols := []string{"flags"}
	if emf {
		cols = append(cols, "emf_mv", "cj_c")
	}
	w, err := curvefile.NewWriter(f, cleanMeta(meta), cols...)
	if err == nil {
		err = f.Sync()
	}
	if err == nil {
		err = syncDir(filepath.Dir(partial))
	}
	if err != nil {
		unlock()
		f.Close()
		os.Remove(partial)
		return nil, fmt.Errorf("acquire: starting %s: %w", partial, err)
	}
	l := &rawLog{partial: partial, final: final, f: f, w: w, emf: emf, unlock: unlock, stop: make(chan struct{})}
	l.done.Go(func() { l.syncLoop(syncEvery) })
	return l, nil
}

// cleanMeta makes metadata writable: no line breaks anywhere, no ':' in
// keys, no empty keys.
func cleanMeta(meta []curvefile.Meta) []curvefile.Meta {
	out := make([]curvefile.Meta, 0, len(meta))
	fix := strings.NewReplacer("\r\n", " ", "\r", " ", "\n", " ")
	for _, m := range meta {
		k := strings.TrimSpace(strings.ReplaceAll(fix.Replace(m.Key), ":", "_"))
		if k == "" {
			continue
		}
		out = append(out, curvefile.Meta{Key: k, Value: strings.TrimSpace(fix.Replace(m.Value))})
	}
	return out
}

func (l *rawLog) syncLoop(every time.Duration) {
	t := time.NewTicker(every)
	defer t.Stop()
	for {
		select {
		case <-l.stop:
			return
		case <-t.C:
			if err := l.f.Sync(); err != nil {
				l.mu.Lock()
				if l.err == nil {
					l.err = err
				}
				l.mu.Unlock()
			}
		}
	}
}

// write appends one reading at time rel (s in the file).
func (l *rawLog) write(r Reading, rel float64) error {
	flags := (r.Flags &^ FlagEMF).String()
	var err error
	switch {
	case !valid(r):
		b := strconv.AppendFloat([]byte("#fault "), rel, 'f', -1, 64)
		b = append(b, ' ')
		b = append(b, flags...)
		if r.Flags&FlagEMF != 0 {
			b = append(b, " emf_mv="...)
			b = strconv.AppendFloat(b, r.EMFmV, 'f', -1, 64)
			b = append(b, " cj_c="...)
			b = strconv.AppendFloat(b, r.ColdJctC, 'f', -1, 64)
		}
		_, err = l.f.Write(append(b, '\n'))
		l.faults++
	case l.emf:
		mv, cj := "", ""
		if r.Flags&FlagEMF != 0 {
			mv = strconv.FormatFloat(r.EMFmV, 'f', -1, 64)
			cj = strconv.FormatFloat(r.ColdJctC, 'f', -1, 64)
		}
		err = l.w.Write(rel, r.TempC, flags, mv, cj)
		l.rows++
	default:
		err = l.w.Write(rel, r.TempC, flags)
		l.rows++
	}
	if err != nil {
		return fmt.Errorf("acquire: raw log %s: %w", l.partial, err)
	}
	l.gapAtEnd = false
	return nil
}

// finish completes the log and returns the final path.
func (l *rawLog) finish() (string, error) {
	close(l.stop)
	l.done.Wait()
	err := l.f.Sync()
	l.mu.Lock()
	if err == nil {
		err = l.err
	}
	l.mu.Unlock()
	if err != nil {
		l.unlock()
		l.f.Close()
		return "", fmt.Errorf("acquire: raw log %s: %w", l.partial, err)
	}
	// Where locks exist the file stays open and locked while it is
	// completed, so that a Recover elsewhere leaves it alone.
	if !keepOpenWhileCompleting {
		l.f.Close()
	}
	_, err = complete(l.partial, l.final, l.extra, l.gapAtEnd)
	l.unlock()
	l.f.Close()
	if err != nil {
		return "", err
	}
	return l.final, nil
}

// completed is what complete made of a partial file.
type completed struct {
	Rows   int  // readings kept
	Faults int  // fault readings kept (#fault lines)
	Torn   bool // a torn last line was dropped
}

// complete writes the completed form of the raw log src to dst (through
// a temporary file, fsynced, renamed) and removes src: extra metadata after the
// file's own, gap_after marks, a torn last line dropped.
func complete(src, dst string, extra []curvefile.Meta, gapAtEnd bool) (completed, error) {
	var c completed
	data, err := os.ReadFile(src)
	if err != nil {
		return c, fmt.Errorf("acquire: %w", err)
	}
	if i := bytes.LastIndexByte(data, '\n'); i+1 < len(data) {
		c.Torn = true
		data = data[:i+1]
	}
	lines := strings.SplitAfter(string(data), "\n")
	if n := len(lines); n > 0 && lines[n-1] == "" {
		lines = lines[:n-1]
	}
	var meta []curvefile.Meta
	var other []string // metadata lines not of the "# key: value" form
	i := 0
	for ; i < len(lines) && strings.HasPrefix(lines[i], "#"); i++ {
		k, v, ok := strings.Cut(strings.TrimSpace(strings.TrimPrefix(lines[i], "#")), ":")
		if !ok {
			other = append(other, lines[i])
			continue
		}
		meta = append(meta, curvefile.Meta{Key: strings.TrimSpace(k), Value: strings.TrimSpace(v)})
	}
	meta = mergeMeta(meta, cleanMeta(extra))
	flagCol := -1
	header := "time_s,temp_c,flags\n"
	if i < len(lines) {
		header = lines[i]
		for j, name := range strings.Split(strings.TrimSpace(header), ",") {
			if name == "flags" {
				flagCol = j
			}
		}
		i++
	}
	rows := lines[i:]
	var body strings.Builder
	body.Grow(len(data))
	for j, row := range rows {
		if strings.HasPrefix(row, "#") {
			c.Faults++
			body.WriteString(row)
			continue
		}
		c.Rows++
		var gapNext bool
		if j+1 < len(rows) {
			next := rows[j+1]
			gapNext = strings.HasPrefix(next, "#") && strings.Contains(next, "gap_before") ||
				flagCol >= 0 && hasFlag(next, flagCol, "gap_before")
		} else {
			gapNext = gapAtEnd
		}
		if gapNext && flagCol >= 0 {
			row = addFlag(row, flagCol, "gap_after")
		}
		body.WriteString(row)
	}
	if c.Faults > 0 {
		meta = mergeMeta(meta, []curvefile.Meta{{Key: "faults", Value: strconv.Itoa(c.Faults) + " fault readings, kept as #fault lines"}})
	}
	var b strings.Builder
	b.Grow(len(data) + 256)
	for _, m := range meta {
		fmt.Fprintf(&b, "# %s: %s\n", m.Key, m.Value)
	}
	for _, o := range other {
		b.WriteString(o)
	}
	b.WriteString(header)
	b.WriteString(body.String())
	if err := writeAtomic(dst, []byte(b.String())); err != nil {
		return c, err
	}
	if err := os.Remove(src); err != nil {
		return c, fmt.Errorf("acquire: %w", err)
	}
	return c, syncDir(filepath.Dir(dst))
}

func field(row string, col int) (start, end int, ok bool) {
	start = 0
	for k := 0; k < col; k++ {
		i := strings.IndexByte(row[start:], ',')
		if i < 0 {
			return 0, 0, false
		}
		start += i + 1
	}
	end = len(row)
	if i := strings.IndexAny(row[start:], ",\n"); i >= 0 {
		end = start + i
	}
	return start, end, true
}

func hasFlag(row string, col int, flag string) bool {
	s, e, ok := field(row, col)
	if !ok {
		return false
	}
	for _, f := range strings.Split(row[s:e], "|") {
		if f == flag {
			return true
		}
	}
	return false
}

func addFlag(row string, col int, flag string) string {
	s, e, ok := field(row, col)
	if !ok || hasFlag(row, col, flag) {
		return row
	}
	if e > s {
		flag = row[s:e] + "|" + flag
	}
	return row[:s] + flag + row[e:]
}

// writeAtomic writes data to dst through a temporary file beside it:
// fsynced, then renamed, so that dst is either absent or complete. It
// refuses to replace dst.
func writeAtomic(dst string, data []byte) error {
	if exists(dst) {
		return fmt.Errorf("acquire: curve file %s already exists; not overwritten", dst)
	}
	if err := atomicfile.WriteBytes(dst, data, 0o644); err != nil {
		return fmt.Errorf("acquire: completing %s: %w", dst, err)
	}
	return nil
}

// Recovered is an interrupted sample that Recover completed.
type Recovered struct {
	Path    string // the completed curve file
	Channel string // from its metadata
	Rows    int    // readings kept
	Torn    bool   // a torn last line was dropped
}

// Recover completes the samples in dir whose recording was interrupted (a
// NAME.partial.csv left by a crash, a kill or a power cut): every completely
// written line is kept, a torn last line is dropped, the metadata gain
// "# interrupted: true" and "# recovered: TIME", and the file is renamed to
// NAME.csv. A partial file still locked by a running recorder is left
// alone. Where NAME.csv already exists (the crash came after completing)
// the partial file is removed. Recover returns what it completed, in name
// order, and the first error; it goes on past errors.
func Recover(dir string) ([]Recovered, error) { return recoverDir(dir, time.Now()) }

func recoverDir(dir string, now time.Time) ([]Recovered, error) {
	names, err := filepath.Glob(filepath.Join(globEscape(dir), "*"+partialSuffix))
	if err != nil {
		return nil, fmt.Errorf("acquire: recover %s: %w", dir, err)
	}
	sort.Strings(names)
	var out []Recovered
	var first error
	for _, p := range names {
		r, ok, err := recoverOne(p, now)
		if err != nil {
			first = cmpOr(first, err)
			continue
		}
		if ok {
			out = append(out, r)
		}
	}
	return out, first
}

func recoverOne(p string, now time.Time) (Recovered, bool, error) {
	f, err := os.OpenFile(p, os.O_RDWR, 0)
	if err != nil {
		return Recovered{}, false, fmt.Errorf("acquire: recover: %w", err)
	}
	unlock, err := lockFile(f)
	if errors.Is(err, errLocked) {
		f.Close()
		return Recovered{}, false, nil // a recorder is writing it
	}
	if err != nil {
		f.Close()
		return Recovered{}, false, fmt.Errorf("acquire: recover %s: %w", p, err)
	}
	defer func() { unlock(); f.Close() }()
	if !keepOpenWhileCompleting {
		f.Close()
	}
	final := finalName(p)
	if exists(final) {
		return Recovered{}, false, os.Remove(p)
	}
	extra := []curvefile.Meta{
		{Key: "interrupted", Value: "true"},
		{Key: "recovered", Value: now.Format("2006-01-02T15:04:05Z07:00")},
	}
	c, err := complete(p, final, extra, false)
	if err != nil {
		return Recovered{}, false, err
	}
	r := Recovered{Path: final, Rows: c.Rows, Torn: c.Torn}
	if cv, err := os.ReadFile(final); err == nil {
		for _, line := range strings.Split(string(cv), "\n") {
			if v, ok := strings.CutPrefix(line, "# channel: "); ok {
				r.Channel = v
				break
			}
		}
	}
	return r, true, nil
}

func globEscape(p string) string {
	r := strings.NewReplacer("*", `\*`, "?", `\?`, "[", `\[`)
	if filepath.Separator == '\\' {
		return p // Windows: '\' is the separator, not an escape
	}
	return r.Replace(p)
}

func cmpOr(a, b error) error {
	if a != nil {
		return a
	}
	return b
}
