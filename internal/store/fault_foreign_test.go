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

// TestFaultForeignOrCorruptDatabase: --db pointed at another program's
// SQLite file, at a truncated undercool database, at one whose pages after
// the file header are overwritten, or at an empty file. The foreign and
// damaged files give a clear error naming the path and are not changed by
// the attempt (before the fix that came with this test, a foreign SQLite
// file was silently migrated: undercool's tables were added to it).
func TestFaultForeignOrCorruptDatabase(t *testing.T) {
	ctx := context.Background()
	dir := t.TempDir()

	foreign := filepath.Join(dir, "shop-ledger.db")
	other, err := sql.Open("sqlite", foreign)
	if err != nil {
		t.Fatal(err)
	}
	for _, q := range []string{"CREATE TABLE ledger(id INTEGER PRIMARY KEY, what TEXT)", "INSERT INTO ledger(what) VALUES ('coke, 2 t, for IF-1')"} {
		if _, err := other.Exec(q); err != nil {
			t.Fatal(err)
		}
	}
	other.Close()

	good := filepath.Join(dir, "good.db")
	db, err := Open(ctx, good)
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range []string{"L-2417 cup 1", "L-2417 cup 2"} {
		if _, err := db.AddSample(ctx, Sample{Sample: s, Alloy: "grey-iron", Record: constructedRecord("grey-iron", 1146, "pass")}); err != nil {
			t.Fatal(err)
		}
	}
	db.Close()
	whole, err := os.ReadFile(good)
	if err != nil {
		t.Fatal(err)
	}
	truncated := filepath.Join(dir, "truncated.db")
	os.WriteFile(truncated, whole[:len(whole)/2], 0o644)
	garbled := filepath.Join(dir, "garbled.db")
	g := bytes.Clone(whole)
	for i := 100; i < len(g); i++ { // the 100-byte SQLite header is kept
		g[i] = byte(i * 7)
	}
	os.WriteFile(garbled, g, 0o644)

	for _, tc := range []struct{ name, path, want string }{
		{"another program's SQLite file", foreign, "another program's SQLite file (tables ledger)"},
		{"truncated", truncated, "not an undercool database or is damaged"},
		{"pages overwritten", garbled, "not an undercool database or is damaged"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			before, _ := os.ReadFile(tc.path)
			db, err := Open(ctx, tc.path)
			if err == nil {
				db.Close()
				t.Fatal("opened")
			}
			if !strings.Contains(err.Error(), tc.path) || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error %q; want it to name %s and say %q", err, tc.path, tc.want)
			}
			if after, _ := os.ReadFile(tc.path); !bytes.Equal(before, after) {
				t.Errorf("%s was changed by the failed open", tc.path)
			}
		})
	}

	// An empty file (e.g. made by touch) is a new database.
	empty := filepath.Join(dir, "empty.db")
	os.WriteFile(empty, nil, 0o644)
	db, err = Open(ctx, empty)
	if err != nil {
		t.Fatalf("empty file: %v", err)
	}
	db.Close()
}
