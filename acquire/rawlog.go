package acquire

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/undercool-foundry/undercool/internal/atomicfile"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/protocol"
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
	meta           []curvefile.Meta // the metadata the file started with
	cols           []string         // its extra columns
	emf            bool
	rows           []row // what was written, in order, for the completed file
	faults         int
	extra          []curvefile.Meta // metadata added at the end
	fix            []curvefile.Meta // the sample's metadata as decided after the start (sample keys), or nil
	gapAtEnd       bool             // the port was lost after the last row so far
	wall           string           // a two-thermocouple cup's wall channel ("" for one thermocouple)
	walls          []wallRow        // its readings, in order
	wallFaults     int              // of which fault readings
	unlock         func()

	stop chan struct{}
	done sync.WaitGroup
	mu   sync.Mutex // guards err
	err  error      // the first fsync error
}

// row is one line of the raw log below its header: a reading, or a fault
// reading kept as a "#fault" comment line.
type row struct {
	time, temp float64
	flags      string // as Flag.String writes them
	mv, cj     string // the EMF columns' text, when the file has them
	fault      string // the whole "#fault ..." line (without its line break) for a fault reading
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
	meta = cleanMeta(meta)
	w, err := curvefile.NewWriter(f, meta, cols...)
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
	l := &rawLog{partial: partial, final: final, f: f, w: w, meta: meta, cols: cols, emf: emf, unlock: unlock, stop: make(chan struct{})}
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
func (l *rawLog) write(r feed.Reading, rel float64) error {
	rw := row{time: rel, temp: r.TempC, flags: (r.Flags &^ feed.FlagEMF).String()}
	if l.emf && r.Flags&feed.FlagEMF != 0 {
		rw.mv = strconv.FormatFloat(r.EMFmV, 'f', -1, 64)
		rw.cj = strconv.FormatFloat(r.ColdJctC, 'f', -1, 64)
	}
	var err error
	switch {
	case !r.Valid():
		b := strconv.AppendFloat([]byte("#fault "), rel, 'f', -1, 64)
		b = append(b, ' ')
		b = append(b, rw.flags...)
		if r.Flags&feed.FlagEMF != 0 {
			b = append(b, " emf_mv="...)
			b = strconv.AppendFloat(b, r.EMFmV, 'f', -1, 64)
			b = append(b, " cj_c="...)
			b = strconv.AppendFloat(b, r.ColdJctC, 'f', -1, 64)
		}
		rw.fault = string(b)
		_, err = l.f.Write(append(b, '\n'))
		l.faults++
	default:
		err = l.writeRow(l.w, rw)
	}
	if err != nil {
		return fmt.Errorf("acquire: raw log %s: %w", l.partial, err)
	}
	l.rows = append(l.rows, rw)
	l.gapAtEnd = false
	return nil
}

// writeRow writes a reading row with the file's columns, after the
// values of the columns before them (the completed file's wall column).
func (l *rawLog) writeRow(w *curvefile.Writer, rw row, before ...string) error {
	if l.emf {
		return w.Write(rw.time, rw.temp, append(before, rw.flags, rw.mv, rw.cj)...)
	}
	return w.Write(rw.time, rw.temp, append(before, rw.flags)...)
}

// cutAfter leaves out of the completed file the readings after atS (s in
// the file) and the wall readings after the first one beyond it (which the
// last centre reading's wall value is taken with), as the tracker leaves
// them out of the sample (sample.Command.AtS). The partial file keeps
// them until it is completed.
func (l *rawLog) cutAfter(atS float64) {
	k := len(l.rows)
	for k > 0 && l.rows[k-1].time > atS {
		k--
	}
	if k < len(l.rows) {
		first := l.rows[k]
		l.gapAtEnd = hasFlag(first.flags, "gap_before") || strings.Contains(first.fault, "gap_before")
		l.rows = l.rows[:k]
		l.faults = 0
		for _, rw := range l.rows {
			if rw.fault != "" {
				l.faults++
			}
		}
	}
	j := 0
	for j < len(l.walls) && l.walls[j].time <= atS {
		j++
	}
	if j+1 < len(l.walls) {
		l.walls = l.walls[:j+1]
		l.wallFaults = 0
		for _, w := range l.walls {
			if math.IsNaN(w.temp) {
				l.wallFaults++
			}
		}
	}
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
	meta := l.meta
	if l.fix != nil {
		meta = withSampleMeta(meta, l.fix)
	}
	err = l.complete(meta, l.extra)
	l.unlock()
	l.f.Close()
	if err != nil {
		return "", err
	}
	return l.final, nil
}

// complete writes the completed form of the raw log (from what was
// written, kept in rows) to its final name, through a temporary file,
// fsynced and renamed, and removes the partial file: the metadata it
// started with and extra after them, the fault count, and gap_after on the
// last reading before each gap.
func (l *rawLog) complete(meta, extra []curvefile.Meta) error {
	meta = mergeMeta(slices.Clone(meta), cleanMeta(extra))
	if l.faults > 0 {
		meta = mergeMeta(meta, []curvefile.Meta{{Key: "faults", Value: strconv.Itoa(l.faults) + " fault readings, kept as #fault lines"}})
	}
	cols, wall := l.cols, l.wallColumn()
	if wall != nil {
		cols = append([]string{curvefile.ColumnWall}, cols...)
		if l.wallFaults > 0 {
			meta = mergeMeta(meta, []curvefile.Meta{{Key: curvefile.KeyWallFaults, Value: strconv.Itoa(l.wallFaults) + " fault readings of the wall thermocouple, its column empty around them"}})
		}
	}
	var b bytes.Buffer
	b.Grow(len(l.rows)*32 + 512)
	w, err := curvefile.NewWriter(&b, meta, cols...)
	if err != nil {
		return fmt.Errorf("acquire: completing %s: %w", l.final, err)
	}
	var before []string
	k := 0 // reading rows written
	for j, rw := range l.rows {
		if wall != nil && rw.fault == "" {
			before = append(before[:0], wall[k])
			k++
		}
		if rw.fault != "" {
			b.WriteString(rw.fault)
			b.WriteByte('\n')
			continue
		}
		gapNext := l.gapAtEnd
		if j+1 < len(l.rows) {
			gapNext = hasFlag(l.rows[j+1].flags, "gap_before") || strings.Contains(l.rows[j+1].fault, "gap_before")
		}
		if gapNext && !hasFlag(rw.flags, "gap_after") {
			rw.flags = strings.TrimPrefix(rw.flags+"|gap_after", "|")
		}
		if err := l.writeRow(w, rw, before...); err != nil {
			return fmt.Errorf("acquire: completing %s: %w", l.final, err)
		}
	}
	if err := writeAtomic(l.final, b.Bytes()); err != nil {
		return err
	}
	if err := os.Remove(l.partial); err != nil {
		return fmt.Errorf("acquire: %w", err)
	}
	return syncDir(filepath.Dir(l.final))
}

func hasFlag(flags, flag string) bool {
	for f := range strings.SplitSeq(flags, "|") {
		if f == flag {
			return true
		}
	}
	return false
}

// withSampleMeta is meta with its sample keys (protocol.SampleKeys) as fix
// says: replaced where fix has them, dropped where it has not, added after
// the others where meta had none.
func withSampleMeta(meta, fix []curvefile.Meta) []curvefile.Meta {
	var out []curvefile.Meta
	for _, m := range meta {
		if !protocol.IsSampleKey(m.Key) {
			out = append(out, m)
			continue
		}
		if v := metaValue(fix, m.Key); v != "" {
			out = append(out, curvefile.Meta{Key: m.Key, Value: v})
		}
	}
	for _, m := range fix {
		if metaValue(out, m.Key) == "" && m.Value != "" {
			out = append(out, m)
		}
	}
	return out
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

// recoverDir completes the samples in dir whose recording was interrupted
// (a NAME.partial.csv left by a crash, a kill or a power cut): every
// completely written line is kept, a torn last line is dropped, the
// metadata gain "# interrupted: true" and "# recovered: TIME" (now), and
// the file is renamed to NAME.csv. A partial file still locked by a
// running recorder is left alone. Where NAME.csv already exists (the crash
// came after completing) the partial file is removed. It returns what it
// completed, in name order, and the first error; it goes on past errors.
// Run calls it at its start.
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
	l, torn, err := readPartial(p)
	if err != nil {
		return Recovered{}, false, err
	}
	if exists(l.final) {
		if completedForm(l.final, l.meta) {
			// the crash came after completing: the file is there
			return Recovered{}, false, os.Remove(p)
		}
		// another file took the name (the reason completing failed):
		// the readings go to a name of their own, the other file is left
		l.final = freeName(strings.TrimSuffix(l.final, ".csv") + "-recovered")
	}
	extra := []curvefile.Meta{
		{Key: "interrupted", Value: "true"},
		{Key: "recovered", Value: now.Format("2006-01-02T15:04:05Z07:00")},
	}
	if err := l.complete(l.meta, extra); err != nil {
		return Recovered{}, false, err
	}
	return Recovered{Path: l.final, Channel: metaValue(l.meta, "channel"), Rows: len(l.rows) - l.faults, Torn: torn}, true, nil
}

// completedForm reports whether the curve file final is the completed form
// of a raw log that started with meta: it holds every key of meta that is
// not a sample key (those may be changed on completing) with the same
// value, and meta has at least one such key.
func completedForm(final string, meta []curvefile.Meta) bool {
	c, err := curvefile.ReadFile(final)
	if err != nil {
		return false
	}
	n := 0
	for _, m := range meta {
		if protocol.IsSampleKey(m.Key) {
			continue
		}
		if c.Get(m.Key) != m.Value {
			return false
		}
		n++
	}
	return n > 0
}

// freeName is base.csv, or base-2.csv, base-3.csv... the first name taken
// by no file and no partial file.
func freeName(base string) string {
	for i := 1; ; i++ {
		p := base + ".csv"
		if i > 1 {
			p = base + "-" + strconv.Itoa(i) + ".csv"
		}
		if !exists(p) && !exists(partialName(p)) {
			return p
		}
	}
}

// readPartial reads an interrupted raw log back (with the curve reader;
// a torn last line is dropped first) into the rows its completed form is
// written from, the fault lines in their places.
func readPartial(p string) (l *rawLog, torn bool, err error) {
	data, err := os.ReadFile(p)
	if err != nil {
		return nil, false, fmt.Errorf("acquire: recover: %w", err)
	}
	if i := bytes.LastIndexByte(data, '\n'); i+1 < len(data) {
		torn, data = true, data[:i+1]
	}
	c, err := curvefile.Read(bytes.NewReader(data), p)
	if err != nil {
		return nil, torn, fmt.Errorf("acquire: recover: %w", err)
	}
	l = &rawLog{partial: p, final: finalName(p), meta: c.Meta, wall: metaValue(c.Meta, curvefile.KeyWallChannel)}
	text := map[string][]string{}
	for _, col := range c.Extra {
		l.cols = append(l.cols, col.Name)
		text[col.Name] = col.Values
	}
	l.emf = slices.Contains(l.cols, "emf_mv")
	at := func(col string, k int) string {
		if v := text[col]; k < len(v) {
			return v[k]
		}
		return ""
	}
	// The curve reader passes over the fault lines: put them back among
	// the readings, where they were. Below the header every line that does
	// not start with '#' is a reading.
	k, header := 0, false
	for line := range bytes.SplitSeq(data, []byte{'\n'}) {
		t := bytes.TrimSpace(line)
		switch {
		case len(t) == 0:
		case bytes.HasPrefix(t, []byte("#fault ")):
			l.rows = append(l.rows, row{fault: string(t)})
			l.faults++
		case bytes.HasPrefix(t, []byte(wallPrefix)):
			if err := l.readWall(t); err != nil {
				return nil, torn, fmt.Errorf("acquire: recover %s: %w", p, err)
			}
		case t[0] == '#':
		case !header:
			header = true
		case k < len(c.Time):
			l.rows = append(l.rows, row{time: c.Time[k], temp: c.Temp[k], flags: at("flags", k), mv: at("emf_mv", k), cj: at("cj_c", k)})
			k++
		default:
			k++
		}
	}
	if k != len(c.Time) {
		return nil, torn, fmt.Errorf("acquire: recover %s: %d reading lines, the curve reader found %d", p, k, len(c.Time))
	}
	return l, torn, nil
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
