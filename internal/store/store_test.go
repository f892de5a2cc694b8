package store

import (
	"bufio"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"gonum.org/v1/gonum/stat"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/pgtest"
)

// TestMain doubles as the child processes of the multi-process tests: with
// UNDERCOOL_STORE_CHILD set, the test binary does that child's job and exits.
func TestMain(m *testing.M) {
	switch os.Getenv("UNDERCOOL_STORE_CHILD") {
	case "":
		code := m.Run()
		pgtest.StopShared()
		os.Exit(code)
	case "writer":
		os.Exit(childWriter())
	case "killed":
		os.Exit(childKilled())
	case "forwarder":
		os.Exit(childForwarder())
	default:
		fmt.Fprintln(os.Stderr, "unknown UNDERCOOL_STORE_CHILD")
		os.Exit(3)
	}
}

func f64(v float64) *float64 { return &v }

// constructedRecord is a record with constructed (not measured) values,
// shaped like a grey-iron result.
func constructedRecord(alloy string, eutMin float64, verdict string) assess.Record {
	return assess.Record{
		File: "constructed.csv", Alloy: alloy, Samples: 2400, RateHz: 10,
		PourPeakC: f64(1290), PourPeakS: f64(3.2),
		EutecticMinC: f64(eutMin), EutecticMinS: f64(95.5),
		EutecticMaxC: f64(eutMin + 3), EutecticMaxS: f64(120.1),
		RecalescenceC: f64(3), SolidusC: f64(1098), SolidusS: f64(180),
		Problems: []string{}, Verdict: verdict,
	}
}

func openTemp(t testing.TB) (*DB, string) {
	t.Helper()
	path := filepath.Join(t.TempDir(), "records", "undercool.db")
	db, err := Open(context.Background(), path)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { db.Close() })
	return db, path
}

func count(t testing.TB, db *DB, table string) int {
	t.Helper()
	var n int
	if err := db.sql.QueryRow("SELECT count(*) FROM " + table).Scan(&n); err != nil {
		t.Fatal(err)
	}
	return n
}

func integrity(t testing.TB, db *DB) {
	t.Helper()
	if db.pg {
		return // the server keeps its own
	}
	var s string
	if err := db.sql.QueryRow("PRAGMA integrity_check").Scan(&s); err != nil {
		t.Fatal(err)
	}
	if s != "ok" {
		t.Fatalf("integrity_check: %s", s)
	}
}

func TestOpenFreshSchema(t *testing.T) {
	db, _ := openTemp(t)
	ctx := context.Background()
	v, err := db.version(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if v != SchemaVersion() || v < 2 {
		t.Fatalf("schema version %d, want %d (at least 2)", v, SchemaVersion())
	}
	var mode string
	if err := db.sql.QueryRow("PRAGMA journal_mode").Scan(&mode); err != nil || mode != "wal" {
		t.Fatalf("journal_mode = %q, %v; want wal", mode, err)
	}
	var fk int
	if err := db.sql.QueryRow("PRAGMA foreign_keys").Scan(&fk); err != nil || fk != 1 {
		t.Fatalf("foreign_keys = %d, %v; want 1", fk, err)
	}
	// the indexes the history queries rely on
	for _, ix := range []string{"samples_recorded", "samples_alloy_recorded", "results_sample", "results_verdict", "samples_curve_sha256"} {
		var n int
		db.sql.QueryRow("SELECT count(*) FROM sqlite_master WHERE type = 'index' AND name = ?", ix).Scan(&n)
		if n != 1 {
			t.Errorf("index %s missing", ix)
		}
	}
	integrity(t, db)
}

// TestMigrateFromEveryVersion builds a database at each earlier schema
// version (with a row written the way that version's schema allows), then
// opens it with the current program.
func TestMigrateFromEveryVersion(t *testing.T) {
	ctx := context.Background()
	for from := 0; from < SchemaVersion(); from++ {
		t.Run(fmt.Sprintf("from%d", from), func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "u.db")
			old, err := open(ctx, path, from)
			if err != nil {
				t.Fatal(err)
			}
			if v, _ := old.version(ctx); v != from {
				t.Fatalf("built version %d, want %d", v, from)
			}
			if from >= 1 { // version 1 columns only
				_, err := old.sql.Exec(`INSERT INTO samples(id, created_at, recorded_at, sample, ladle, alloy)
					VALUES (7, '2026-11-30T06:00:00.000Z', '2026-11-30T06:00:00.000Z', 'L-2301 cup 1', 'L-2301', 'grey-iron')`)
				if err == nil {
					_, err = old.sql.Exec(`INSERT INTO results(sample_id, analysed_at, verdict, record, eutectic_min_c)
						VALUES (7, '2026-11-30T06:04:00.000Z', 'pass', '{"alloy":"grey-iron","verdict":"pass","eutectic_min_c":1146.5,"pour_superheat_c":141.5,"problems":[]}', 1146.5)`)
				}
				if err == nil && from >= 5 { // the column is written by the program since 0005
					_, err = old.sql.Exec(`UPDATE results SET pour_superheat_c = 141.5 WHERE sample_id = 7`)
				}
				if err == nil && from >= 4 { // as the program has done since 0004
					_, err = old.sql.Exec(`UPDATE samples SET latest_result_id = (SELECT max(id) FROM results WHERE sample_id = 7), latest_verdict = 'pass' WHERE id = 7`)
				}
				if err != nil {
					t.Fatal(err)
				}
			}
			old.Close()

			db, err := Open(ctx, path)
			if err != nil {
				t.Fatal(err)
			}
			defer db.Close()
			if v, _ := db.version(ctx); v != SchemaVersion() {
				t.Fatalf("after migration version %d, want %d", v, SchemaVersion())
			}
			var applied []int
			rows, _ := db.sql.Query("SELECT version FROM schema_version ORDER BY version")
			for rows.Next() {
				var v int
				rows.Scan(&v)
				applied = append(applied, v)
			}
			rows.Close()
			want := []int{}
			for v := 1; v <= SchemaVersion(); v++ {
				want = append(want, v)
			}
			if !slices.Equal(applied, want) {
				t.Fatalf("schema_version rows %v, want %v", applied, want)
			}
			if _, err := db.AddSample(ctx, Sample{Sample: "L-2417 cup 1", Ladle: "L-2417", Alloy: "grey-iron", Furnace: "IF-2",
				Record: constructedRecord("grey-iron", 1147, "pass")}); err != nil {
				t.Fatal(err)
			}
			h, err := db.History(ctx, Filter{Oldest: true})
			if err != nil {
				t.Fatal(err)
			}
			wantN := 1
			if from >= 1 {
				wantN = 2
				var sh float64
				db.sql.QueryRow("SELECT pour_superheat_c FROM results WHERE sample_id = 7").Scan(&sh)
				if r := h[0].Result.Record; h[0].Sample.ID != 7 || *r.EutecticMinC != 1146.5 || r.PourSuperheatC == nil ||
					*r.PourSuperheatC != 141.5 || sh != 141.5 || h[0].Sample.Furnace != "" || h[0].Sample.Ladle != "L-2301" {
					t.Fatalf("old row after migration: %+v", h[0])
				}
			}
			if len(h) != wantN || h[len(h)-1].Sample.Furnace != "IF-2" {
				t.Fatalf("history after migration: %d rows %+v", len(h), h)
			}
			integrity(t, db)
		})
	}
}

func TestNewerSchemaRefused(t *testing.T) {
	db, path := openTemp(t)
	if _, err := db.sql.Exec(`INSERT INTO schema_version VALUES (99, '0099_future.sql', '2027-01-01T00:00:00.000Z')`); err != nil {
		t.Fatal(err)
	}
	db.Close()
	_, err := Open(context.Background(), path)
	if err == nil || !strings.Contains(err.Error(), "newer") || !strings.Contains(err.Error(), path) {
		t.Fatalf("err = %v, want a 'newer schema' error naming %s", err, path)
	}
}

func TestOpenErrorsNamePath(t *testing.T) {
	dir := t.TempDir()
	notDir := filepath.Join(dir, "plain-file")
	os.WriteFile(notDir, []byte("x"), 0o644)
	garbage := filepath.Join(dir, "garbage.db")
	os.WriteFile(garbage, []byte(strings.Repeat("this is not a database file\n", 200)), 0o644)
	for _, tc := range []struct{ name, path, want string }{
		{"parent is a file", filepath.Join(notDir, "u.db"), "cannot create its directory"},
		{"not a database", garbage, "not an undercool database"},
		{"question mark", filepath.Join(dir, "a?b.db"), "not allowed"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Open(context.Background(), tc.path)
			if err == nil || !strings.Contains(err.Error(), tc.path) || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("err = %v; want it to name %s and say %q", err, tc.path, tc.want)
			}
		})
	}
	b, _ := os.ReadFile(garbage)
	if !strings.HasPrefix(string(b), "this is not a database file") {
		t.Fatal("opening a non-database changed the file")
	}
}

// TestDiskFull fills the database to a page limit (PRAGMA max_page_count,
// standing in for a full disk) and checks the failing batch is not written,
// the error says so, and what was stored before is intact.
func TestDiskFull(t *testing.T) {
	db, path := openTemp(t)
	ctx := context.Background()
	db.sql.SetMaxOpenConns(1) // the pragma is per connection
	if _, err := db.AddSample(ctx, Sample{Sample: "L-2417 cup 1", Alloy: "grey-iron", Record: constructedRecord("grey-iron", 1147, "pass")}); err != nil {
		t.Fatal(err)
	}
	var pages int
	db.sql.QueryRow("PRAGMA page_count").Scan(&pages)
	if _, err := db.sql.Exec("PRAGMA max_page_count = " + strconv.Itoa(pages+2)); err != nil {
		t.Fatal(err)
	}
	batch := make([]Sample, 200)
	for i := range batch {
		batch[i] = Sample{Sample: fmt.Sprintf("L-%d", 3000+i), Note: strings.Repeat("filler ", 100), Alloy: "grey-iron",
			Record: constructedRecord("grey-iron", 1140, "marginal")}
	}
	_, err := db.AddSamples(ctx, batch)
	if err == nil || !strings.Contains(err.Error(), "disk is full") || !strings.Contains(err.Error(), path) {
		t.Fatalf("err = %v; want a disk-full error naming %s", err, path)
	}
	if n := count(t, db, "samples"); n != 1 {
		t.Fatalf("%d samples after the failed batch, want 1", n)
	}
	integrity(t, db)
}

func TestDefaultPath(t *testing.T) {
	env := func(kv ...string) func(string) string {
		return func(k string) string {
			for i := 0; i+1 < len(kv); i += 2 {
				if kv[i] == k {
					return kv[i+1]
				}
			}
			return ""
		}
	}
	for _, tc := range []struct {
		goos string
		env  func(string) string
		want string
	}{
		{"linux", env("HOME", "/home/priya"), "/home/priya/.local/share/undercool/undercool.db"},
		{"linux", env("HOME", "/home/priya", "XDG_DATA_HOME", "/srv/data"), "/srv/data/undercool/undercool.db"},
		{"linux", env("HOME", "/home/priya", "XDG_DATA_HOME", "relative/ignored"), "/home/priya/.local/share/undercool/undercool.db"},
		{"linux", env("HOME", "/home/priya", "UNDERCOOL_DB", "/mnt/deck/records.db"), "/mnt/deck/records.db"},
		{"darwin", env("HOME", "/Users/ade"), "/Users/ade/Library/Application Support/undercool/undercool.db"},
		{"windows", env("LocalAppData", "/c/Users/tobin/AppData/Local"), filepath.Join("/c/Users/tobin/AppData/Local", "undercool", "undercool.db")},
		{"linux", env(), ""},
	} {
		got, err := defaultPath(tc.goos, tc.env)
		if tc.want == "" {
			if err == nil {
				t.Errorf("%s: no error without HOME", tc.goos)
			}
			continue
		}
		if err != nil || got != tc.want {
			t.Errorf("%s: got %q, %v; want %q", tc.goos, got, err, tc.want)
		}
	}
}

func TestAddSampleGetAndReanalysis(t *testing.T) {
	forEachEngine(t, func(t *testing.T, e *testEngine) {
		db := e.fresh(t)
		ctx := context.Background()
		poured := time.Date(2026, 12, 1, 6, 15, 0, 0, time.FixedZone("deck", 3600))
		rec := constructedRecord("grey-iron", 1139.5, "marginal")
		rec.LiquidusC = nil // not found: stays null
		rec.Problems = []string{"recording ended early"}
		in := Sample{Recorded: poured, Sample: "L-2417 cup 1", Ladle: "L-2417", Alloy: "grey-iron", Furnace: "IF-1",
			Operator: "Tobin Quenchmoor", Channel: "1", Thermocouple: "K", Note: "after 8 min in holder H3",
			CurvePath: "relative/cup.csv", CurveSHA256: "ab12", Simulated: true, Record: rec, LimitsVersion: "2026-11"}
		id, err := db.AddSample(ctx, in)
		if err != nil {
			t.Fatal(err)
		}
		got, results, err := db.Get(ctx, id)
		if err != nil {
			t.Fatal(err)
		}
		if !got.Recorded.Equal(poured) || got.Recorded.Location() != time.UTC {
			t.Errorf("recorded %v, want %v in UTC", got.Recorded, poured)
		}
		if !filepath.IsAbs(got.CurvePath) || !strings.HasSuffix(got.CurvePath, filepath.Join("relative", "cup.csv")) {
			t.Errorf("curve path %q not made absolute", got.CurvePath)
		}
		if got.Operator != in.Operator || got.Furnace != "IF-1" || !got.Simulated || got.Interrupted || got.LimitsVersion != "2026-11" {
			t.Errorf("metadata round trip: %+v", got)
		}
		if !reflect.DeepEqual(got.Record, rec) {
			t.Errorf("record round trip:\n got %+v\nwant %+v", got.Record, rec)
		}
		if len(results) != 1 || results[0].Verdict != "marginal" || !slices.Equal(results[0].Reasons, []string{"recording ended early"}) {
			t.Fatalf("results %+v", results)
		}
		var liq any
		db.sql.QueryRow(db.q("SELECT liquidus_c FROM results WHERE sample_id = ?"), id).Scan(&liq)
		if liq != nil {
			t.Errorf("liquidus_c column = %v, want NULL", liq)
		}

		// re-analysis with new limits keeps the old result
		rec2 := rec
		rec2.Verdict = "pass"
		rid, err := db.AddResult(ctx, id, rec2, "2026-12")
		if err != nil {
			t.Fatal(err)
		}
		got, results, _ = db.Get(ctx, id)
		if len(results) != 2 || results[0].Verdict != "marginal" || results[1].ID != rid || got.Record.Verdict != "pass" || got.LimitsVersion != "2026-12" {
			t.Fatalf("after re-analysis: %+v %+v", got, results)
		}
		h, _ := db.History(ctx, Filter{})
		all, _ := db.History(ctx, Filter{AllResults: true})
		if len(h) != 1 || !h[0].Sample.Recorded.Equal(poured) || h[0].Sample.Operator != in.Operator || !h[0].Sample.Simulated ||
			h[0].Result.LimitsVersion != "2026-12" || !h[0].Result.Analysed.Equal(results[1].Analysed) {
			t.Errorf("history row after re-analysis: %+v", h[0].Sample)
		}
		if len(h) != 1 || h[0].Result.Verdict != "pass" || len(all) != 2 {
			t.Fatalf("history latest %d rows (%v), all %d rows", len(h), h, len(all))
		}

		if _, err := db.AddResult(ctx, 999, rec, ""); !errors.Is(err, ErrNoSample) {
			t.Errorf("AddResult to a missing sample: %v", err)
		}
		if _, _, err := db.Get(ctx, 999); !errors.Is(err, ErrNoSample) {
			t.Errorf("Get of a missing sample: %v", err)
		}
	})
}

func TestPut(t *testing.T) {
	forEachEngine(t, func(t *testing.T, e *testEngine) {
		db := e.fresh(t)
		ctx := context.Background()
		s := Sample{Sample: "L-2417 cup 1", Alloy: "grey-iron", CurveSHA256: "aa", Record: constructedRecord("grey-iron", 1146, "pass"), LimitsVersion: "v1"}
		id1, out, err := db.Put(ctx, s)
		if err != nil || out != PutNewSample {
			t.Fatalf("first put: %v %v", out, err)
		}
		id2, out, _ := db.Put(ctx, s)
		if out != PutUnchanged || id2 != id1 {
			t.Fatalf("same analysis again: %v id %d", out, id2)
		}
		s.LimitsVersion = "v2"
		s.Record.Verdict = "marginal"
		id3, out, _ := db.Put(ctx, s)
		if out != PutNewResult || id3 != id1 {
			t.Fatalf("new limits: %v id %d", out, id3)
		}
		s.CurveSHA256 = "bb"
		id4, out, _ := db.Put(ctx, s)
		if out != PutNewSample || id4 == id1 {
			t.Fatalf("other curve: %v id %d", out, id4)
		}
		if count(t, db, "samples") != 2 || count(t, db, "results") != 3 {
			t.Fatalf("%d samples, %d results; want 2, 3", count(t, db, "samples"), count(t, db, "results"))
		}
	})
}

// TestHistoryColumnsMatchRecord checks that the Record history builds from
// the columns is the stored record, key for key.
func TestHistoryColumnsMatchRecord(t *testing.T) {
	forEachEngine(t, func(t *testing.T, e *testEngine) {
		p := e.newPlace(t, -1)
		db, owner := p.open(t, "deck_a"), p.open(t, "undercool_owner")
		ctx := context.Background()
		full := constructedRecord("ductile-iron", 1141.25, "marginal")
		full.LiquidusMinC, full.LiquidusMinS, full.LiquidusC, full.LiquidusS = f64(1178.5), f64(40.5), f64(1180.125), f64(44)
		full.PlateauS, full.CoolingRateCps, full.FreezingTimeS = f64(61.5), f64(-1.75), f64(135.25)
		full.SkippedLines, full.Despiked, full.File = 2, 1, "/deck/L-2417.csv"
		full.UndercoolingC, full.CE, full.FixedPointErrorC = f64(12.5), f64(4.31), f64(-0.25)
		full.Problems = []string{"too noisy", "recording ended early"}
		sparse := constructedRecord("al-si7mg", 570, "invalid")
		sparse.EutecticMaxC, sparse.SolidusS, sparse.RateHz = nil, nil, 0
		sparse.Alloy = "al-si7mg"
		for _, rec := range []assess.Record{full, sparse} {
			if _, err := db.AddSample(ctx, Sample{Alloy: rec.Alloy, Record: rec}); err != nil {
				t.Fatal(err)
			}
		}
		fast, _ := db.History(ctx, Filter{Oldest: true})
		slow, _ := db.History(ctx, Filter{Oldest: true, Full: true})
		// a row without a summary (as written before migration 0004) is read by a join
		if _, err := owner.sql.Exec(owner.q("UPDATE "+owner.historyTable()+" SET summary = NULL WHERE id = ?"), fast[1].Sample.ID); err != nil {
			t.Fatal(err)
		}
		joined, _ := db.History(ctx, Filter{Oldest: true})
		if !reflect.DeepEqual(joined, fast) {
			t.Errorf("row without a summary:\n got %+v\nwant %+v", joined[1], fast[1])
		}
		for i, rec := range []assess.Record{full, sparse} {
			if !reflect.DeepEqual(fast[i].Result.Record, rec) {
				t.Errorf("row %d from columns:\n got %+v\nwant %+v", i, fast[i].Result.Record, rec)
			}
			if !reflect.DeepEqual(slow[i].Result.Record, rec) {
				t.Errorf("row %d from JSON:\n got %+v\nwant %+v", i, slow[i].Result.Record, rec)
			}
		}
	})
}

// TestHistoryEach checks that HistoryEach gives History's entries, in
// History's order, for each kind of history; also when a row in the middle
// has no summary (it, and every row after it, is read once the query is
// done); and that fn's error stops it and comes back as it is, from either
// part.
func TestHistoryEach(t *testing.T) {
	forEachEngine(t, func(t *testing.T, e *testEngine) {
		p := e.newPlace(t, -1)
		db, owner := p.open(t, "deck_a"), p.open(t, "undercool_owner")
		ctx := context.Background()
		// 600 rows: the decoded rows' numbers fill several chunks of cells
		seedShift(t, db, time.Date(2026, 12, 1, 6, 0, 0, 0, time.UTC), 300, "grey-iron", "ductile-iron")
		each := func(f Filter) []Entry {
			t.Helper()
			var out []Entry
			if err := db.HistoryEach(ctx, f, func(e *Entry) error {
				out = append(out, *e)
				return nil
			}); err != nil {
				t.Fatal(err)
			}
			return out
		}
		for _, f := range []Filter{{}, {Oldest: true}, {Full: true}, {AllResults: true}, {Alloy: "ductile-iron", Limit: 7}} {
			want, err := db.History(ctx, f)
			if err != nil {
				t.Fatal(err)
			}
			if got := each(f); len(want) == 0 || !reflect.DeepEqual(got, want) {
				t.Errorf("%+v: HistoryEach's %d entries differ from History's %d", f, len(got), len(want))
			}
		}
		want, _ := db.History(ctx, Filter{})
		mid := len(want) / 2
		if _, err := owner.sql.Exec(owner.q("UPDATE "+owner.historyTable()+" SET summary = NULL WHERE id = ?"), want[mid].Sample.ID); err != nil {
			t.Fatal(err)
		}
		if got := each(Filter{}); !reflect.DeepEqual(got, want) {
			t.Errorf("with row %d without a summary: %d entries differ from History's before", mid, len(got))
		}
		enough := errors.New("enough")
		for _, stop := range []int{3, len(want) - 1} { // while the rows arrive; after the query
			n := 0
			err := db.HistoryEach(ctx, Filter{}, func(*Entry) error {
				if n++; n == stop {
					return enough
				}
				return nil
			})
			if err != enough || n != stop {
				t.Errorf("fn failing at entry %d: HistoryEach returned %v after %d entries", stop, err, n)
			}
		}
	})
}

// TestCells checks that the strings and lists handed out from shared
// chunks stay as they were when later rows fill more chunks, and that
// appending to a list does not write into the next one's cells.
func TestCells(t *testing.T) {
	var c cells
	var got, want []string
	for i := range 3 * chunkSize / 1000 { // strings of 1,000 bytes, over three chunks
		b := []byte(strings.Repeat(strconv.Itoa(i%10), 1000))
		want = append(want, string(b))
		got = append(got, c.string(b))
		b[0] = 'x' // the caller's buffer is its own
	}
	if !slices.Equal(got, want) {
		t.Error("strings changed as later ones were copied")
	}
	a, b := c.split("first\nsecond"), c.split("third")
	a = append(a, "appended")
	if !slices.Equal(b, []string{"third"}) || !slices.Equal(a, []string{"first", "second", "appended"}) {
		t.Errorf("lists %q and %q", a, b)
	}
	if none := c.split(""); none == nil || len(none) != 0 {
		t.Errorf("split of no lines = %#v, want an empty list", none)
	}
}

func TestReasons(t *testing.T) {
	rec := assess.Record{Problems: []string{"too noisy", "too noisy", "no pour found"}}
	if got := Reasons(rec); !slices.Equal(got, []string{"too noisy", "no pour found"}) {
		t.Fatalf("Reasons = %q", got)
	}
	rec.Reasons = []string{"eutectic minimum below limit", "too noisy", "consider inoculating and re-sampling"}
	want := []string{"too noisy", "no pour found", "eutectic minimum below limit", "consider inoculating and re-sampling"}
	if got := Reasons(rec); !slices.Equal(got, want) {
		t.Fatalf("Reasons = %q, want %q", got, want)
	}
}

// seedShift stores constructed samples: n per alloy, one every 10 minutes
// from start, verdicts cycling.
func seedShift(t testing.TB, db *DB, start time.Time, n int, alloys ...string) {
	t.Helper()
	var ss []Sample
	verdicts := []string{"pass", "pass", "marginal", "fail"}
	for i := range n {
		for j, a := range alloys {
			ss = append(ss, Sample{
				Recorded: start.Add(time.Duration(i) * 10 * time.Minute).Add(time.Duration(j) * time.Minute),
				Sample:   fmt.Sprintf("L-%d cup 1", 2400+i), Ladle: fmt.Sprintf("L-%d", 2400+i), Alloy: a,
				Record: constructedRecord(a, 1140+float64(i%10), verdicts[i%len(verdicts)]),
			})
		}
	}
	if _, err := db.AddSamples(context.Background(), ss); err != nil {
		t.Fatal(err)
	}
}

func TestHistoryFilters(t *testing.T) {
	forEachEngine(t, func(t *testing.T, e *testEngine) {
		db := e.fresh(t)
		ctx := context.Background()
		start := time.Date(2026, 12, 1, 6, 0, 0, 0, time.UTC)
		seedShift(t, db, start, 12, "grey-iron", "ductile-iron") // 06:00 … 07:50 (+1 min for ductile)
		for _, tc := range []struct {
			name string
			f    Filter
			want int
		}{
			{"all", Filter{}, 24},
			{"alloy", Filter{Alloy: "ductile-iron"}, 12},
			{"since", Filter{Since: start.Add(60 * time.Minute)}, 12},                                     // 07:00 on
			{"until", Filter{Until: start.Add(30 * time.Minute)}, 6},                                      // before 06:30
			{"window", Filter{Since: start.Add(30 * time.Minute), Until: start.Add(60 * time.Minute)}, 6}, // 06:30–06:59
			{"verdict", Filter{Verdict: "fail"}, 6},                                                       // i = 3, 7, 11
			{"alloy+verdict", Filter{Alloy: "grey-iron", Verdict: "pass"}, 6},
			{"ladle", Filter{Ladle: "L-2405"}, 2},
			{"limit", Filter{Limit: 5}, 5},
			{"none", Filter{Alloy: "al-si7mg"}, 0},
		} {
			t.Run(tc.name, func(t *testing.T) {
				h, err := db.History(ctx, tc.f)
				if err != nil {
					t.Fatal(err)
				}
				if len(h) != tc.want {
					t.Fatalf("%d rows, want %d", len(h), tc.want)
				}
				for i, e := range h {
					if tc.f.Alloy != "" && e.Sample.Alloy != tc.f.Alloy || tc.f.Verdict != "" && e.Result.Verdict != tc.f.Verdict ||
						!tc.f.Since.IsZero() && e.Sample.Recorded.Before(tc.f.Since) || !tc.f.Until.IsZero() && !e.Sample.Recorded.Before(tc.f.Until) {
						t.Errorf("row %d does not match the filter: %+v", i, e.Sample)
					}
					if i > 0 && e.Sample.Recorded.After(h[i-1].Sample.Recorded) {
						t.Errorf("row %d not newest first", i)
					}
				}
			})
		}
		// the verdict filter applies to the latest result: re-analysing a
		// failed sample as pass takes it out of the failures
		fails, _ := db.History(ctx, Filter{Verdict: "fail"})
		rec := fails[0].Result.Record
		rec.Verdict = "pass"
		if _, err := db.AddResult(ctx, fails[0].Sample.ID, rec, "v2"); err != nil {
			t.Fatal(err)
		}
		if h, _ := db.History(ctx, Filter{Verdict: "fail"}); len(h) != 5 {
			t.Fatalf("%d failures after re-analysis, want 5", len(h))
		}
		if h, _ := db.History(ctx, Filter{Verdict: "fail", AllResults: true}); len(h) != 6 {
			t.Fatalf("%d failed results in all results, want 6", len(h))
		}
	})
}

func TestComputeSPC(t *testing.T) {
	// worked by hand (computed): 1..5 → mean 3, s = sqrt(10/4) = 1.58114,
	// moving ranges all 1 → MR̄ = 1, σ = 1/1.128 = 0.886525, limits 3 ± 2.659574.
	s := ComputeSPC([]float64{1, 2, 3, 4, 5})
	const tol = 1e-6
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"mean", s.Mean, 3}, {"sd", s.SD, math.Sqrt(2.5)}, {"mrbar", s.MRBar, 1},
		{"sigma", s.Sigma, 0.886525}, {"ucl", s.UCL, 5.659574}, {"lcl", s.LCL, 0.340426},
	} {
		if math.Abs(c.got-c.want) > tol {
			t.Errorf("%s = %.7g, want %.7g ± %g", c.name, c.got, c.want, tol)
		}
	}
	// mean and sample SD against gonum's stat.MeanStdDev (a reference
	// library, n−1 denominator) on a fixed pseudo-random series
	vals := make([]float64, 500)
	x := uint64(12345)
	for i := range vals {
		x = x*6364136223846793005 + 1442695040888963407 // Knuth's MMIX LCG (memory)
		vals[i] = 1140 + float64(x>>40)/float64(1<<24)*12
	}
	s = ComputeSPC(vals)
	m, sd := stat.MeanStdDev(vals, nil)
	if math.Abs(s.Mean-m) > 1e-9 || math.Abs(s.SD-sd) > 1e-9 {
		t.Errorf("mean, sd = %v, %v; gonum %v, %v", s.Mean, s.SD, m, sd)
	}
	if one := ComputeSPC([]float64{1146}); one.Mean != 1146 || !math.IsNaN(one.SD) || !math.IsNaN(one.UCL) {
		t.Errorf("one value: %+v", one)
	}
	if none := ComputeSPC(nil); none.N != 0 || !math.IsNaN(none.Mean) {
		t.Errorf("no values: %+v", none)
	}
}

func TestTrend(t *testing.T) {
	forEachEngine(t, func(t *testing.T, e *testEngine) {
		db := e.fresh(t)
		ctx := context.Background()
		start := time.Date(2026, 12, 1, 6, 0, 0, 0, time.UTC)
		seedShift(t, db, start, 20, "grey-iron", "ductile-iron")
		// one grey-iron sample far out, and one with the metric not found
		out := constructedRecord("grey-iron", 1120, "fail")
		nullRec := constructedRecord("grey-iron", 0, "invalid")
		nullRec.EutecticMinC = nil
		db.AddSamples(ctx, []Sample{
			{Recorded: start.Add(205 * time.Minute), Alloy: "grey-iron", Sample: "L-2450 cup 1", Record: out},
			{Recorded: start.Add(206 * time.Minute), Alloy: "grey-iron", Sample: "L-2451 cup 1", Record: nullRec},
		})
		pts, spc, err := db.Trend(ctx, "grey-iron", "eutectic_min_c", time.Time{}, time.Time{})
		if err != nil {
			t.Fatal(err)
		}
		if len(pts) != 21 || spc.N != 21 {
			t.Fatalf("%d points (N %d), want 21 (the null one left out)", len(pts), spc.N)
		}
		vals := make([]float64, len(pts))
		for i, p := range pts {
			vals[i] = p.Value
			if i > 0 && p.Time.Before(pts[i-1].Time) {
				t.Fatal("trend not in time order")
			}
		}
		if want := ComputeSPC(vals); spc != want {
			t.Fatalf("spc %+v, want %+v", spc, want)
		}
		last := pts[len(pts)-1]
		if last.Value != 1120 || !last.Beyond || pts[0].Beyond {
			t.Errorf("beyond-limits marks: last %+v first %+v (spc %+v)", last, pts[0], spc)
		}
		win, _, _ := db.Trend(ctx, "grey-iron", "eutectic_min_c", start.Add(100*time.Minute), start.Add(150*time.Minute))
		if len(win) != 5 {
			t.Errorf("window: %d points, want 5", len(win))
		}
		if _, _, err := db.Trend(ctx, "grey-iron", "drop table", time.Time{}, time.Time{}); !errors.Is(err, ErrUnknownMetric) {
			t.Errorf("unknown metric: %v", err)
		}
		// a metric without a column of its own is read from the record JSON
		for i := range metricFields {
			if metricFields[i].key == "recalescence_c" {
				metricFields[i].column = false
				defer func() { metricFields[i].column = true }()
			}
		}
		pj, _, err := db.Trend(ctx, "grey-iron", "recalescence_c", time.Time{}, time.Time{})
		if err != nil || len(pj) != 22 || pj[0].Value != 3 {
			t.Errorf("json metric: %d points, %v", len(pj), err)
		}
	})
}

func TestMetrics(t *testing.T) {
	m := Metrics()
	for _, k := range []string{"eutectic_min_c", "recalescence_c", "liquidus_c", "solidus_c", "freezing_time_s"} {
		if !slices.Contains(m, k) {
			t.Errorf("Metrics() lacks %s: %v", k, m)
		}
	}
	want := constructedRecord("grey-iron", 1143.5, "pass")
	if v, ok := Value(&want, "eutectic_min_c"); !ok || v != 1143.5 {
		t.Errorf("Value(eutectic_min_c) = %v, %v", v, ok)
	}
	if _, ok := Value(&assess.Record{}, "eutectic_min_c"); ok {
		t.Error("Value of a null point is not false")
	}
	if slices.Contains(m, "verdict") || slices.Contains(m, "samples") {
		t.Errorf("Metrics() holds non-metric keys: %v", m)
	}
	// pointDests must follow pointColumns: set each field to its index and
	// read the JSON keys back through encoding/json
	var rec assess.Record
	for i, p := range pointDests(&rec) {
		*p = f64(float64(i))
	}
	b, _ := json.Marshal(rec)
	var keys map[string]any
	json.Unmarshal(b, &keys)
	if len(pointColumns) > 64 {
		t.Fatalf("%d point columns: the packed bitmap holds 64", len(pointColumns))
	}
	for i, col := range pointColumns {
		if keys[col] != float64(i) {
			t.Errorf("pointDests[%d] is not the field of key %s (json %s)", i, col, b)
		}
	}
}

func TestVerifyDetectsTampering(t *testing.T) {
	forEachEngine(t, func(t *testing.T, e *testEngine) {
		db := e.fresh(t)
		ctx := context.Background()
		dir := t.TempDir()
		var ids []int64
		for i, name := range []string{"kept.csv", "tampered.csv", "deleted.csv"} {
			p := filepath.Join(dir, name)
			// constructed two-line curve files
			os.WriteFile(p, []byte(fmt.Sprintf("# sample: L-24%02d cup 1\ntime_s,temp_c\n0.0,1290.%d\n", i, i)), 0o644)
			sum, err := HashFile(p)
			if err != nil {
				t.Fatal(err)
			}
			id, _ := db.AddSample(ctx, Sample{Sample: name, CurvePath: p, CurveSHA256: sum, Record: constructedRecord("grey-iron", 1146, "pass")})
			ids = append(ids, id)
		}
		noFile, _ := db.AddSample(ctx, Sample{Sample: "typed in", Record: constructedRecord("grey-iron", 1146, "pass")})
		// SHA-256 of "abc" is ba7816bf…15ad (FIPS 180-2, appendix B.1)
		abc := filepath.Join(dir, "abc")
		os.WriteFile(abc, []byte("abc"), 0o644)
		if h, _ := HashFile(abc); h != "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad" {
			t.Fatalf("HashFile(abc) = %s", h)
		}

		os.WriteFile(filepath.Join(dir, "tampered.csv"), []byte("# sample: L-2401 cup 1\ntime_s,temp_c\n0.0,1291.1\n"), 0o644)
		os.Remove(filepath.Join(dir, "deleted.csv"))
		checks, err := db.Verify(ctx)
		if err != nil {
			t.Fatal(err)
		}
		want := map[int64]CurveState{ids[0]: CurveOK, ids[1]: CurveChanged, ids[2]: CurveMissing, noFile: CurveNone}
		if len(checks) != len(want) {
			t.Fatalf("%d checks, want %d", len(checks), len(want))
		}
		for _, c := range checks {
			if c.State != want[c.SampleID] {
				t.Errorf("sample %d (%s): %v, want %v", c.SampleID, c.Sample, c.State, want[c.SampleID])
			}
		}
	})
}

// TestTwoProcessesWriting runs two child processes that each add N samples
// one transaction at a time to the same database, at the same time (two
// decks writing at once: the same file, or the plant database).
func TestTwoProcessesWriting(t *testing.T) {
	forEachEngine(t, func(t *testing.T, e *testEngine) {
		n := 150
		if testing.Short() {
			n = 40
		}
		p := e.newPlace(t, -1)
		path := p.target("deck_a")
		var cmds []*exec.Cmd
		var outs []*strings.Builder
		for _, tag := range []string{"IF-1", "IF-2"} {
			c := exec.Command(os.Args[0], "-test.run=^$")
			c.Env = append(os.Environ(), "UNDERCOOL_STORE_CHILD=writer", "UNDERCOOL_STORE_DB="+path,
				"UNDERCOOL_STORE_N="+strconv.Itoa(n), "UNDERCOOL_STORE_TAG="+tag)
			var out strings.Builder
			c.Stdout, c.Stderr = &out, &out
			if err := c.Start(); err != nil {
				t.Fatal(err)
			}
			cmds, outs = append(cmds, c), append(outs, &out)
		}
		for i, c := range cmds {
			if err := c.Wait(); err != nil {
				t.Fatalf("writer %d: %v\n%s", i, err, outs[i])
			}
		}
		db, err := Open(context.Background(), p.target("undercool_owner"))
		if err != nil {
			t.Fatal(err)
		}
		defer db.Close()
		for _, tag := range []string{"IF-1", "IF-2"} {
			var got int
			db.sql.QueryRow(db.q("SELECT count(*) FROM samples s JOIN results r ON r.sample_id = s.id WHERE s.furnace = ?"), tag).Scan(&got)
			if got != n {
				t.Errorf("writer %s: %d samples stored, want %d", tag, got, n)
			}
		}
		integrity(t, db)
	})
}

func childWriter() int {
	ctx := context.Background()
	n, _ := strconv.Atoi(os.Getenv("UNDERCOOL_STORE_N"))
	tag := os.Getenv("UNDERCOOL_STORE_TAG")
	db, err := Open(ctx, os.Getenv("UNDERCOOL_STORE_DB"))
	if err != nil {
		fmt.Println(err)
		return 1
	}
	defer db.Close()
	for i := range n {
		if _, err := db.AddSample(ctx, Sample{Sample: fmt.Sprintf("%s-%d", tag, i), Furnace: tag, Alloy: "grey-iron",
			Record: constructedRecord("grey-iron", 1146, "pass")}); err != nil {
			fmt.Println(err)
			return 1
		}
	}
	return 0
}

// TestKilledWriter kills (SIGKILL) a child in the middle of a large write
// transaction and checks the database: intact, earlier rows present, none
// of the killed transaction's rows.
func TestKilledWriter(t *testing.T) {
	path := filepath.Join(t.TempDir(), "killed.db")
	c := exec.Command(os.Args[0], "-test.run=^$")
	c.Env = append(os.Environ(), "UNDERCOOL_STORE_CHILD=killed", "UNDERCOOL_STORE_DB="+path)
	stdout, err := c.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	var stderr strings.Builder
	c.Stderr = &stderr
	if err := c.Start(); err != nil {
		t.Fatal(err)
	}
	line, err := bufio.NewReader(stdout).ReadString('\n')
	if err != nil || line != "ready\n" {
		c.Process.Kill()
		c.Wait()
		t.Fatalf("child said %q, %v\n%s", line, err, stderr.String())
	}
	time.Sleep(150 * time.Millisecond) // let it write on inside the transaction
	if err := c.Process.Kill(); err != nil {
		t.Fatal(err)
	}
	c.Wait()
	if st, err := os.Stat(path + "-wal"); err == nil {
		t.Logf("WAL left by the killed writer: %d bytes", st.Size())
	}

	db, err := Open(context.Background(), path)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	integrity(t, db)
	if s, r := count(t, db, "samples"), count(t, db, "results"); s != 5 || r != 5 {
		t.Fatalf("%d samples, %d results after the kill; want the 5 committed before it", s, r)
	}
	if _, err := db.AddSample(context.Background(), Sample{Sample: "after", Record: constructedRecord("grey-iron", 1146, "pass")}); err != nil {
		t.Fatal(err)
	}
}

func childKilled() int {
	ctx := context.Background()
	db, err := Open(ctx, os.Getenv("UNDERCOOL_STORE_DB"))
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	for i := range 5 {
		if _, err := db.AddSample(ctx, Sample{Sample: fmt.Sprintf("committed %d", i), Record: constructedRecord("grey-iron", 1146, "pass")}); err != nil {
			fmt.Fprintln(os.Stderr, err)
			return 1
		}
	}
	tx, err := db.sql.BeginTx(ctx, nil)
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	w, err := db.newWriter(ctx, tx)
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	note := strings.Repeat("never committed ", 64)
	for i := 0; ; i++ { // until killed; the rows outgrow the page cache and spill into the WAL
		s := Sample{Sample: fmt.Sprintf("doomed %d", i), Note: note, Record: constructedRecord("grey-iron", 1146, "pass")}
		now := time.Now()
		db.newSample(&s, now)
		r, js, err := db.newResult(&s, s.Record, "", now)
		if err == nil {
			_, err = w.put(ctx, &s, &r, js, true)
		}
		if err != nil {
			fmt.Fprintln(os.Stderr, err)
			return 1
		}
		if i == 500 {
			fmt.Println("ready")
		}
	}
}

func TestParseTime(t *testing.T) {
	// against time.Parse (the standard library) on a spread of times
	x := uint64(7)
	for range 2000 {
		x = x*6364136223846793005 + 1442695040888963407
		want := time.UnixMilli(int64(x>>20) % 8e12).UTC() // 1970 … 2223
		s := formatTime(want)
		got, err := parseTime(s)
		ref, _ := time.Parse(timeLayout, s)
		if err != nil || !got.Equal(want) || !got.Equal(ref) || got.Location() != time.UTC {
			t.Fatalf("parseTime(%s) = %v, %v; want %v", s, got, err, want)
		}
	}
	for _, bad := range []string{"", "2026-12-01", "2026-13-01T00:00:00.000Z", "2026-04-31T00:00:00.000Z", "2026-12-01T24:00:00.000Z", "2026-12-01T00:00:00.0a0Z"} {
		if _, err := parseTime(bad); err == nil {
			t.Errorf("parseTime(%q) accepted", bad)
		}
	}
}
