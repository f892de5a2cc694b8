package acquire

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/protocol"
)

// channel is the sample lifecycle of one channel id: waiting for the pour
// (keeping the last Trigger.PreS seconds), recording into its raw log until
// told to stop (or the time limit), and waiting for the next pour.
type channel struct {
	id    string
	n     int              // samples started on the channel
	pre   []feed.Reading   // the last PreS seconds while not recording
	preAt []time.Time      // host arrival times of pre
	next  []curvefile.Meta // sample metadata for the next file (SetMeta)

	log       *rawLog   // the sample recording, nil while waiting
	startT    float64   // acquisition time of the file's first reading
	startHost time.Time // host time of the same
	gapBefore bool      // the port was lost since this channel's last reading

	readings, faults int
	lastAt           time.Time // host time of the last reading
}

// setMeta takes the tracker's sample metadata: for the next file
// (sample 0), or for the completed form of the file recording sample.
func (c *channel) setMeta(sample int, m []curvefile.Meta) {
	switch {
	case sample == 0:
		c.next = m
	case c.log != nil && sample == c.n:
		c.log.fix = m
	}
}

func (c *channel) markGap() {
	c.gapBefore = true
	if c.log != nil {
		c.log.gapAtEnd = true
	}
}

// count counts a reading of the channel, which arrived at host time at.
func (c *channel) count(r feed.Reading, at time.Time) {
	c.gapBefore = false
	c.readings++
	if !r.Valid() {
		c.faults++
	}
	c.lastAt = at
}

func (c *channel) add(a *Acquirer, r feed.Reading, at time.Time) error {
	c.count(r, at)
	if c.log == nil {
		c.buffer(r, at, a.cfg.Trigger.PreS)
		if a.cfg.Trigger.Manual || (a.cfg.MaxSamples > 0 && a.started >= a.cfg.MaxSamples) {
			return nil
		}
		if why, ok := c.triggered(r, a.cfg.Trigger); ok {
			c.trimPre(r.TimeS - a.cfg.Trigger.WithinS)
			return c.start(a, why, r.TimeS, at)
		}
		return nil
	}
	rel := feed.FileTime(r.TimeS, c.startT)
	if err := c.log.write(r, rel); err != nil {
		return err
	}
	if rel >= a.cfg.MaxS {
		return c.finish(a, fmt.Sprintf("time limit of %g s reached", a.cfg.MaxS))
	}
	return nil
}

// buffer keeps r (which arrived at host time at) and drops readings older
// than preS seconds.
func (c *channel) buffer(r feed.Reading, at time.Time, preS float64) {
	c.pre = append(c.pre, r)
	c.preAt = append(c.preAt, at)
	i := 0
	for i < len(c.pre) && c.pre[i].TimeS < r.TimeS-preS {
		i++
	}
	c.pre, c.preAt = c.pre[i:], c.preAt[i:]
}

// preTrimC: the pre-trigger readings kept are those within this many °C
// of the coolest reading before the pour, so that the tail of a previous
// cup (a thermocouple still hot from it) does not start the file.
const preTrimC = 20

// trimPre drops the pre-trigger readings before the run of readings near
// the coolest one before riseFrom (the start of the rise window).
func (c *channel) trimPre(riseFrom float64) {
	lo, k := math.Inf(1), -1
	for i, p := range c.pre {
		if p.TimeS > riseFrom {
			break
		}
		if p.Valid() && p.TempC <= lo {
			lo, k = p.TempC, i
		}
	}
	if k < 0 {
		return
	}
	for k > 0 && (!c.pre[k-1].Valid() || c.pre[k-1].TempC <= lo+preTrimC) {
		k--
	}
	c.pre, c.preAt = c.pre[k:], c.preAt[k:]
}

// triggered reports whether r completes a pour transient: at least MinC
// and more than RiseC above the lowest valid reading of the last WithinS.
func (c *channel) triggered(r feed.Reading, tr Trigger) (string, bool) {
	if !r.Valid() || r.TempC < tr.MinC {
		return "", false
	}
	lo, loT := math.Inf(1), 0.0
	for i := len(c.pre) - 1; i >= 0 && c.pre[i].TimeS >= r.TimeS-tr.WithinS; i-- {
		if p := c.pre[i]; p.Valid() && p.TempC < lo {
			lo, loT = p.TempC, p.TimeS
		}
	}
	if r.TempC-lo <= tr.RiseC {
		return "", false
	}
	return fmt.Sprintf("pour detected: %.0f °C, up %.0f °C in %.1f s", r.TempC, r.TempC-lo, r.TimeS-loT), true
}

// start opens the sample's raw log with the buffered readings; at and
// atHost are the acquisition and host times of the start.
func (c *channel) start(a *Acquirer, why string, at float64, atHost time.Time) error {
	if c.log != nil {
		return nil
	}
	c.startT, c.startHost = at, atHost
	if len(c.pre) > 0 {
		c.startT, c.startHost = c.pre[0].TimeS, c.preAt[0]
	}
	now := a.cfg.Now()
	emf := slices.ContainsFunc(c.pre, func(r feed.Reading) bool { return r.Flags&feed.FlagEMF != 0 })
	id := metaValue(c.next, "sample")
	if s := slug(id); len(s) > MaxNamePart {
		a.warn("longid:"+c.id+":"+id, fmt.Sprintf("channel %s: the sample id is %d bytes long; the curve file's name keeps its first %d (its metadata keeps it whole)",
			c.id, len(id), MaxNamePart))
	}
	path, err := a.newPath(c.id, id, now)
	if err == nil {
		var log *rawLog
		if log, err = createLog(path, a.sampleMeta(c, why), emf, a.cfg.SyncEvery); err == nil {
			c.log = log
		}
	}
	if err != nil {
		if a.cfg.OutPath != "" && a.started == 0 {
			return err // record's one file: the command says why
		}
		// One channel's file problem is that channel's: the others go
		// on; this one waits for its next pour (the readings before
		// this one are dropped so that the same rise does not start it
		// again at once).
		c.pre, c.preAt = c.pre[:0], c.preAt[:0]
		a.item(feed.Item{Kind: feed.KindWarning, Channel: c.id, TimeS: a.tb.last,
			Text: fmt.Sprintf("channel %s: %s, but the sample cannot be recorded: %v", c.id, why, err)})
		return nil
	}
	log := c.log
	c.n++
	a.started++
	pre := slices.Clone(c.pre)
	wall, wallPre, werr := a.startWall(c)
	a.item(feed.Item{Kind: feed.KindStarted, Channel: c.id, TimeS: c.startT, Sample: c.n, Path: log.partial,
		Meta: slices.Clone(log.meta), Pre: pre, StartS: c.startT, Wall: wall, WallPre: wallPre,
		Text: fmt.Sprintf("channel %s: %s; recording to %s", c.id, why, log.partial)})
	if werr != nil {
		return werr
	}
	for _, r := range pre {
		if err := c.log.write(r, feed.FileTime(r.TimeS, c.startT)); err != nil {
			return err
		}
	}
	c.pre, c.preAt = c.pre[:0], c.preAt[:0]
	return nil
}

// finish completes the sample's file.
func (c *channel) finish(a *Acquirer, reason string) error {
	log := c.log
	c.log = nil
	n := len(log.rows)
	dur := 0.0
	if n > 0 {
		dur = log.rows[n-1].time
	}
	log.extra = mergeMeta(log.extra, []curvefile.Meta{{Key: "ended", Value: reason}})
	path, err := log.finish()
	if err != nil {
		// The channel's problem: said, and the other channels go on. The
		// readings stay in the partial file, completed at the next start.
		a.item(feed.Item{Kind: feed.KindEnded, Channel: c.id, TimeS: a.tb.last, Sample: c.n, Path: log.partial, Failed: true,
			Text: fmt.Sprintf("channel %s: %v (the readings stay in %s and are recovered at the next start)", c.id, err, log.partial)})
		return nil
	}
	a.st.SamplesDone++
	a.item(feed.Item{Kind: feed.KindEnded, Channel: c.id, TimeS: a.tb.last, Sample: c.n, Path: path,
		Text: fmt.Sprintf("channel %s: sample done (%s): %d readings over %.1f s in %s", c.id, reason, n-log.faults, dur, path)})
	return nil
}

// sampleMeta is the metadata a sample's file starts with: the configured
// metadata, the sample's own (as the tracker set it) and the acquisition's.
func (a *Acquirer) sampleMeta(c *channel, why string) []curvefile.Meta {
	meta := mergeMeta(slices.Clone(a.cfg.Meta), c.next)
	add := func(k, v string) { meta = mergeMeta(meta, []curvefile.Meta{{Key: k, Value: v}}) }
	add("channel", c.id)
	meta = mergeMeta(meta, a.cupMeta(c.id))
	if a.tcName != "" {
		add("thermocouple", a.tcName)
	}
	if a.cfg.ColdJunctionSet {
		add("cold_junction_c", strconv.FormatFloat(a.cfg.ColdJunctionC, 'f', -1, 64))
	}
	if a.cfg.Port != "" {
		add("port", a.cfg.Port)
	}
	start := c.startHost
	add("started", start.Format("2006-01-02T15:04:05.000Z07:00"))
	add("trigger", why)
	if len(a.devInfo) > 0 {
		var b strings.Builder
		for i, m := range a.devInfo {
			if i > 0 {
				b.WriteByte(' ')
			}
			b.WriteString(m.Key + "=" + m.Value)
		}
		add("device", b.String())
	}
	// a device that says it is simulated (the virtual melt deck) makes a
	// simulated sample, marked as the simulator's own curve files are, so
	// that records and report pages never pass it off as a measurement
	for _, m := range a.devInfo {
		if m.Key == "simulated" && strings.EqualFold(m.Value, "true") {
			add("simulated", "true")
		}
	}
	add("recorder", "undercool acquire, line protocol 1")
	return meta
}

// newPath names a new sample's curve file: OutPath for the first, else
// DIR/YYYYMMDD-HHMMSS-chID[-SAMPLE].csv, never an existing name.
func (a *Acquirer) newPath(ch, sample string, now time.Time) (string, error) {
	if a.cfg.OutPath != "" && a.started == 0 {
		if exists(a.cfg.OutPath) || exists(partialName(a.cfg.OutPath)) {
			return "", fmt.Errorf("acquire: output file %s already exists; not overwritten", a.cfg.OutPath)
		}
		return a.cfg.OutPath, nil
	}
	base := now.Format("20060102-150405") + "-ch" + cutName(slug(ch))
	if s := cutName(slug(sample)); s != "" {
		base += "-" + s
	}
	dir := a.outDir()
	for i := 1; ; i++ {
		name := base
		if i > 1 {
			name += "-" + strconv.Itoa(i)
		}
		p := filepath.Join(dir, name+".csv")
		if !exists(p) && !exists(partialName(p)) {
			return p, nil
		}
	}
}

func exists(p string) bool {
	_, err := os.Lstat(p)
	return err == nil
}

// MaxNamePart is the most bytes of a channel id or a sample id that go
// into a curve file's name. With the time, the numbering, ".partial.csv"
// and the temporary name of the atomic write (".NAME.tmpNNNNNNNNNN") the
// name stays well below the 255 bytes of Linux, macOS and Windows file
// systems (NAME_MAX).
const MaxNamePart = 64

// cutName cuts a slug to MaxNamePart bytes (a slug is ASCII).
func cutName(s string) string {
	if len(s) > MaxNamePart {
		s = strings.TrimRight(s[:MaxNamePart], "-")
	}
	return s
}

// slug keeps letters, digits, '-' and '_' of s and turns the rest into '-'.
func slug(s string) string {
	b := []byte(s)
	for i, c := range b {
		if !protocol.IsIDByte(c) {
			b[i] = '-'
		}
	}
	return strings.Trim(string(b), "-")
}

// mergeMeta sets each of add in m, replacing the value of a key that is
// there and appending new keys.
func mergeMeta(m, add []curvefile.Meta) []curvefile.Meta {
	for _, x := range add {
		if i := metaIndex(m, x.Key); i >= 0 {
			m[i].Value = x.Value
		} else {
			m = append(m, x)
		}
	}
	return m
}

// metaIndex is the index of key in m, or -1.
func metaIndex(m []curvefile.Meta, key string) int {
	return slices.IndexFunc(m, func(y curvefile.Meta) bool { return y.Key == key })
}

func metaValue(m []curvefile.Meta, key string) string {
	for _, x := range m {
		if x.Key == key {
			return x.Value
		}
	}
	return ""
}
