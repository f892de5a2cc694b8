package acquire

import (
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/feed"
)

// wallCurve is the wall thermocouple of a CONSTRUCTED two-thermocouple cup
// beside cupCurve: the centre's readings less a gradient that grows after
// the pour (up to 8 °C), at the centre's device times shifted by shiftMS.
func wallCurve(centre []cupReading, shiftMS int) []cupReading {
	out := make([]cupReading, len(centre))
	for i, r := range centre {
		d := 0.0
		if r.temp > 300 {
			d = min(8, 0.02*float64(i%500))
		}
		out[i] = cupReading{ms: uint64(int(r.ms) + shiftMS), temp: roundTo(r.temp-d, 2)}
	}
	return out
}

// twoChannels writes the centre's and the wall's readings as one
// amplifier scanning two channels does: the centre's line, then the
// wall's, tick by tick; wallLine may replace a wall line ("" leaves it out).
func twoChannels(centre, wall []cupReading, wallLine func(i int, l string) string) string {
	var b strings.Builder
	for i := range centre {
		b.WriteString(centre[i].line("1"))
		l := wall[i].line("2")
		if wallLine != nil {
			l = wallLine(i, l)
		}
		b.WriteString(l)
	}
	return b.String()
}

// A cup with two thermocouples on channels 1 (centre) and 2 (near the
// wall): one sample, on the centre's channel; its file holds the wall
// thermocouple as its wall_tc_c column on the centre's times, exactly the
// readings sent where the two channels read at the same device time, and
// the metadata name the wall's channel and both radii. The wall channel
// starts no sample of its own although it sees the pour too.
func TestTwoThermocoupleCup(t *testing.T) {
	for _, how := range []string{"config", "device"} {
		t.Run(how, func(t *testing.T) {
			dir := t.TempDir()
			port := newPipePort()
			cfg := Config{Dir: dir}
			pre := ""
			if how == "config" {
				cfg.Cups = []Cup{{Centre: "1", Wall: "2", WallMm: 16.5}}
				cfg.Channels = []string{"1"} // the wall channel is recorded all the same
			} else {
				pre = "! ch=1 wall_ch=2 wall_r_mm=16.5 centre_r_mm=0\n"
			}
			a, col, _ := startAcq(t, port.open, cfg)
			centre := cupCurve(10, 12, 45)
			wall := wallCurve(centre, 0)
			w := port.plug()
			go w.Write([]byte(pre + twoChannels(centre, wall, nil)))
			col.until("every reading", 10*time.Second, func() bool { return len(col.readings) == 2*len(centre) })
			a.Stop("1", 0, "freezing done")
			col.until("sample done", 10*time.Second, func() bool { return col.has(feed.KindEnded, "1") != nil })
			if st := col.has(feed.KindStarted, "2"); st != nil {
				t.Fatalf("the wall channel started a sample of its own: %s", st.Text)
			}
			st := col.has(feed.KindStarted, "1")
			if st.Wall != "2" || len(st.WallPre) == 0 || st.WallPre[0].TimeS > st.StartS || st.WallPre[0].Channel != "2" {
				t.Fatalf("start item: wall %q, %d wall readings from %v s (file from %v s)", st.Wall, len(st.WallPre), st.WallPre, st.StartS)
			}
			if cs := col.last.Channels["2"]; cs.WallOf != "1" || cs.Recording || cs.Sample != 0 {
				t.Errorf("wall channel status %+v", cs)
			}
			c := readRows(t, col.has(feed.KindEnded, "1").Path)
			first := int(st.StartS*10 + 0.5)
			checkRowsMatch(t, c, centre, first)
			if c.meta[curvefile.KeyWallChannel] != "2" || c.meta[curvefile.KeyCentreRadius] != "0" || c.meta[curvefile.KeyWallRadius] != "16.5" {
				t.Errorf("metadata %v", c.meta)
			}
			if strings.Contains(c.meta["device"], "wall") {
				t.Errorf("the cup's keys went into the device line: %q", c.meta["device"])
			}
			wc := c.col(curvefile.ColumnWall)
			if wc != 2 {
				t.Fatalf("header %q: want the wall column after temp_c", c.header)
			}
			for i := range c.rows {
				if got := c.float(t, i, curvefile.ColumnWall); got != wall[first+i].temp {
					t.Fatalf("row %d: wall %v, sent %v", i, got, wall[first+i].temp)
				}
			}
		})
	}
}

// The wall column on the centre's times: a wall channel read 50 ms after
// the centre gives the straight line between its readings; a fault of the
// wall thermocouple and a silence of it leave the column empty there
// (never a guess), counted in tc_wall_faults, and the centre's sample is
// recorded in full.
func TestTwoThermocoupleGaps(t *testing.T) {
	dir := t.TempDir()
	port := newPipePort()
	a, col, _ := startAcq(t, port.open, Config{Dir: dir, Cups: []Cup{{Centre: "1", Wall: "2", CentreMm: 1, WallMm: 15}}})
	centre := cupCurve(10, 12, 45)
	wall := wallCurve(centre, 50)
	const faultAt, silentFrom, silentTo = 200, 300, 330 // reading indices
	w := port.plug()
	go w.Write([]byte(twoChannels(centre, wall, func(i int, l string) string {
		switch {
		case i == faultAt:
			return "ch=2 ms=" + strconv.Itoa(int(wall[i].ms)) + " f=open\n"
		case i >= silentFrom && i < silentTo:
			return ""
		}
		return l
	})))
	n := 2*len(centre) - (silentTo - silentFrom)
	col.until("every reading", 10*time.Second, func() bool { return len(col.readings) == n })
	a.Stop("1", 0, "freezing done")
	col.until("sample done", 10*time.Second, func() bool { return col.has(feed.KindEnded, "1") != nil })
	st := col.has(feed.KindStarted, "1")
	c := readRows(t, col.has(feed.KindEnded, "1").Path)
	first := int(st.StartS*10 + 0.5)
	checkRowsMatch(t, c, centre, first)
	if len(c.rows) != len(centre)-first {
		t.Fatalf("%d rows, %d centre readings sent from %d", len(c.rows), len(centre)-first, first)
	}
	if c.meta[curvefile.KeyWallFaults] == "" || !strings.HasPrefix(c.meta[curvefile.KeyWallFaults], "1 ") || c.meta[curvefile.KeyCentreRadius] != "1" {
		t.Errorf("metadata %v", c.meta)
	}
	wc := c.col(curvefile.ColumnWall)
	for i, row := range c.rows {
		k := first + i // the centre's reading; the wall read 50 ms after it
		var want float64
		switch {
		case k == faultAt || k == faultAt+1: // between the fault and its neighbours
			want = math.NaN()
		case k >= silentFrom && k <= silentTo: // between the wall's last reading before the silence and its first after
			want = math.NaN()
		case k == 0:
			want = math.NaN() // before the wall's first reading
		default:
			want = (wall[k-1].temp + wall[k].temp) / 2
		}
		got := math.NaN()
		if row[wc] != "" {
			got, _ = strconv.ParseFloat(row[wc], 64)
		}
		if math.IsNaN(want) != math.IsNaN(got) || !math.IsNaN(want) && math.Abs(got-want) > 1e-9 {
			t.Fatalf("row %d (centre reading %d, %v s): wall %q, want %v", i, k, row[0], row[wc], want)
		}
	}
	// The curve reader gives the column back as numbers, NaN in the gaps.
	cv, err := curvefile.ReadFile(col.has(feed.KindEnded, "1").Path)
	if err != nil {
		t.Fatal(err)
	}
	wv, err := cv.Wall()
	if err != nil || len(wv) != len(cv.Time) || !math.IsNaN(wv[faultAt-first]) || math.IsNaN(wv[faultAt-first-1]) {
		t.Fatalf("Wall(): %v, %d values", err, len(wv))
	}
	if p, err := curvefile.PairOf(cv.Meta); err != nil || p != (curvefile.Pair{WallChannel: "2", CentreMm: 1, WallMm: 15}) {
		t.Errorf("PairOf: %+v %v", p, err)
	}
}

// Channels are paired only into cups that can be recorded: a bad
// configuration is an error at the start; a device line that cannot be
// used is a warning and changes nothing; the device does not change a cup
// the configuration set; a wall channel cannot be started by hand.
func TestTwoThermocoupleSettings(t *testing.T) {
	for _, bad := range [][]Cup{
		{{Centre: "1", Wall: "1"}},
		{{Centre: "1", Wall: "2", CentreMm: 5, WallMm: 4}},
		{{Centre: "1", Wall: "2", WallMm: -1}},
		{{Centre: "1", Wall: "two words"}},
		{{Centre: "1", Wall: "2"}, {Centre: "3", Wall: "2"}},
		{{Centre: "1", Wall: "2"}, {Centre: "2", Wall: "3"}},
	} {
		a := New(newPipePort().open, Config{Dir: t.TempDir(), Cups: bad})
		if err := a.Run(t.Context()); err == nil || !strings.Contains(err.Error(), "two-thermocouple cup") {
			t.Errorf("%+v: Run %v", bad, err)
		}
	}

	port := newPipePort()
	a, col, _ := startAcq(t, port.open, Config{Dir: t.TempDir(), Cups: []Cup{{Centre: "1", Wall: "2", WallMm: 16}, {Centre: "7", Wall: "8"}}})
	w := port.plug()
	go w.Write([]byte("! ch=1 wall_ch=3 wall_r_mm=12\n! ch=1 wall_r_mm=12\n! ch=4 wall_ch=4\n! ch=5 wall_ch=6 wall_r_mm=x\n! ch=7 wall_r_mm=15.5\nch=1 c=25\nch=2 c=25\n"))
	col.until("readings", 10*time.Second, func() bool { return len(col.readings) == 2 })
	a.Start("2")
	col.until("the wall channel refused", 10*time.Second, func() bool {
		return slices.ContainsFunc(col.events, func(it feed.Item) bool { return strings.Contains(it.Text, "start channel 1") })
	})
	var warnings []string
	for _, e := range col.events {
		if e.Kind == feed.KindWarning {
			warnings = append(warnings, e.Text)
		}
	}
	all := strings.Join(warnings, "\n")
	for _, want := range []string{`with channel "3", --wall-channel with 2: that is kept`, "radii 0 and 12 mm, the command line 0 and 16 mm: those are kept",
		"channel 4 cannot be both", `wall_r_mm="x"`} {
		if !strings.Contains(all, want) {
			t.Errorf("no warning with %q:\n%s", want, all)
		}
	}
	if got := a.cups.byCentre["1"]; got.Wall != "2" || got.WallMm != 16 {
		t.Errorf("the configured cup became %+v", got)
	}
	if got := a.cups.byCentre["7"]; got.Wall != "8" || got.WallMm != 15.5 { // configured without radii: the device's
		t.Errorf("the cup configured without radii became %+v", got)
	}
	if _, ok := a.cups.byWall["4"]; ok {
		t.Error("channel 4 paired with itself")
	}
}

// An interrupted two-thermocouple sample is recovered with its wall
// column, from the "#wall" lines of its raw log.
func TestRecoverTwoThermocouples(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "20260302-063000-ch1.partial.csv")
	partial := "# channel: 1\n# tc_wall_channel: 2\n# tc_centre_radius_mm: 0\n# tc_wall_radius_mm: 16\ntime_s,temp_c,flags\n" +
		"#wall -0.05 24.5\n0,25.1,\n#wall 0.05 25.5\n0.1,640.5,\n#wall 0.15 - open\n0.2,700,\n#wall 0.25 690\n0.3,701,\n0.4,70"
	if err := os.WriteFile(p, []byte(partial), 0o644); err != nil {
		t.Fatal(err)
	}
	recs, err := recoverDir(dir, time.Now())
	if err != nil || len(recs) != 1 || recs[0].Rows != 4 {
		t.Fatalf("Recover: %+v %v", recs, err)
	}
	c := readRows(t, recs[0].Path)
	wc := c.col(curvefile.ColumnWall)
	var got []string
	for _, r := range c.rows {
		got = append(got, r[wc])
	}
	// 0: between -0.05 and 0.05; 0.1: between 0.05 and the fault; 0.2:
	// between the fault and 0.25; 0.3: after the wall's last reading.
	if want := []string{"25", "", "", ""}; !slices.Equal(got, want) || !strings.HasPrefix(c.meta[curvefile.KeyWallFaults], "1 ") {
		t.Errorf("wall column %q, want %q; metadata %v", got, want, c.meta)
	}
}
