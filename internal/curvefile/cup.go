package curvefile

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
)

// A two-thermocouple cup (docs/curve-files.md, "Two thermocouples in one
// cup"): the centre thermocouple's readings are the file's time_s and
// temp_c; the one near the wall is the column ColumnWall, on the centre's
// times (empty where it has no reading); the metadata name the wall
// thermocouple's channel and place both thermocouples.
const (
	// ColumnWall is the wall thermocouple's column, °C.
	ColumnWall = "wall_tc_c"
	// KeyWallChannel is the amplifier channel the wall thermocouple came
	// in on (the file's "channel" is the centre's).
	KeyWallChannel = "tc_wall_channel"
	// KeyCentreRadius and KeyWallRadius are the two thermocouples'
	// distances from the cup's axis, mm.
	KeyCentreRadius = "tc_centre_radius_mm"
	KeyWallRadius   = "tc_wall_radius_mm"
	// KeyWallFaults counts the wall thermocouple's fault readings.
	KeyWallFaults = "tc_wall_faults"

	// keySimWallRadius is where the simulator's files before the keys
	// above placed the wall thermocouple (their centre one is on the axis).
	keySimWallRadius = "sim_wall_tc_radius_mm"
)

// Pair is what a curve file's metadata say of its two thermocouples.
type Pair struct {
	WallChannel string  // the wall thermocouple's channel; "" when not named
	CentreMm    float64 // the centre thermocouple's radius, mm (0: on the axis, also when not given)
	WallMm      float64 // the wall thermocouple's radius, mm; 0 when not given
}

// PairOf reads a two-thermocouple cup's metadata (KeyWallChannel,
// KeyCentreRadius, KeyWallRadius; a simulator file's
// sim_wall_tc_radius_mm stands for KeyWallRadius where that is absent).
// A radius that is not a number of mm, 0 or more, is an error naming its
// key; the zero Pair is a file that says nothing of a second thermocouple.
func PairOf(meta []Meta) (Pair, error) {
	get := func(k string) (string, bool) {
		i := slices.IndexFunc(meta, func(m Meta) bool { return m.Key == k })
		if i < 0 {
			return "", false
		}
		return strings.TrimSpace(meta[i].Value), true
	}
	p := Pair{}
	p.WallChannel, _ = get(KeyWallChannel)
	radius := func(keys ...string) (float64, error) {
		for _, k := range keys {
			v, ok := get(k)
			if !ok || v == "" {
				continue
			}
			mm, err := strconv.ParseFloat(v, 64)
			if err != nil || !(mm >= 0) || math.IsInf(mm, 0) {
				return 0, fmt.Errorf("curvefile: metadata %s: %q is not a radius in mm (a number, 0 or more)", k, v)
			}
			return mm, nil
		}
		return 0, nil
	}
	var err error
	if p.CentreMm, err = radius(KeyCentreRadius); err != nil {
		return Pair{}, err
	}
	if p.WallMm, err = radius(KeyWallRadius, keySimWallRadius); err != nil {
		return Pair{}, err
	}
	return p, nil
}

// Meta is the pair as a curve file's metadata lines, in the order
// KeyWallChannel, KeyCentreRadius, KeyWallRadius; a wall radius of 0 (not
// given) and an empty channel are left out.
func (p Pair) Meta() []Meta {
	var out []Meta
	if p.WallChannel != "" {
		out = append(out, Meta{Key: KeyWallChannel, Value: p.WallChannel})
	}
	out = append(out, Meta{Key: KeyCentreRadius, Value: strconv.FormatFloat(p.CentreMm, 'f', -1, 64)})
	if p.WallMm > 0 {
		out = append(out, Meta{Key: KeyWallRadius, Value: strconv.FormatFloat(p.WallMm, 'f', -1, 64)})
	}
	return out
}

// Wall is the curve's wall thermocouple, °C, at its readings: the
// ColumnWall column read as numbers, NaN where it is empty (no reading of
// the wall thermocouple there). nil without such a column. A value that
// is not a number (nor empty) is an error naming the file, the reading
// and its time.
func (c *Curve) Wall() ([]float64, error) {
	i := slices.IndexFunc(c.Extra, func(col Column) bool { return strings.EqualFold(col.Name, ColumnWall) })
	if i < 0 {
		return nil, nil
	}
	col := c.Extra[i]
	if len(col.Values) != len(c.Time) {
		return nil, fmt.Errorf("curvefile: %s: column %s has %d values for %d readings", c.Name, ColumnWall, len(col.Values), len(c.Time))
	}
	out := make([]float64, len(col.Values))
	for k, s := range col.Values {
		s = strings.TrimSpace(s)
		if s == "" {
			out[k] = math.NaN()
			continue
		}
		v, ok := parseNum([]byte(s), false)
		if !ok {
			v, ok = parseNum([]byte(s), true) // a decimal comma, as the file's other numbers may have
		}
		if !ok || math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("curvefile: %s: column %s, reading %d (%g s): %q is not a temperature (a number, or empty where the wall thermocouple has no reading)",
				c.Name, ColumnWall, k+1, c.Time[k], s)
		}
		out[k] = v
	}
	return out, nil
}

// OnTimes puts a second channel's readings on the times of the first, as a
// two-thermocouple cup's file holds its wall thermocouple: tw and vw are
// the second channel's readings in time order (vw NaN for a fault
// reading), t the first channel's times. At a time of t where the second
// channel read, its reading; between two of its readings that follow each
// other, both valid and at most MaxWallStep(tw) apart, the straight line
// between them; anywhere else (before its first reading, after its last,
// across a fault or a silence) NaN: a gap, never a guess.
func OnTimes(t, tw, vw []float64) []float64 {
	out := make([]float64, len(t))
	step := MaxWallStep(tw)
	k := 0 // tw[k] is the last reading at or before t[i]
	for i, ti := range t {
		for k+1 < len(tw) && tw[k+1] <= ti {
			k++
		}
		switch {
		case len(tw) == 0 || ti < tw[0]:
			out[i] = math.NaN()
		case tw[k] == ti:
			out[i] = vw[k]
		case k+1 < len(tw) && tw[k+1]-tw[k] <= step:
			a, b := vw[k], vw[k+1]
			out[i] = a + (b-a)*(ti-tw[k])/(tw[k+1]-tw[k]) // NaN when either is a fault
		default:
			out[i] = math.NaN()
		}
	}
	return out
}

// MaxWallStep is the longest step between two readings of a second channel
// that OnTimes draws a line across, s: 1 s, or 2.5 times the channel's
// median step where that is longer (a slow logger). A longer step is a
// silence: the readings missed there are not made up.
func MaxWallStep(tw []float64) float64 {
	if len(tw) < 2 {
		return 1
	}
	d := make([]float64, len(tw)-1)
	for i := range d {
		d[i] = tw[i+1] - tw[i]
	}
	slices.Sort(d)
	return max(1, 2.5*d[len(d)/2])
}
