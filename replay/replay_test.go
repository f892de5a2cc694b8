package replay

import (
	"context"
	"math"
	"reflect"
	"slices"
	"testing"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/sample"
	"github.com/undercool-foundry/undercool/internal/session"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// A replay fed straight to the end runs through the same tracker as a
// live sample: one sample, every reading of the file, its metadata, and
// the record of `analyze` on the same file.
func TestReplayToEnd(t *testing.T) {
	p, err := sim.Preset(sim.GreyIron, 0.7, 5)
	if err != nil {
		t.Fatal(err)
	}
	o := sim.Simulate(p)
	c := &curvefile.Curve{Time: o.Time, Temp: o.Temp, Meta: append([]curvefile.Meta{{Key: "sample", Value: "L-2417 cup 1"}, {Key: "alloy", Value: "grey-iron"}}, o.Meta...)}
	r := New(c, "/x/L-2417.csv", "", 50)
	r.SkipToEnd()
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var done []sample.Finished
	sess := session.New(r, sample.New(sample.Config{}), session.Options{Finished: func(f sample.Finished) { done = append(done, f) }})
	go r.Run(ctx)
	go sess.Run()
	for u := range sess.Updates() {
		if len(u.Finished) > 0 {
			cancel()
		}
	}
	if len(done) != 1 {
		t.Fatalf("%d samples finished, want 1", len(done))
	}
	f := done[0]
	if len(f.T) != len(o.Time) || f.Meta.Get("sample") != "L-2417 cup 1" || f.Meta.Get("alloy") != "grey-iron" || f.Path != "/x/L-2417.csv" {
		t.Errorf("replayed %d of %d readings, meta %v, path %q", len(f.T), len(o.Time), f.Meta, f.Path)
	}
	want := assess.Assess(assess.Input{File: "/x/L-2417.csv", Alloy: "grey-iron", Time: c.Time, Temp: c.Temp, Meta: c.Meta})
	if f.Record.Verdict != want.Verdict || *f.Record.EutecticMinC != *want.EutecticMinC {
		t.Errorf("replayed record %s %v, analyze %s %v", f.Record.Verdict, *f.Record.EutecticMinC, want.Verdict, *want.EutecticMinC)
	}
}

// A two-thermocouple cup's file replays as two channels, the wall
// thermocouple on the one its file names: the tracker pairs them back, the
// wall curve is the file's column (its gaps too) and the record is that of
// `analyze` on the same file (assess.CurveInput), Fourier figures and all.
func TestReplayTwoThermocouples(t *testing.T) {
	p, err := sim.Preset(sim.AlSi7Mg, 0.6, 5)
	if err != nil {
		t.Fatal(err)
	}
	p.Cup = sim.CupRadial
	o := sim.Simulate(p) // a SIMULATED radial cup
	c := o.Curve("/x/L-2420.csv")
	c.Meta = append([]curvefile.Meta{{Key: "sample", Value: "L-2420 cup 1"}, {Key: curvefile.KeyWallChannel, Value: "3"}}, c.Meta...)
	for i := range c.Extra {
		if c.Extra[i].Name == curvefile.ColumnWall {
			c.Extra[i].Values[len(c.Time)-1] = "" // the wall's last reading missing
		}
	}
	r := New(c, "/x/L-2420.csv", "", 50)
	r.SkipToEnd()
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var done []sample.Finished
	var wallOf string
	sess := session.New(r, sample.New(sample.Config{}), session.Options{Finished: func(f sample.Finished) { done = append(done, f) }})
	go r.Run(ctx)
	go sess.Run()
	for u := range sess.Updates() {
		for _, sn := range u.Channels {
			if sn.Channel == "3" {
				wallOf = sn.WallOf
			}
		}
		if len(u.Finished) > 0 {
			cancel()
		}
	}
	if len(done) != 1 || wallOf != "1" {
		t.Fatalf("%d samples finished (want 1); channel 3 is the wall of %q", len(done), wallOf)
	}
	f := done[0]
	wall, err := c.Wall()
	if err != nil || !slices.EqualFunc(f.Wall, wall, func(a, b float64) bool { return a == b || math.IsNaN(a) && math.IsNaN(b) }) {
		t.Fatalf("the replayed wall curve is not the file's column (%v)", err)
	}
	in, notes := assess.CurveInput("/x/L-2420.csv", c)
	want := assess.Assess(in)
	if len(notes) != 0 || !reflect.DeepEqual(f.Record, want) || want.LatentHeatFourierJPerKg == nil {
		t.Errorf("replayed record (Fourier L %v, coherency %v) differs from analyze's (%v, %v); notes %q", f.Record.LatentHeatFourierJPerKg,
			f.Record.CoherencyC, want.LatentHeatFourierJPerKg, want.CoherencyC, notes)
	}
}
