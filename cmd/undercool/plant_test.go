package main

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/pgtest"
	"github.com/undercool-foundry/undercool/internal/store"
)

var (
	plantOnce sync.Once
	plantErr  error
)

// plantServer is the shared throw-away PostgreSQL server with the
// documented roles (docs/plant-database.md) and passwords for the owner,
// a deck and the quality office; schema is a new schema for this test.
func plantServer(t testing.TB) (srv *pgtest.Server, url func(role string) string) {
	t.Helper()
	stmts, err := pgtest.SQLAfter(filepath.Join("..", "..", "docs", "plant-database.md"), "## The roles")
	if err != nil {
		t.Fatal(err)
	}
	pgtest.SharedSetup = stmts
	srv = pgtest.Shared(t)
	plantOnce.Do(func() {
		for role, pw := range map[string]string{"undercool_owner": "owner-pw-31", "deck_north1": "north-pw-1", "quality_office": "office-pw-9"} {
			if plantErr = srv.SetPassword(context.Background(), role, pw); plantErr != nil {
				return
			}
		}
	})
	if plantErr != nil {
		t.Fatal(plantErr)
	}
	schema := fmt.Sprintf("c_%d", time.Now().UnixNano())
	if err := srv.Exec(context.Background(), "undercool", "CREATE SCHEMA "+schema+" AUTHORIZATION undercool_owner"); err != nil {
		t.Fatal(err)
	}
	return srv, func(role string) string { return srv.URL(role, "undercool", "search_path="+schema) }
}

// envRun runs undercool with the given environment variables.
func envRun(t *testing.T, env map[string]string, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	e := &environ{stdin: strings.NewReader(""), stdout: &out, stderr: &errb, getenv: func(k string) string { return env[k] }}
	code := runMain(context.Background(), e, args)
	return code, out.String(), errb.String()
}

// deckRecords stores n constructed samples in a new deck file.
func deckRecords(t *testing.T, name string, n int) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), name+".db")
	db, err := store.Open(context.Background(), path)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	for i := range n {
		eut := 1140.5 + float64(i)
		if _, err := db.AddSample(context.Background(), store.Sample{Sample: fmt.Sprintf("L-%d cup 1", 2600+i), Ladle: fmt.Sprintf("L-%d", 2600+i),
			Alloy: "grey-iron", Furnace: "IF-2", Recorded: time.Date(2026, 12, 1, 6, i, 0, 0, time.UTC),
			Record: assess.Record{Alloy: "grey-iron", EutecticMinC: &eut, Verdict: assess.VerdictPass}}); err != nil {
			t.Fatal(err)
		}
	}
	return path
}

// The plant database from the command line, as the plant's IT and a deck
// use it: migrate as the owner, sync a deck's queue (status, forward,
// again), history and export of the whole plant and of one deck as the
// quality office, and import of an older deck file, twice.
func TestPlantCommands(t *testing.T) {
	_, url := plantServer(t)
	code, out, errs := envRun(t, nil, "migrate", "--db", url("undercool_owner"))
	if code != 0 || !strings.Contains(out, fmt.Sprintf("schema version %d", store.PlantSchemaVersion())) {
		t.Fatalf("migrate: exit %d\n%s%s", code, out, errs)
	}
	deck := deckRecords(t, "north1", 4)
	env := map[string]string{"UNDERCOOL_DB": deck, "UNDERCOOL_PLANT": url("deck_north1"), "UNDERCOOL_SITE": "cindermoth-north", "UNDERCOOL_DECK": "deck-1"}
	code, out, errs = envRun(t, env, "sync", "--status")
	if code != 0 || !strings.Contains(out, "4 results of 4 samples queued") || !strings.Contains(out, "can be reached") {
		t.Fatalf("sync --status: exit %d\n%s%s", code, out, errs)
	}
	code, out, errs = envRun(t, env, "sync")
	if code != 0 || !strings.Contains(out, "forwarded 4 results") || !strings.Contains(out, "4 new there") || !strings.Contains(out, "nothing queued") {
		t.Fatalf("sync: exit %d\n%s%s", code, out, errs)
	}
	if code, out, _ = envRun(t, env, "sync"); code != 0 || !strings.Contains(out, "forwarded 0 results") {
		t.Errorf("sync again: exit %d\n%s", code, out)
	}
	old := deckRecords(t, "north2-2025", 3)
	for i, want := range []string{"3 results copied", "0 of them new"} {
		code, out, errs = envRun(t, nil, "import", old, "--db", url("deck_north1"), "--site", "cindermoth-north", "--deck", "deck-2")
		if code != 0 || !strings.Contains(out, want) {
			t.Fatalf("import %d: exit %d\n%s%s", i+1, code, out, errs)
		}
	}
	office := map[string]string{"UNDERCOOL_DB": url("quality_office")}
	code, out, errs = envRun(t, office, "history")
	if code != 0 || !strings.Contains(out, "7 samples from postgres://quality_office@") || !strings.Contains(out, "cindermoth-north/deck-2") {
		t.Fatalf("history of the plant: exit %d\n%s%s", code, out, errs)
	}
	code, out, _ = envRun(t, office, "history", "--deck", "deck-1", "--furnace", "IF-2")
	if code != 0 || !strings.Contains(out, "4 samples from") {
		t.Errorf("history of one deck: exit %d\n%s", code, out)
	}
	code, out, _ = envRun(t, office, "export", "--site", "cindermoth-north", "--deck", "deck-2")
	if code != 0 || strings.Count(out, "\r\n") != 4 || !strings.Contains(out, ",cindermoth-north,deck-2,") {
		t.Errorf("export of one deck: exit %d\n%s", code, out)
	}
	if code, _, errs = envRun(t, office, "import", old); code != 1 || !strings.Contains(errs, "may not do that") {
		t.Errorf("import as the reader: exit %d, %s", code, errs)
	}
}

// A wrong password or a password on the command line: a clear error,
// exit 1, and the secret printed nowhere; the deck's samples stay queued.
func TestFaultPlantCommandsSecrets(t *testing.T) {
	_, url := plantServer(t)
	if code, out, errs := envRun(t, nil, "migrate", "--db", url("undercool_owner")); code != 0 {
		t.Fatalf("migrate: %s%s", out, errs)
	}
	deck := deckRecords(t, "north1", 2)
	env := map[string]string{"UNDERCOOL_DB": deck, "UNDERCOOL_PLANT": url("deck_north1")}
	t.Setenv("PGPASSWORD", "wrong-pw-ladle-2417")
	code, out, errs := envRun(t, env, "sync")
	if code != 1 || !strings.Contains(errs, "refused the password") || !strings.Contains(errs, "2 results of 2 samples queued") {
		t.Errorf("sync with a wrong password: exit %d\n%s%s", code, out, errs)
	}
	if strings.Contains(out+errs, "wrong-pw-ladle-2417") || strings.Contains(out+errs, "north-pw-1") {
		t.Errorf("a password was printed:\n%s%s", out, errs)
	}
	t.Setenv("PGPASSWORD", "")
	withPW := strings.Replace(url("quality_office"), "quality_office@", "quality_office:office-pw-9@", 1)
	code, out, errs = envRun(t, nil, "history", "--db", withPW)
	if code != 1 || !strings.Contains(errs, "holds a password") || strings.Contains(out+errs, "office-pw-9") {
		t.Errorf("a password in --db: exit %d\n%s%s", code, out, errs)
	}
}

// BenchmarkPlantHistoryCommand is 'undercool history' as the quality
// office runs it, end to end: a process of its own (this test binary as
// undercool, see TestMain) that starts, connects as quality_office
// (password authentication, SCRAM), reads a month of one alloy across
// twenty decks (30,000 rows; 90,000 constructed samples in the plant
// database, vacuumed as autovacuum would have) and writes the table, or
// the JSON lines, to /dev/null. The target for the table is 50 ms a run;
// client-cpu-ns/op is the process's own user and system time.
func BenchmarkPlantHistoryCommand(b *testing.B) {
	srv, url := plantServer(b)
	ctx := context.Background()
	db, err := store.Open(ctx, url("undercool_owner"))
	if err != nil {
		b.Fatal(err)
	}
	end := time.Date(2026, 12, 1, 0, 0, 0, 0, time.UTC)
	alloys := []string{"grey-iron", "ductile-iron", "al-si7mg"}
	for d := range 20 {
		ss := constructedSamples(end.Add(-30*24*time.Hour), 30*24*time.Hour/4500, 4500, func(i int) string { return alloys[i%3] })
		for i := range ss {
			ss[i].Site, ss[i].Deck = "cindermoth-north", fmt.Sprintf("deck-%d", d+1)
		}
		if _, err := db.AddSamples(ctx, ss); err != nil {
			b.Fatal(err)
		}
	}
	db.Close()
	if err := srv.Exec(ctx, "undercool", "VACUUM ANALYZE"); err != nil {
		b.Fatal(err)
	}
	args := []string{"history", "--db", url("quality_office"), "--alloy", "grey-iron", "--since", end.Add(-30 * 24 * time.Hour).Format(time.RFC3339)}
	for _, bc := range []struct {
		name string
		args []string
		want string // in the output
	}{
		{"table", args, "30000 samples from postgres://quality_office@"},
		{"json", append(args, "--json"), `"alloy":"grey-iron"`},
	} {
		b.Run(bc.name, func(b *testing.B) {
			run := func(stdout io.Writer) *os.ProcessState {
				cmd := exec.Command(os.Args[0], bc.args...)
				cmd.Env = append(os.Environ(), "UNDERCOOL_CMD_CHILD=undercool")
				var errs bytes.Buffer
				cmd.Stdout, cmd.Stderr = stdout, &errs
				if err := cmd.Run(); err != nil {
					b.Fatalf("%v: %v\n%s", bc.args, err, errs.String())
				}
				return cmd.ProcessState
			}
			var out bytes.Buffer
			if run(&out); strings.Count(out.String(), bc.want) == 0 {
				b.Fatalf("%v: output lacks %q:\n%.300s", bc.args, bc.want, out.String())
			}
			var cpu time.Duration
			for b.Loop() {
				ps := run(nil) // to /dev/null
				cpu += ps.UserTime() + ps.SystemTime()
			}
			b.ReportMetric(float64(cpu)/float64(b.N), "client-cpu-ns/op")
		})
	}
}

// TestMain stops the throw-away PostgreSQL server after the tests. With
// UNDERCOOL_CMD_CHILD=undercool the test binary is undercool itself, its
// arguments the command line (BenchmarkPlantHistoryCommand).
func TestMain(m *testing.M) {
	if os.Getenv("UNDERCOOL_CMD_CHILD") == "undercool" {
		env := &environ{stdin: os.Stdin, stdout: os.Stdout, stderr: os.Stderr, getenv: os.Getenv}
		os.Exit(runMain(context.Background(), env, os.Args[1:]))
	}
	code := m.Run()
	pgtest.StopShared()
	os.Exit(code)
}
