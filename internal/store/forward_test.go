package store

import (
	"bufio"
	"context"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"
)

// deckFile opens a new deck's SQLite file with its origin.
func deckFile(t testing.TB, site, deck string) *DB {
	t.Helper()
	db, err := Open(context.Background(), filepath.Join(t.TempDir(), deck+".db"))
	if err != nil {
		t.Fatal(err)
	}
	if err := db.SetOrigin(Origin{Site: site, Deck: deck}); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { db.Close() })
	return db
}

// shiftOn stores n constructed samples on a deck, every third with a
// curve hash of its own (tag makes them differ between decks), and a
// re-analysis of every fifth.
func shiftOn(t testing.TB, db *DB, tag string, n int) {
	t.Helper()
	ctx := context.Background()
	start := time.Date(2026, 12, 1, 6, 0, 0, 0, time.UTC)
	for i := range n {
		s := Sample{Recorded: start.Add(time.Duration(i) * 7 * time.Minute), Sample: fmt.Sprintf("%s L-%d cup 1", tag, 2400+i),
			Ladle: fmt.Sprintf("L-%d", 2400+i), Alloy: "grey-iron", Furnace: "IF-1", Record: constructedRecord("grey-iron", 1140+float64(i%9), "pass")}
		if i%3 == 0 {
			s.CurveSHA256 = hashUID(tag, strconv.Itoa(i)) + hashUID(tag) // constructed, 64 hex digits
		}
		id, err := db.AddSample(ctx, s)
		if err != nil {
			t.Fatal(err)
		}
		if i%5 == 0 {
			rec := s.Record
			rec.Verdict = "marginal"
			if _, err := db.AddResult(ctx, id, rec, "2026-12b"); err != nil {
				t.Fatal(err)
			}
		}
	}
}

// plantUIDs reads every sample and result uid the plant holds, through
// its owner (who sees every deck's rows).
func plantUIDs(t testing.TB, owner *DB) (samples, results []string) {
	t.Helper()
	for _, q := range []struct {
		sql string
		out *[]string
	}{{"SELECT uid FROM samples ORDER BY id", &samples}, {"SELECT uid FROM results ORDER BY id", &results}} {
		rows, err := owner.sql.Query(q.sql)
		if err != nil {
			t.Fatal(err)
		}
		for rows.Next() {
			var u string
			rows.Scan(&u)
			*q.out = append(*q.out, u)
		}
		rows.Close()
	}
	return
}

// once checks that uids holds no repeats and exactly want's members.
func once(t testing.TB, what string, uids, want []string) {
	t.Helper()
	seen := map[string]int{}
	for _, u := range uids {
		seen[u]++
		if seen[u] == 2 {
			t.Errorf("%s %s stored twice", what, u)
		}
	}
	for _, u := range want {
		if seen[u] == 0 {
			t.Errorf("%s %s missing", what, u)
		}
	}
	if len(seen) != len(want) {
		t.Errorf("%d distinct %ss, want %d", len(seen), what, len(want))
	}
}

// localUIDs reads a deck file's sample and result uids.
func localUIDs(t testing.TB, db *DB) (samples, results []string) { return plantUIDs(t, db) }

// Forwarding a deck's outbox stores every sample and result once, in
// order, with the deck's site and deck; forwarding or importing again
// adds nothing; the plant's history equals the deck's.
func TestForwardOnceInOrder(t *testing.T) {
	forEachEngine(t, func(t *testing.T, e *testEngine) {
		ctx := context.Background()
		p := e.newPlace(t, -1)
		plant, owner := p.open(t, "deck_a"), p.open(t, "undercool_owner")
		local := deckFile(t, "cindermoth-north", "deck-1")
		shiftOn(t, local, "north", 30)
		q, err := local.Queued(ctx)
		if err != nil || q.Results != 36 || q.Samples != 30 {
			t.Fatalf("queued %+v, %v; want 36 results of 30 samples", q, err)
		}
		sent, err := Forward(ctx, local, plant, nil)
		if err != nil || sent.Results != 36 || sent.New != 36 {
			t.Fatalf("forward: %+v, %v", sent, err)
		}
		if q, _ := local.Queued(ctx); q.Results != 0 {
			t.Fatalf("outbox after forwarding: %+v", q)
		}
		ls, lr := localUIDs(t, local)
		ps, pr := plantUIDs(t, owner)
		once(t, "sample", ps, ls)
		once(t, "result", pr, lr)
		if !slices.Equal(pr, lr) {
			t.Errorf("results arrived out of order:\n got %v\nwant %v", pr, lr)
		}
		// again: by hand (the outbox is empty) and as an import of the file
		if sent, err := Forward(ctx, local, plant, nil); err != nil || sent.Results != 0 {
			t.Errorf("second forward: %+v, %v", sent, err)
		}
		if sent, err := Import(ctx, local, plant, Origin{}, nil); err != nil || sent.Results != 36 || sent.New != 0 {
			t.Errorf("import of a forwarded file: %+v, %v; want 36 sent, 0 new", sent, err)
		}
		ps2, pr2 := plantUIDs(t, owner)
		if len(ps2) != len(ps) || len(pr2) != len(pr) {
			t.Errorf("plant grew on the second send: %d/%d samples, %d/%d results", len(ps2), len(ps), len(pr2), len(pr))
		}
		want, _ := local.History(ctx, Filter{Oldest: true})
		got, err := plant.History(ctx, Filter{Oldest: true, Site: "cindermoth-north", Deck: "deck-1"})
		if err != nil || len(got) != len(want) {
			t.Fatalf("plant history: %d rows, %v; want %d", len(got), err, len(want))
		}
		for i := range want {
			w, g := want[i], got[i]
			if g.Sample.Sample != w.Sample.Sample || !g.Sample.Recorded.Equal(w.Sample.Recorded) || g.Result.Verdict != w.Result.Verdict ||
				g.Result.LimitsVersion != w.Result.LimitsVersion || *g.Result.Record.EutecticMinC != *w.Result.Record.EutecticMinC ||
				g.Sample.Site != "cindermoth-north" || g.Sample.Deck != "deck-1" {
				t.Errorf("row %d: plant %+v\n deck %+v", i, g.Sample, w.Sample)
			}
		}
	})
}

// Two decks forward at once; one curve file is stored on both (the same
// cup): the plant has it once, with the results of both, and every other
// sample once.
func TestTwoDecksForwardingAtOnce(t *testing.T) {
	forEachEngine(t, func(t *testing.T, e *testEngine) {
		ctx := context.Background()
		p := e.newPlace(t, -1)
		owner := p.open(t, "undercool_owner")
		decks := []*DB{deckFile(t, "cindermoth-north", "deck-1"), deckFile(t, "cindermoth-north", "deck-2")}
		shiftOn(t, decks[0], "north-1", 40)
		shiftOn(t, decks[1], "north-2", 40)
		shared := Sample{Sample: "L-2499 cup 1", Alloy: "grey-iron", CurveSHA256: strings.Repeat("ab", 32), Record: constructedRecord("grey-iron", 1145, "pass")}
		var want []string
		for _, d := range decks {
			if _, err := d.AddSample(ctx, shared); err != nil {
				t.Fatal(err)
			}
			s, _ := localUIDs(t, d)
			want = append(want, s...)
		}
		slices.Sort(want)
		want = slices.Compact(want)
		var wg sync.WaitGroup
		errs := make([]error, 2)
		for i, role := range []string{"deck_a", "deck_b"} {
			plant := p.open(t, role)
			wg.Add(1)
			go func() {
				defer wg.Done()
				_, errs[i] = Forward(ctx, decks[i], plant, nil)
			}()
		}
		wg.Wait()
		for i, err := range errs {
			if err != nil {
				t.Fatalf("deck %d: %v", i+1, err)
			}
		}
		ps, pr := plantUIDs(t, owner)
		once(t, "sample", ps, want)
		if len(pr) != 2*(40+8)+2 {
			t.Errorf("%d results at the plant, want %d", len(pr), 2*(40+8)+2)
		}
	})
}

// waitFor waits on the forwarder's status changes until cond holds.
func waitFor(t *testing.T, f *Forwarder, what string, cond func(LinkStatus) bool) LinkStatus {
	t.Helper()
	deadline := time.After(60 * time.Second) // a bound on a hung test, not a timing
	for {
		ch := f.Changed()
		if st := f.Status(); cond(st) {
			return st
		}
		select {
		case <-ch:
		case <-deadline:
			t.Fatalf("waiting for %s: status %+v", what, f.Status())
		}
	}
}

// The plant server stops in the middle of a stream of samples and starts
// again: the deck keeps storing, says the link is down with the samples
// queued, and catches up; every sample arrives once.
func TestFaultPlantServerStoppedMidStream(t *testing.T) {
	srv := pgServer(t)
	e := &testEngine{name: "postgres", srv: srv}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	p := e.newPlace(t, -1)
	owner := p.open(t, "undercool_owner")
	local := deckFile(t, "cindermoth-north", "deck-1")
	fw := NewForwarder(local, p.target("deck_a"))
	fw.RetryMin, fw.RetryMax = 10*time.Millisecond, 50*time.Millisecond
	done := make(chan error, 1)
	go func() { done <- fw.Run(ctx) }()
	store := func(from, to int) {
		for i := from; i < to; i++ {
			if _, err := local.AddSample(ctx, Sample{Sample: fmt.Sprintf("L-%d cup 1", 3000+i), Alloy: "ductile-iron",
				Record: constructedRecord("ductile-iron", 1142, "pass")}); err != nil {
				t.Fatal(err)
			}
			fw.Kick()
		}
	}
	store(0, 40)
	waitFor(t, fw, "the first samples forwarded", func(s LinkStatus) bool { return s.Up && s.Sent >= 10 })
	if err := srv.Halt(); err != nil {
		t.Fatal(err)
	}
	store(40, 80) // the stream goes on while the server is down
	down := waitFor(t, fw, "the link down", func(s LinkStatus) bool { return !s.Up && !s.Since.IsZero() && s.Queued > 0 })
	if !strings.Contains(down.String(), "link down since") || !strings.Contains(down.String(), "queued") {
		t.Errorf("status while down: %q", down)
	}
	if err := srv.Resume(); err != nil {
		t.Fatal(err)
	}
	store(80, 100)
	waitFor(t, fw, "the catch-up", func(s LinkStatus) bool { return s.Up && s.Queued == 0 && s.Sent >= 100 })
	cancel()
	<-done
	ls, lr := localUIDs(t, local)
	ps, pr := plantUIDs(t, owner)
	once(t, "sample", ps, ls)
	once(t, "result", pr, lr)
}

// A deck killed (SIGKILL) while forwarding: the next forward sends the
// rest, and every sample and result is at the plant once.
func TestFaultDeckKilledWhileForwarding(t *testing.T) {
	forEachEngine(t, func(t *testing.T, e *testEngine) {
		ctx := context.Background()
		p := e.newPlace(t, -1)
		owner := p.open(t, "undercool_owner")
		path := filepath.Join(t.TempDir(), "deck.db")
		local, err := Open(ctx, path)
		if err != nil {
			t.Fatal(err)
		}
		ss := constructedSamples(3000, 20, time.Date(2026, 12, 1, 0, 0, 0, 0, time.UTC))
		if _, err := local.AddSamples(ctx, ss); err != nil {
			t.Fatal(err)
		}
		local.Close()
		c := exec.Command(os.Args[0], "-test.run=^$")
		c.Env = append(os.Environ(), "UNDERCOOL_STORE_CHILD=forwarder", "UNDERCOOL_STORE_DB="+path, "UNDERCOOL_STORE_PLANT="+p.target("deck_a"))
		stdout, err := c.StdoutPipe()
		if err != nil {
			t.Fatal(err)
		}
		var stderr strings.Builder
		c.Stderr = &stderr
		if err := c.Start(); err != nil {
			t.Fatal(err)
		}
		line, err := bufio.NewReader(stdout).ReadString('\n') // after its first batch
		if err != nil || !strings.HasPrefix(line, "sent ") {
			c.Process.Kill()
			c.Wait()
			t.Fatalf("child said %q, %v\n%s", line, err, stderr.String())
		}
		c.Process.Kill()
		c.Wait()
		local, err = Open(ctx, path)
		if err != nil {
			t.Fatal(err)
		}
		defer local.Close()
		q, _ := local.Queued(ctx)
		if q.Results == 0 || q.Results == 3000 {
			t.Logf("queued after the kill: %d (the kill came at a batch's edge)", q.Results)
		}
		if _, err := Forward(ctx, local, p.open(t, "deck_a"), nil); err != nil {
			t.Fatal(err)
		}
		ls, lr := localUIDs(t, local)
		ps, pr := plantUIDs(t, owner)
		once(t, "sample", ps, ls)
		once(t, "result", pr, lr)
	})
}

// childForwarder forwards UNDERCOOL_STORE_DB to UNDERCOOL_STORE_PLANT,
// saying "sent N" after each batch, until killed.
func childForwarder() int {
	ctx := context.Background()
	local, err := Open(ctx, os.Getenv("UNDERCOOL_STORE_DB"))
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	plant, err := Open(ctx, os.Getenv("UNDERCOOL_STORE_PLANT"))
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	if _, err := Forward(ctx, local, plant, func(s Sent) { fmt.Println("sent " + strconv.Itoa(s.Results)) }); err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	return 0
}
