package acquire

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/protocol"
)

// Cup is a cup with two thermocouples on two channels of the amplifier
// (docs/recording.md, "Two thermocouples in one cup"): one at the centre,
// whose channel the sample is on (the pour trigger and the end of
// freezing come from it), and one near the wall, whose readings go into
// the centre's curve file as its wall column (curvefile.ColumnWall) and
// which starts no sample of its own.
type Cup struct {
	Centre, Wall string // channel ids
	// CentreMm and WallMm are the thermocouples' distances from the cup's
	// axis, mm: CentreMm 0 on the axis; WallMm 0 when not known (the file
	// then says nothing of it, and the Fourier figures need it).
	CentreMm, WallMm float64
}

// The device-line keys of a two-thermocouple cup (docs/line-protocol.md,
// "Device information"), about the cup on the line's channel (ch=, else
// "1"): the wall thermocouple's channel (empty: the cup has one
// thermocouple) and the two radii in mm.
const (
	InfoWallChannel  = "wall_ch"
	InfoWallRadius   = "wall_r_mm"
	InfoCentreRadius = "centre_r_mm"
)

func isCupKey(k string) bool {
	return k == InfoWallChannel || k == InfoWallRadius || k == InfoCentreRadius
}

// check refuses a cup that cannot be recorded.
func (p Cup) check() error {
	for _, id := range []string{p.Centre, p.Wall} {
		if id == "" || len(id) > 16 || strings.IndexFunc(id, func(r rune) bool { return r > 0x7f || !protocol.IsIDByte(byte(r)) }) >= 0 {
			return fmt.Errorf("channel id %q: 1–16 letters, digits, '_' or '-'", id)
		}
	}
	switch {
	case p.Centre == p.Wall:
		return fmt.Errorf("channel %s cannot be both thermocouples of its cup", p.Centre)
	case !(p.CentreMm >= 0) || !(p.WallMm >= 0) || math.IsInf(p.CentreMm, 0) || math.IsInf(p.WallMm, 0):
		return fmt.Errorf("radii %g and %g mm: a radius is a distance from the cup's axis, 0 or more", p.CentreMm, p.WallMm)
	case p.WallMm > 0 && p.WallMm <= p.CentreMm:
		return fmt.Errorf("the wall thermocouple at %g mm must be further out than the centre one at %g mm", p.WallMm, p.CentreMm)
	}
	return nil
}

// pair is the cup metadata for a curve file.
func (p Cup) pair() curvefile.Pair {
	return curvefile.Pair{WallChannel: p.Wall, CentreMm: p.CentreMm, WallMm: p.WallMm}
}

// cups is the acquirer's pairing of channels into cups: the configured
// ones (Config.Cups, which a device line does not change) and those the
// device announces.
type cups struct {
	byCentre map[string]Cup
	byWall   map[string]string // wall channel → centre channel
	fixed    map[string]bool   // centre channels set by Config.Cups
}

func newCups(cfg []Cup) (cups, error) {
	cs := cups{byCentre: map[string]Cup{}, byWall: map[string]string{}, fixed: map[string]bool{}}
	for _, p := range cfg {
		if err := p.check(); err != nil {
			return cs, fmt.Errorf("acquire: two-thermocouple cup %s+%s: %w", p.Centre, p.Wall, err)
		}
		if err := cs.set(p); err != nil {
			return cs, fmt.Errorf("acquire: two-thermocouple cup %s+%s: %w", p.Centre, p.Wall, err)
		}
		cs.fixed[p.Centre] = true
	}
	return cs, nil
}

// set pairs p.Centre with p.Wall (p.Wall "": unpairs it).
func (cs *cups) set(p Cup) error {
	if p.Wall != "" {
		if c, ok := cs.byWall[p.Wall]; ok && c != p.Centre {
			return fmt.Errorf("channel %s is the wall thermocouple of channel %s's cup already", p.Wall, c)
		}
		if q, ok := cs.byCentre[p.Wall]; ok && q.Wall != "" {
			return fmt.Errorf("channel %s is a cup's centre thermocouple", p.Wall)
		}
		if c, ok := cs.byWall[p.Centre]; ok {
			return fmt.Errorf("channel %s is the wall thermocouple of channel %s's cup", p.Centre, c)
		}
	}
	if old, ok := cs.byCentre[p.Centre]; ok && old.Wall != "" {
		delete(cs.byWall, old.Wall)
	}
	cs.byCentre[p.Centre] = p
	if p.Wall != "" {
		cs.byWall[p.Wall] = p.Centre
	}
	return nil
}

// deviceCup takes a device line's cup keys (wall_ch, wall_r_mm,
// centre_r_mm) for the cup on channel ch: they pair channels from now
// on (a sample recording keeps the pairing it started with). A cup set by
// Config.Cups keeps its pairing, and its radii where it gives the wall
// one, with a warning when the device says otherwise; a value that cannot
// be used is a warning.
func (a *Acquirer) deviceCup(ch string, l *protocol.Line) {
	if ch == "" {
		ch = "1"
	}
	p := a.cups.byCentre[ch]
	p.Centre = ch
	changed := false
	for _, kv := range l.Info {
		switch kv.Key {
		case InfoWallChannel:
			p.Wall, changed = strings.TrimSpace(kv.Value), true
		case InfoWallRadius, InfoCentreRadius:
			v, err := strconv.ParseFloat(strings.TrimSpace(kv.Value), 64)
			if err != nil {
				a.warn("cupkey:"+ch+kv.Key+kv.Value, fmt.Sprintf("the device says %s=%q for channel %s's cup: not a radius in mm; ignored", kv.Key, kv.Value, ch))
				continue
			}
			if kv.Key == InfoWallRadius {
				p.WallMm = v
			} else {
				p.CentreMm = v
			}
			changed = true
		}
	}
	if !changed {
		return
	}
	if fixed := a.cups.byCentre[ch]; a.cups.fixed[ch] {
		// the configured pairing stands; its radii too, unless it gave
		// none (WallMm 0), when the device's are taken
		radii := fixed
		radii.CentreMm, radii.WallMm = p.CentreMm, p.WallMm
		switch {
		case p.Wall != fixed.Wall:
			a.warn("cupfixed:"+ch, fmt.Sprintf("the device pairs channel %s with channel %q, --wall-channel with %s: that is kept", ch, p.Wall, fixed.Wall))
		case fixed.WallMm == 0 && radii.check() == nil:
			a.cups.byCentre[ch] = radii
		case fixed.WallMm != 0 && (radii.WallMm != fixed.WallMm || radii.CentreMm != fixed.CentreMm):
			a.warn("cupradii:"+ch, fmt.Sprintf("the device gives channel %s's cup radii %g and %g mm, the command line %g and %g mm: those are kept",
				ch, p.CentreMm, p.WallMm, fixed.CentreMm, fixed.WallMm))
		}
		return
	}
	if p.Wall == "" {
		a.cups.set(p) // the cup has one thermocouple: never an error
		return
	}
	err := p.check()
	if err == nil {
		err = a.cups.set(p)
	}
	if err != nil {
		a.warn("cup:"+ch+":"+p.Wall, fmt.Sprintf("the device's two-thermocouple cup on channel %s is not used: %v", ch, err))
	}
}

// wallCentre is the channel whose cup channel id is the wall
// thermocouple of; "" for none.
func (a *Acquirer) wallCentre(id string) string { return a.cups.byWall[id] }

// wallReading takes a reading of a wall thermocouple: kept for the start
// of its cup's next sample (a second more than the pre-trigger readings,
// so that the centre's first reading has a wall reading at or before it),
// and written into the sample of its cup that is recording.
func (a *Acquirer) wallReading(w *channel, centre string, r feed.Reading, at time.Time) error {
	w.count(r, at)
	w.buffer(r, at, a.cfg.Trigger.PreS+1)
	c := a.chans[centre]
	if c == nil || c.log == nil || c.log.wall != w.id {
		return nil
	}
	return c.log.writeWall(r, feed.FileTime(r.TimeS, c.startT))
}

// startWall gives a sample starting on channel c its wall thermocouple,
// when c's cup has one: the log takes the wall readings of the cup's wall
// channel from now on, and starts with those it kept from the last one at
// or before the file's first reading. It returns the wall channel and
// those readings, for the started item.
func (a *Acquirer) startWall(c *channel) (string, []feed.Reading, error) {
	p, ok := a.cups.byCentre[c.id]
	if !ok || p.Wall == "" {
		return "", nil, nil
	}
	c.log.wall = p.Wall
	w := a.chans[p.Wall]
	if w == nil {
		return p.Wall, nil, nil
	}
	from := 0
	for i, r := range w.pre {
		if r.TimeS <= c.startT {
			from = i
		}
	}
	pre := slices.Clone(w.pre[from:])
	for _, r := range pre {
		if err := c.log.writeWall(r, feed.FileTime(r.TimeS, c.startT)); err != nil {
			return p.Wall, pre, err
		}
	}
	return p.Wall, pre, nil
}

// cupMeta is the metadata of a cup's sample file that place its
// thermocouples (curvefile.Pair.Meta); none for a cup with one.
func (a *Acquirer) cupMeta(centre string) []curvefile.Meta {
	p, ok := a.cups.byCentre[centre]
	if !ok || p.Wall == "" {
		return nil
	}
	return p.pair().Meta()
}

// In the raw log, each reading of a cup's wall thermocouple is a comment
// line in its place, "#wall TIME TEMP" (s in the file, °C), or
// "#wall TIME - FLAGS" for a fault reading; the completed file holds them
// as its wall column instead, on the centre's times (curvefile.OnTimes),
// and counts the fault readings in its tc_wall_faults.
const wallPrefix = "#wall "

// wallRow is one reading of the wall thermocouple: its time in the file
// and °C (NaN for a fault reading).
type wallRow struct {
	time, temp float64
}

// writeWall appends a reading of the wall thermocouple at time rel.
func (l *rawLog) writeWall(r feed.Reading, rel float64) error {
	b := strconv.AppendFloat([]byte(wallPrefix), rel, 'f', -1, 64)
	temp := r.TempC
	if r.Valid() {
		b = append(b, ' ')
		b = strconv.AppendFloat(b, r.TempC, 'f', -1, 64)
	} else {
		temp = math.NaN()
		b = append(b, " - "...)
		b = append(b, (r.Flags & (feed.FlagOpen | feed.FlagFault)).String()...)
		l.wallFaults++
	}
	if _, err := l.f.Write(append(b, '\n')); err != nil {
		return fmt.Errorf("acquire: raw log %s: %w", l.partial, err)
	}
	l.walls = append(l.walls, wallRow{time: rel, temp: temp})
	return nil
}

// readWall takes a "#wall" line of an interrupted raw log back.
func (l *rawLog) readWall(line []byte) error {
	f := strings.Fields(string(line[len(wallPrefix):]))
	var t float64
	var err error
	if len(f) >= 2 {
		t, err = strconv.ParseFloat(f[0], 64)
	}
	if len(f) < 2 || err != nil {
		return fmt.Errorf("wall thermocouple line %q: not TIME TEMP", line)
	}
	if f[1] == "-" {
		l.walls = append(l.walls, wallRow{time: t, temp: math.NaN()})
		l.wallFaults++
		return nil
	}
	v, err := strconv.ParseFloat(f[1], 64)
	if err != nil {
		return fmt.Errorf("wall thermocouple line %q: not TIME TEMP", line)
	}
	l.walls = append(l.walls, wallRow{time: t, temp: v})
	return nil
}

// wallColumn is the completed file's wall column, one value a reading
// row: the wall thermocouple on the centre's times, "" where it has no
// reading. nil for a cup with one thermocouple.
func (l *rawLog) wallColumn() []string {
	if l.wall == "" {
		return nil
	}
	var t []float64
	for _, rw := range l.rows {
		if rw.fault == "" {
			t = append(t, rw.time)
		}
	}
	tw, vw := make([]float64, len(l.walls)), make([]float64, len(l.walls))
	for i, w := range l.walls {
		tw[i], vw[i] = w.time, w.temp
	}
	out := make([]string, len(t))
	for i, v := range curvefile.OnTimes(t, tw, vw) {
		if !math.IsNaN(v) {
			out[i] = strconv.FormatFloat(v, 'f', -1, 64)
		}
	}
	return out
}
