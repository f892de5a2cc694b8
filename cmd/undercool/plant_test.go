package main

import (
	"bytes"
	"context"
	"fmt"
	"os"
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
func plantServer(t *testing.T) (srv *pgtest.Server, url func(role string) string) {
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

// TestMain stops the throw-away PostgreSQL server after the tests.
func TestMain(m *testing.M) {
	code := m.Run()
	pgtest.StopShared()
	os.Exit(code)
}
