package store

import (
	"context"
	"fmt"
	"path/filepath"
	"sync"
	"sync/atomic"
	"testing"

	"github.com/undercool-foundry/undercool/internal/pgtest"
)

// The store's tests run against both engines: a SQLite file, and a schema
// of its own in a throw-away PostgreSQL server (internal/pgtest), set up
// with the roles SQL of docs/plant-database.md and migrated by the owner
// role; the tests then work as a deck's role (deck_a), a second deck's
// (deck_b) and the quality office's (quality_office), never as a
// superuser. Without PostgreSQL binaries the PostgreSQL half is skipped
// with the reason (UNDERCOOL_PG=required makes it fail instead).

// Test roles: the documented ones plus more decks, a role the server will
// not let in and one that is no member of undercool_deck.
var testRoles = map[string]string{
	"undercool_owner": "owner-pw-31", "deck_north1": "north-pw-1", "quality_office": "office-pw-9",
	"deck_a": "deck-a-pw-2417", "deck_b": "deck-b-pw-2418", "deck_nologin": "nologin-pw-5", "stranger": "stranger-pw-7",
}

// pgSetup is the superuser's SQL for the shared server: the documented
// roles and database (docs/plant-database.md, run as written), then the
// test's own roles.
func pgSetup() []string {
	stmts, err := pgtest.SQLAfter(filepath.Join("..", "..", "docs", "plant-database.md"), "## The roles")
	if err != nil {
		return []string{"SELECT 'docs/plant-database.md: no roles SQL'::int"} // fails the setup, naming it
	}
	return append(stmts,
		"CREATE ROLE deck_a LOGIN IN ROLE undercool_deck",
		"CREATE ROLE deck_b LOGIN IN ROLE undercool_deck",
		"CREATE ROLE deck_nologin NOLOGIN IN ROLE undercool_deck",
		"CREATE ROLE stranger LOGIN",
		"GRANT CONNECT ON DATABASE undercool TO stranger",
	)
}

var (
	schemas         atomic.Int64
	pgPasswordsOnce sync.Once
	pgPasswordsErr  error
)

// pgServer is the shared throw-away server with the test roles and their
// passwords in its password file.
func pgServer(t testing.TB) *pgtest.Server {
	t.Helper()
	pgtest.SharedSetup = pgSetup()
	srv := pgtest.Shared(t)
	pgPasswordsOnce.Do(func() {
		for role, pw := range testRoles {
			if pgPasswordsErr = srv.SetPassword(context.Background(), role, pw); pgPasswordsErr != nil {
				return
			}
		}
	})
	if pgPasswordsErr != nil {
		t.Fatal(pgPasswordsErr)
	}
	return srv
}

// testEngine is one engine's way to make fresh records databases.
type testEngine struct {
	name string
	srv  *pgtest.Server // PostgreSQL only
}

// forEachEngine runs fn as a subtest for SQLite, then for PostgreSQL.
func forEachEngine(t *testing.T, fn func(t *testing.T, e *testEngine)) {
	t.Run("sqlite", func(t *testing.T) { fn(t, &testEngine{name: "sqlite"}) })
	t.Run("postgres", func(t *testing.T) { fn(t, &testEngine{name: "postgres", srv: pgServer(t)}) })
}

// place is one empty records database of an engine: a file, or a
// PostgreSQL schema created by the owner role and migrated up to upto.
type place struct {
	e      *testEngine
	path   string // SQLite
	schema string // PostgreSQL
}

// newPlace makes an empty database at schema version upto (-1: all).
func (e *testEngine) newPlace(t testing.TB, upto int) *place {
	t.Helper()
	ctx := context.Background()
	if e.srv == nil {
		p := &place{e: e, path: filepath.Join(t.TempDir(), "records", "undercool.db")}
		db, err := open(ctx, p.path, upto)
		if err != nil {
			t.Fatal(err)
		}
		db.Close()
		return p
	}
	p := &place{e: e, schema: fmt.Sprintf("t_%d", schemas.Add(1))}
	if err := e.srv.Exec(ctx, "undercool", "CREATE SCHEMA "+p.schema+" AUTHORIZATION undercool_owner"); err != nil {
		t.Fatal(err)
	}
	db, err := openPostgres(ctx, p.target("undercool_owner"), upto, false)
	if err != nil {
		t.Fatalf("migrating as the owner: %v\n%s", err, e.srv.Log())
	}
	db.Close()
	return p
}

// target is the place's connection string for role (SQLite: the path).
func (p *place) target(role string) string {
	if p.e.srv == nil {
		return p.path
	}
	return p.e.srv.URL(role, "undercool", "search_path="+p.schema)
}

// open opens the place as role (SQLite: the file), closed at the test's end.
func (p *place) open(t testing.TB, role string) *DB {
	t.Helper()
	db, err := Open(context.Background(), p.target(role))
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { db.Close() })
	return db
}

// fresh is a new, empty records database as a deck writes it: a SQLite
// file, or a PostgreSQL schema opened as the deck role deck_a.
func (e *testEngine) fresh(t testing.TB) *DB {
	t.Helper()
	return e.newPlace(t, -1).open(t, "deck_a")
}
