package replay

import (
	"context"
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
