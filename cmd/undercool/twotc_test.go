//go:build linux

package main

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/sim"
	"github.com/undercool-foundry/undercool/internal/solidpath"
)

// Two thermocouples in one cup, end to end: these tests cross every
// boundary a two-thermocouple sample passes (a pseudo-terminal, the real
// acquirer, the tracker, the curve file, the records database), through
// runMain as a user would.

// radialCup is a SIMULATED radial Al-Si7Mg cup (internal/sim) with its wall
// thermocouple, at 10 Hz.
func radialCup(t *testing.T, seed uint64) sim.Params {
	t.Helper()
	p, err := sim.Preset(sim.AlSi7Mg, 0.6, seed)
	if err != nil {
		t.Fatal(err)
	}
	p.Cup, p.Logger.RateHz, p.Logger.NoiseC = sim.CupRadial, 10, 0.05
	return p
}

// A simulated radial Al-Si cup served by the virtual melt deck as two
// channels of one amplifier (the centre on channel 1, the wall on 2, the
// wall radius on the cup's device line), recorded by `record
// --wall-channel 2` on a pseudo-terminal: one sample on channel 1, one
// curve file with the wall column and the pairing in its metadata, one
// stored sample that keeps which channel was which, and a record whose
// Fourier figures and coherency point are those `analyze` gives for the
// same file.
func TestTwoThermocoupleCupRecorded(t *testing.T) {
	m, port := acqPTY(t)
	cup := radialCup(t, 5)
	opt := sim.DeckOptions{Seed: 9, Speed: 80, RateHz: 10, Channels: []string{"1"}, Walls: map[string]string{"1": "2"}, Cup: &cup}
	ctx, cancel := context.WithCancel(context.Background())
	deckDone := make(chan error, 1)
	go func() { deckDone <- sim.NewDeck(opt).Run(ctx, m) }()
	dir := t.TempDir()
	out := filepath.Join(dir, "L-2420-cup1.csv")
	code, stdout, stderr := acqRun(t, context.Background(), "record", "--port", port, "--out", out, "--wall-channel", "2", "--alloy", sim.AlSi7Mg)
	cancel()
	m.Close() // a deck blocked on a full terminal buffer returns
	<-deckDone
	if code != 0 || strings.TrimSpace(stdout) != out {
		t.Fatalf("record: exit %d, stdout %q, stderr:\n%s", code, stdout, stderr)
	}
	if names, _ := filepath.Glob(filepath.Join(dir, "*.csv")); len(names) != 1 {
		t.Errorf("curve files %q: want the centre's one only", names)
	}
	c, err := curvefile.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	truth := sim.Simulate(cup).Truth
	wantR := strconv.FormatFloat(math.Round(truth.WallTCRadiusMm*100)/100, 'f', -1, 64)
	if c.Get("channel") != "1" || c.Get(curvefile.KeyWallChannel) != "2" || c.Get(curvefile.KeyCentreRadius) != "0" ||
		c.Get(curvefile.KeyWallRadius) != wantR || c.Get("ended") != "freezing done" {
		t.Errorf("metadata %v (want the wall radius %s from the device line)", c.Meta, wantR)
	}
	wall, err := c.Wall()
	if err != nil || len(wall) != len(c.Time) {
		t.Fatalf("wall column: %v", err)
	}
	missing := 0
	for _, v := range wall {
		if math.IsNaN(v) {
			missing++
		}
	}
	if missing > 1 { // at most the last: the stop may come between a tick's two lines
		t.Errorf("%d readings of %d without a wall reading", missing, len(wall))
	}

	stored := storedSamples(t, acqDB(t))
	if len(stored) != 1 {
		t.Fatalf("stored %d samples", len(stored))
	}
	s, rec := stored[0].Sample, stored[0].Result.Record
	if s.Channel != "1" || s.WallChannel != "2" || s.CentreRadiusMm == nil || *s.CentreRadiusMm != 0 || s.WallRadiusMm == nil ||
		strconv.FormatFloat(*s.WallRadiusMm, 'f', -1, 64) != wantR {
		t.Errorf("stored sample: channel %q, wall channel %q, radii %v %v", s.Channel, s.WallChannel, s.CentreRadiusMm, s.WallRadiusMm)
	}
	offline := analyzeJSON(t, out)
	if got, want := solidFigures(rec), solidFigures(offline); !reflect.DeepEqual(got, want) {
		t.Errorf("the stored record's solidification figures differ from analyze of its file:\nstored  %v\nanalyze %v", got, want)
	}
	if d := samePoints(rec, offline); d != "" {
		t.Errorf("stored points differ from analyze's: %s", d)
	}
	if rec.FSMethod != solidpath.MethodFourier || rec.LatentHeatFourierJPerKg == nil || rec.CoherencyC == nil {
		t.Errorf("the record of a two-thermocouple cup: fs by %q, Fourier L %v, coherency %v; warnings %q",
			rec.FSMethod, rec.LatentHeatFourierJPerKg, rec.CoherencyC, rec.Warnings)
	}
	// within the method's accuracy on the simulated cup (docs/solidification.md: ±12 %)
	if l := truth.LatentJPerKg; rec.LatentHeatFourierJPerKg != nil && math.Abs(*rec.LatentHeatFourierJPerKg-l) > 0.12*l {
		t.Errorf("Fourier latent heat %.0f J/kg, the model's %.0f", *rec.LatentHeatFourierJPerKg, l)
	}
}

// twoChannelAmp sends a cup's centre and wall readings as an amplifier
// scanning two channels, paced as fakeAmp.paced does; wallLine may change
// or drop (return "") the wall's line of reading i.
func twoChannelAmp(w *os.File, out sim.Output, stop <-chan struct{}, wallLine func(i int, line string) string) {
	var b bytes.Buffer
	ms := uint64(0)
	last, lastW := 25.0, 25.0
	for i := 0; ; i++ {
		select {
		case <-stop:
			return
		default:
		}
		c, wv := last, lastW
		switch {
		case i < 30:
			c, wv = 25, 25
		case i-30 < len(out.Temp):
			c, wv = out.Temp[i-30], out.Wall[i-30]
		default: // pulled out: cooling in air
			c, wv = 25+(last-25)*math.Exp(-1/30.0), 25+(lastW-25)*math.Exp(-1/30.0)
		}
		last, lastW = c, wv
		fmt.Fprintf(&b, "ch=1 ms=%d c=%.2f\n", ms, c)
		l := fmt.Sprintf("ch=2 ms=%d c=%.2f\n", ms, wv)
		if wallLine != nil && i >= 30 {
			l = wallLine(i-30, l)
		}
		b.WriteString(l)
		ms += 100
		if i%20 == 19 {
			w.Write(b.Bytes())
			b.Reset()
			select {
			case <-stop:
				return
			case <-time.After(10 * time.Millisecond):
			}
		}
	}
}

// A wall thermocouple that opens, or whose channel goes silent, in the
// middle of freezing does not lose the centre's sample: it is recorded,
// stored and judged as a cup with one thermocouple, the Fourier figures
// and the coherency point null with the reason in the record's warnings,
// and the record is that of `analyze` on the same file.
func TestTwoThermocoupleWallFails(t *testing.T) {
	p := radialCup(t, 7)
	out := sim.Simulate(p)
	r := strconv.FormatFloat(math.Round(out.Truth.WallTCRadiusMm*100)/100, 'f', -1, 64)
	const from = 900 // reading of the cup from which the wall thermocouple fails (90 s, while freezing)
	for _, how := range []string{"open", "silent"} {
		t.Run(how, func(t *testing.T) {
			m, port := acqPTY(t)
			stop := make(chan struct{})
			sent := make(chan struct{})
			go func() {
				defer close(sent)
				twoChannelAmp(m, out, stop, func(i int, l string) string {
					switch {
					case i < from:
						return l
					case how == "open":
						ms, _, _ := strings.Cut(strings.TrimPrefix(l, "ch=2 "), " ")
						return "ch=2 " + ms + " f=open\n"
					}
					return ""
				})
			}()
			file := filepath.Join(t.TempDir(), "wall-"+how+".csv")
			code, stdout, stderr := acqRun(t, context.Background(), "record", "--port", port, "--out", file,
				"--wall-channel", "1:2", "--wall-radius-mm", r, "--alloy", sim.AlSi7Mg)
			close(stop)
			<-sent
			if code != 0 || strings.TrimSpace(stdout) != file {
				t.Fatalf("record: exit %d, stdout %q, stderr:\n%s", code, stdout, stderr)
			}
			c, err := curvefile.ReadFile(file)
			if err != nil {
				t.Fatal(err)
			}
			if c.Get("ended") != "freezing done" || c.Get(curvefile.KeyWallRadius) != r || (how == "open") != (c.Get(curvefile.KeyWallFaults) != "") {
				t.Errorf("metadata %v", c.Meta)
			}
			stored := storedSamples(t, acqDB(t))
			if len(stored) != 1 {
				t.Fatalf("stored %d samples", len(stored))
			}
			rec := stored[0].Result.Record
			if rec.FSMethod != solidpath.MethodNewtonian || rec.LatentHeatFourierJPerKg != nil || rec.CoherencyC != nil ||
				rec.LatentHeatNewtonianJPerKg == nil || rec.Verdict == "" || rec.Verdict == assess.VerdictInvalid {
				t.Errorf("fs by %q, Fourier L %v, coherency %v, Newtonian L %v, verdict %s %q", rec.FSMethod, rec.LatentHeatFourierJPerKg,
					rec.CoherencyC, rec.LatentHeatNewtonianJPerKg, rec.Verdict, rec.Reasons)
			}
			if !strings.Contains(strings.Join(rec.Warnings, "\n"), "the wall thermocouple has no reading at") {
				t.Errorf("no reason in the warnings: %q", rec.Warnings)
			}
			offline := analyzeJSON(t, file)
			if got, want := solidFigures(rec), solidFigures(offline); !reflect.DeepEqual(got, want) || samePoints(rec, offline) != "" {
				t.Errorf("stored %v\nanalyze %v\n%s", got, want, samePoints(rec, offline))
			}
			if s := stored[0].Sample; s.WallChannel != "2" || s.WallRadiusMm == nil {
				t.Errorf("stored sample: wall channel %q, radius %v", s.WallChannel, s.WallRadiusMm)
			}
		})
	}
}
