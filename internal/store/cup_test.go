package store

import (
	"context"
	"testing"
)

// The records keep which channel was which in a cup with two
// thermocouples: the wall thermocouple's channel and both radii go in with
// the sample and come back from History and Get, on both engines, and
// forwarding a deck's file to the plant database carries them; a cup with
// one thermocouple has none (radii NULL, not 0).
func TestTwoThermocoupleSample(t *testing.T) {
	forEachEngine(t, func(t *testing.T, e *testEngine) {
		ctx := context.Background()
		db := e.fresh(t)
		zero, r := 0.0, 16.2
		two := Sample{Sample: "L-2420 cup 1", Ladle: "L-2420", Alloy: "al-si7mg", Channel: "1", WallChannel: "2",
			CentreRadiusMm: &zero, WallRadiusMm: &r, Record: constructedRecord("al-si7mg", 577, "pass")}
		one := Sample{Sample: "L-2421 cup 1", Ladle: "L-2421", Alloy: "al-si7mg", Channel: "3", Record: constructedRecord("al-si7mg", 577, "pass")}
		ids, err := db.AddSamples(ctx, []Sample{two, one})
		if err != nil {
			t.Fatal(err)
		}
		check := func(where string, got Sample, want Sample) {
			t.Helper()
			if got.Channel != want.Channel || got.WallChannel != want.WallChannel ||
				(got.CentreRadiusMm == nil) != (want.CentreRadiusMm == nil) || (got.WallRadiusMm == nil) != (want.WallRadiusMm == nil) ||
				got.CentreRadiusMm != nil && *got.CentreRadiusMm != *want.CentreRadiusMm || got.WallRadiusMm != nil && *got.WallRadiusMm != *want.WallRadiusMm {
				t.Errorf("%s: channel %q wall %q radii %v %v; want %q %q %v %v", where, got.Channel, got.WallChannel,
					got.CentreRadiusMm, got.WallRadiusMm, want.Channel, want.WallChannel, want.CentreRadiusMm, want.WallRadiusMm)
			}
		}
		for i, want := range []Sample{two, one} {
			s, _, err := db.Get(ctx, ids[i])
			if err != nil {
				t.Fatal(err)
			}
			check("Get "+want.Sample, s, want)
		}
		hist, err := db.History(ctx, Filter{Full: true, Oldest: true})
		if err != nil || len(hist) != 2 {
			t.Fatalf("history: %d rows, %v", len(hist), err)
		}
		check("History", hist[0].Sample, two)
		check("History", hist[1].Sample, one)

		if e.srv != nil {
			return
		}
		t.Run("forwarded", func(t *testing.T) { // a deck's file forwarded to the plant database
			p := (&testEngine{name: "postgres", srv: pgServer(t)}).newPlace(t, -1)
			plant := p.open(t, "deck_a")
			if _, err := Forward(ctx, db, plant, nil); err != nil {
				t.Fatal(err)
			}
			hist, err := plant.History(ctx, Filter{Full: true, Oldest: true})
			if err != nil || len(hist) != 2 {
				t.Fatalf("plant history: %d rows, %v", len(hist), err)
			}
			check("forwarded", hist[0].Sample, two)
			check("forwarded", hist[1].Sample, one)
		})
	})
}
