package store

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// OpenReadOnly reads a closed database as Open does (history, one sample,
// integrity), from a directory whose name needs escaping in a URI, and
// writes nothing: the file's bytes are unchanged and no journal appears; a
// write through it fails.
func TestOpenReadOnlyReads(t *testing.T) {
	ctx := context.Background()
	dir := filepath.Join(t.TempDir(), "records 2026 (archive)")
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, "undercool.db")
	db, err := Open(ctx, path)
	if err != nil {
		t.Fatal(err)
	}
	for i := range 3 {
		if _, err := db.AddSample(ctx, Sample{Sample: fmt.Sprintf("L-2417 cup %d", i+1), Alloy: "grey-iron",
			Record: constructedRecord("grey-iron", 1146, "pass")}); err != nil {
			t.Fatal(err)
		}
	}
	if err := db.Close(); err != nil {
		t.Fatal(err)
	}
	before, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	ro, err := OpenReadOnly(ctx, path)
	if err != nil {
		t.Fatal(err)
	}
	es, err := ro.History(ctx, Filter{})
	if err != nil || len(es) != 3 || es[0].Sample.Sample == "" {
		t.Fatalf("history read-only: %d entries, %v", len(es), err)
	}
	if _, _, err := ro.Get(ctx, es[0].Sample.ID); err != nil {
		t.Fatal(err)
	}
	integrity(t, ro)
	if _, err := ro.AddSample(ctx, Sample{Sample: "L-2452 cup 1", Alloy: "grey-iron", Record: constructedRecord("grey-iron", 1146, "pass")}); err == nil || !strings.Contains(err.Error(), path) {
		t.Errorf("a write through the read-only database: %v", err)
	}
	if err := ro.Close(); err != nil {
		t.Fatal(err)
	}
	after, err := os.ReadFile(path)
	if err != nil || string(after) != string(before) {
		t.Errorf("the database file changed (%v)", err)
	}
	for _, j := range []string{"-wal", "-shm", "-journal"} {
		if _, err := os.Stat(path + j); !errors.Is(err, os.ErrNotExist) {
			t.Errorf("%s%s exists after a read-only open", path, j)
		}
	}
}

// What OpenReadOnly refuses, each with the path in the message: no file,
// an empty file, a write-ahead log with samples beside it, another
// program's database, an older schema, bad characters in the path.
func TestOpenReadOnlyRefuses(t *testing.T) {
	ctx := context.Background()
	dir := t.TempDir()
	empty := filepath.Join(dir, "empty.db")
	os.WriteFile(empty, nil, 0o644)
	foreign := filepath.Join(dir, "foreign.db")
	if fdb, err := sql.Open("sqlite", foreign); err == nil {
		fdb.Exec(`CREATE TABLE parts (id INTEGER PRIMARY KEY)`)
		fdb.Close()
	}
	old := filepath.Join(dir, "old.db")
	if odb, err := open(ctx, old, 2); err == nil {
		odb.Close()
	} else {
		t.Fatal(err)
	}
	live := filepath.Join(dir, "live.db")
	ldb, err := Open(ctx, live) // kept open: its -wal holds the schema
	if err != nil {
		t.Fatal(err)
	}
	defer ldb.Close()
	if st, err := os.Stat(live + "-wal"); err != nil || st.Size() == 0 {
		t.Skipf("no write-ahead log beside an open database here (%v)", err)
	}
	for _, c := range []struct{ path, want string }{
		{filepath.Join(dir, "none.db"), "no such file"},
		{empty, "is empty"},
		{live, "write-ahead log"},
		{foreign, "not an undercool records database"},
		{old, "schema version 2"},
		{filepath.Join(dir, "odd?.db"), "not allowed"},
	} {
		db, err := OpenReadOnly(ctx, c.path)
		if err == nil {
			db.Close()
			t.Errorf("%s opened", c.path)
			continue
		}
		if !strings.Contains(err.Error(), c.path) && !strings.Contains(err.Error(), filepath.Base(c.path)) || !strings.Contains(err.Error(), c.want) {
			t.Errorf("OpenReadOnly(%s): %v; want %q naming it", c.path, err, c.want)
		}
	}
}
