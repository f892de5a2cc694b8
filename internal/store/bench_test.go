package store

import (
	"context"
	"fmt"
	"path/filepath"
	"strconv"
	"testing"
	"time"

	"github.com/undercool-foundry/undercool/internal/cpuclock"
)

// constructedSamples gives n constructed samples spread over days days
// ending at end, alloys cycling.
func constructedSamples(n, days int, end time.Time) []Sample {
	alloys := []string{"grey-iron", "ductile-iron", "al-si7mg"}
	verdicts := []string{"pass", "pass", "marginal", "fail"}
	step := time.Duration(days) * 24 * time.Hour / time.Duration(n)
	ss := make([]Sample, n)
	for i := range ss {
		a := alloys[i%len(alloys)]
		ss[i] = Sample{
			Recorded: end.Add(-time.Duration(n-i) * step),
			Sample:   fmt.Sprintf("L-%d cup 1", 2000+i), Ladle: fmt.Sprintf("L-%d", 2000+i),
			Alloy: a, Furnace: "IF-1", Operator: "Odile Flintcaster", Channel: "1", Thermocouple: "K",
			CurvePath: fmt.Sprintf("/var/lib/undercool/curves/L-%d.csv", 2000+i), CurveSHA256: fmt.Sprintf("%064x", i),
			Record: constructedRecord(a, 1140+float64(i%13), verdicts[i%len(verdicts)]), LimitsVersion: "2026-11",
		}
	}
	return ss
}

// BenchmarkAddSamples10k inserts 10,000 samples (one transaction per batch
// of 1,000) into a fresh database; target: at most 2 s per op.
func BenchmarkAddSamples10k(b *testing.B) {
	ctx := context.Background()
	ss := constructedSamples(10000, 60, time.Date(2026, 12, 1, 0, 0, 0, 0, time.UTC))
	dir := b.TempDir()
	i := 0
	cpu := time.Duration(0)
	for b.Loop() {
		b.StopTimer()
		db, err := Open(ctx, filepath.Join(dir, fmt.Sprintf("bench%d.db", i)))
		i++
		if err != nil {
			b.Fatal(err)
		}
		b.StartTimer()
		c0 := cpuclock.Used()
		for j := 0; j < len(ss); j += 1000 {
			if _, err := db.AddSamples(ctx, ss[j:j+1000]); err != nil {
				b.Fatal(err)
			}
		}
		cpu += cpuclock.Used() - c0
		b.StopTimer()
		db.Close()
		b.StartTimer()
	}
	// wall time includes the fsync of each commit (synchronous=FULL),
	// which on a shared disk says more about the neighbours
	b.ReportMetric(float64(cpu)/float64(b.N), "cpu-ns/op")
}

// BenchmarkAddSample is one sample in its own transaction, as the live
// dashboard stores them.
func BenchmarkAddSample(b *testing.B) {
	ctx := context.Background()
	db, _ := openTemp(b)
	ss := constructedSamples(1000, 1, time.Date(2026, 12, 1, 0, 0, 0, 0, time.UTC))
	i := 0
	for b.Loop() {
		if _, err := db.AddSample(ctx, ss[i%len(ss)]); err != nil {
			b.Fatal(err)
		}
		i++
	}
}

// BenchmarkHistoryMonth queries the last 30 days (150 samples a day, 4,500
// rows, latest result each) from a database holding 60 days; target: at
// most 20 ms per op.
func BenchmarkHistoryMonth(b *testing.B) {
	ctx := context.Background()
	db, _ := openTemp(b)
	end := time.Date(2026, 12, 1, 0, 0, 0, 0, time.UTC)
	if _, err := db.AddSamples(ctx, constructedSamples(9000, 60, end)); err != nil {
		b.Fatal(err)
	}
	since := end.Add(-30 * 24 * time.Hour)
	cpu := cpuclock.Used()
	for b.Loop() {
		h, err := db.History(ctx, Filter{Since: since})
		if err != nil {
			b.Fatal(err)
		}
		if len(h) != 4500 {
			b.Fatalf("%d rows, want 4500", len(h))
		}
	}
	// CPU time as well as wall time: on a shared, loaded machine the
	// wall time says more about the neighbours than about the query
	b.ReportMetric(float64(cpuclock.Used()-cpu)/float64(b.N), "cpu-ns/op")
}

// plantMonth fills a plant database with a month of twenty decks (150
// samples a deck a day, three alloys in turn: 90,000 samples), through
// the owner role, as the decks' forwarding would have.
func plantMonth(b *testing.B, db *DB, end time.Time) {
	ctx := context.Background()
	for d := range 20 {
		ss := constructedSamples(4500, 30, end)
		for i := range ss {
			ss[i].Site, ss[i].Deck = "cindermoth-north", fmt.Sprintf("deck-%d", d+1)
			ss[i].CurveSHA256 = hashUID("bench", strconv.Itoa(d), strconv.Itoa(i)) + hashUID("bench")
		}
		if _, err := db.AddSamples(ctx, ss); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkPlantHistoryMonth is history on the plant database (a local
// PostgreSQL server, Unix socket) of one alloy over the last 30 days
// across twenty decks, with 90,000 samples in the table: 30,000 rows, as
// the quality office reads it. Target: at most 50 ms per op. "loaded" is
// the table just written and analysed, "vacuumed" the same after VACUUM,
// as autovacuum leaves a table written over a month (the index-only scan
// of history needs the rows marked visible, see migration 0003); "each"
// reads the entries one by one as the history command does (HistoryEach),
// "slice" into a slice (History). The plan of the query is logged.
func BenchmarkPlantHistoryMonth(b *testing.B) {
	e := &testEngine{name: "postgres", srv: pgServer(b)}
	p := e.newPlace(b, -1)
	owner := p.open(b, "undercool_owner")
	end := time.Date(2026, 12, 1, 0, 0, 0, 0, time.UTC)
	plantMonth(b, owner, end)
	office := p.open(b, "quality_office")
	ctx := context.Background()
	f := Filter{Alloy: "grey-iron", Since: end.Add(-30 * 24 * time.Hour)}
	for _, table := range []struct{ name, sql string }{{"loaded", "ANALYZE"}, {"vacuumed", "VACUUM ANALYZE"}} {
		if _, err := owner.sql.Exec(table.sql); err != nil {
			b.Fatal(err)
		}
		var plan string
		_, from, args := office.historyFrom(f)
		if err := office.sql.QueryRow(office.q("EXPLAIN SELECT s.id, s.latest_result_id, s.summary"+from+" ORDER BY s.recorded_at DESC, s.id DESC"), args...).Scan(&plan); err != nil {
			b.Fatal(err)
		}
		b.Logf("%s: %s", table.name, plan)
		for _, read := range []string{"each", "slice"} {
			if table.name == "loaded" && read == "slice" {
				continue
			}
			b.Run(table.name+"/"+read, func(b *testing.B) {
				cpu := cpuclock.Used()
				for b.Loop() {
					n := 0
					var err error
					if read == "each" {
						err = office.HistoryEach(ctx, f, func(*Entry) error { n++; return nil })
					} else {
						var h []Entry
						h, err = office.History(ctx, f)
						n = len(h)
					}
					if err != nil {
						b.Fatal(err)
					}
					if n != 30000 {
						b.Fatalf("%d rows, want 30000", n)
					}
				}
				b.ReportMetric(float64(cpuclock.Used()-cpu)/float64(b.N), "client-cpu-ns/op")
			})
		}
	}
}

// BenchmarkForward forwards a deck's outbox of 2,000 samples to the plant
// database (a local PostgreSQL server) and reports samples a second.
func BenchmarkForward(b *testing.B) {
	e := &testEngine{name: "postgres", srv: pgServer(b)}
	ctx := context.Background()
	n := 0
	var elapsed time.Duration
	for b.Loop() {
		b.StopTimer()
		p := e.newPlace(b, -1)
		plant := p.open(b, "deck_a")
		local, err := Open(ctx, filepath.Join(b.TempDir(), "deck.db"))
		if err != nil {
			b.Fatal(err)
		}
		if _, err := local.AddSamples(ctx, constructedSamples(2000, 14, time.Date(2026, 12, 1, 0, 0, 0, 0, time.UTC))); err != nil {
			b.Fatal(err)
		}
		b.StartTimer()
		t0 := time.Now()
		sent, err := Forward(ctx, local, plant, nil)
		elapsed += time.Since(t0)
		if err != nil || sent.New != 2000 {
			b.Fatalf("%+v, %v", sent, err)
		}
		n += sent.New
		b.StopTimer()
		local.Close()
		b.StartTimer()
	}
	b.ReportMetric(float64(n)/elapsed.Seconds(), "samples/s")
}
