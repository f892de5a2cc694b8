package store

import (
	"bytes"
	"context"
	"database/sql"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// foreignFile makes a SQLite file with the given statements, as another
// program would, and returns its path and bytes.
func foreignFile(t *testing.T, name string, stmts ...string) (string, []byte) {
	t.Helper()
	path := filepath.Join(t.TempDir(), name)
	other, err := sql.Open("sqlite", path)
	if err != nil {
		t.Fatal(err)
	}
	defer other.Close()
	for _, q := range stmts {
		if _, err := other.Exec(q); err != nil {
			t.Fatalf("%s: %v", q, err)
		}
	}
	other.Close()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return path, b
}

// refusedUnchanged opens path, expects an error naming it and saying want,
// and checks the file's bytes are as before and no journal was left.
func refusedUnchanged(t *testing.T, path string, before []byte, want string) {
	t.Helper()
	db, err := Open(context.Background(), path)
	if err == nil {
		db.Close()
		t.Fatalf("%s was opened as an undercool database", path)
	}
	if !strings.Contains(err.Error(), path) || !strings.Contains(err.Error(), want) {
		t.Errorf("error %q; want it to name %s and say %q", err, path, want)
	}
	if after, _ := os.ReadFile(path); !bytes.Equal(before, after) {
		t.Errorf("%s was changed by the refused open", path)
	}
	for _, j := range []string{"-wal", "-journal"} {
		if st, err := os.Stat(path + j); err == nil && st.Size() > 0 {
			t.Errorf("%s%s left behind (%d bytes)", path, j, st.Size())
		}
	}
}

// TestFaultOwnershipOfSQLiteFiles: --db pointed at SQLite files that are
// not undercool's, in the ways issue 18 found them migrated: another
// program's file with a table named schema_version, a file holding only a
// view, a file with another program's application_id, and a file that is
// busy (another program holds its lock) while undercool checks it. Each is
// refused, naming the file, and its bytes are unchanged. Before the fix
// that came with this test, all four were migrated: undercool's tables
// were added and the file switched to WAL.
func TestFaultOwnershipOfSQLiteFiles(t *testing.T) {
	t.Run("a table named schema_version", func(t *testing.T) {
		path, before := foreignFile(t, "jobs.db",
			"CREATE TABLE schema_version (version INTEGER PRIMARY KEY, name TEXT NOT NULL, applied_at TEXT NOT NULL)",
			"INSERT INTO schema_version VALUES (1, 'init', '2026-11-30')",
			"CREATE TABLE jobs (id INTEGER PRIMARY KEY, what TEXT)")
		refusedUnchanged(t, path, before, "not an undercool database")
	})
	t.Run("only a view", func(t *testing.T) {
		path, before := foreignFile(t, "view.db", "CREATE VIEW today AS SELECT date('now') AS d")
		refusedUnchanged(t, path, before, "not an undercool database")
	})
	t.Run("another program's application_id", func(t *testing.T) {
		path, before := foreignFile(t, "marked.db", "PRAGMA application_id = 1196444487") // 'GPKG'
		refusedUnchanged(t, path, before, "not an undercool database")
	})
	t.Run("busy while checked", func(t *testing.T) {
		path, before := foreignFile(t, "ledger.db", "CREATE TABLE ledger (id INTEGER PRIMARY KEY, what TEXT)",
			"INSERT INTO ledger(what) VALUES ('coke, 2 t, for IF-1')")
		holder, err := sql.Open("sqlite", path)
		if err != nil {
			t.Fatal(err)
		}
		defer holder.Close()
		conn, err := holder.Conn(context.Background())
		if err != nil {
			t.Fatal(err)
		}
		defer conn.Close()
		if _, err := conn.ExecContext(context.Background(), "BEGIN EXCLUSIVE"); err != nil {
			t.Fatal(err)
		}
		release := func() { conn.ExecContext(context.Background(), "ROLLBACK") }
		// the other program lets go just after undercool's check, before
		// anything is written: the moment the check was skipped before
		saved, savedHook := busyTimeoutMS, testHookChecked
		busyTimeoutMS, testHookChecked = 300, release
		defer func() { busyTimeoutMS, testHookChecked = saved, savedHook }()
		db, err := Open(context.Background(), path)
		release()
		if err == nil {
			db.Close()
			t.Fatal("a busy foreign file was opened")
		}
		if !strings.Contains(err.Error(), path) || !strings.Contains(err.Error(), "busy") {
			t.Errorf("error %q; want it to name %s and say it is busy", err, path)
		}
		if after, _ := os.ReadFile(path); !bytes.Equal(before, after) {
			t.Errorf("%s was changed", path)
		}
		// once free, it is refused as another program's
		refusedUnchanged(t, path, before, "not an undercool database")
	})
}

// TestOwnershipMarks: a new database carries undercool's application_id;
// an empty file or a SQLite file with no objects becomes one; a database
// made by an earlier undercool (schema_version, exactly the schema of its
// migrations, no application_id) is migrated and marked; the same with an
// extra table of someone else's is refused unchanged.
func TestOwnershipMarks(t *testing.T) {
	ctx := context.Background()
	appID := func(path string) int {
		t.Helper()
		c, err := sql.Open("sqlite", path+"?_pragma=query_only(1)")
		if err != nil {
			t.Fatal(err)
		}
		defer c.Close()
		var id int
		if err := c.QueryRow("PRAGMA application_id").Scan(&id); err != nil {
			t.Fatal(err)
		}
		return id
	}
	_, fresh := openTemp(t)
	if got := appID(fresh); got != applicationID {
		t.Errorf("new database: application_id %#x, want %#x", got, applicationID)
	}
	blank, _ := foreignFile(t, "blank.db", "PRAGMA user_version = 0")
	if db, err := Open(ctx, blank); err != nil {
		t.Errorf("a SQLite file with no objects: %v", err)
	} else {
		db.Close()
	}
	for v := 0; v <= 5; v++ { // the schema versions of undercool before application_id
		path := filepath.Join(t.TempDir(), "old.db")
		old, err := openLegacy(ctx, path, v)
		if err != nil {
			t.Fatal(err)
		}
		old.Close()
		if appID(path) != 0 {
			t.Fatalf("legacy database of version %d has an application_id", v)
		}
		db, err := Open(ctx, path)
		if err != nil {
			t.Fatalf("undercool database of schema version %d: %v", v, err)
		}
		db.Close()
		if got := appID(path); got != applicationID {
			t.Errorf("version %d after migration: application_id %#x", v, got)
		}
	}
	path := filepath.Join(t.TempDir(), "old-plus.db")
	old, err := openLegacy(ctx, path, 5)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := old.sql.Exec("CREATE TABLE invoices (id INTEGER PRIMARY KEY)"); err != nil {
		t.Fatal(err)
	}
	old.Close()
	before, _ := os.ReadFile(path)
	refusedUnchanged(t, path, before, "not an undercool database")
}
