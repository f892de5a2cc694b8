package store

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"io/fs"
	"net/url"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"

	"modernc.org/sqlite"
	sqlite3 "modernc.org/sqlite/lib"
)

// busyTimeoutMS is how long a statement waits for another writer's lock
// before it gives up with "database is locked" (a variable for the tests).
var busyTimeoutMS = 15000

// testHookChecked, when set (by tests), runs after the ownership check of
// an existing file and before anything is written to it.
var testHookChecked func()

// open opens (creating it and its directory where needed) the SQLite
// database at path and brings its schema up to version upto (-1: all;
// tests build databases of every earlier version). Errors name the path;
// a directory that cannot be written, or a file that cannot, gives a clear
// error before anything is written, and so does a file that is not
// undercool's (checkOurs).
func open(ctx context.Context, path string, upto int) (*DB, error) {
	if err := checkPath(path, "?#"); err != nil {
		return nil, err
	}
	if err := checkWritable(path); err != nil {
		return nil, err
	}
	if err := checkOurs(ctx, path); err != nil {
		return nil, err
	}
	if testHookChecked != nil {
		testHookChecked()
	}
	dsn := path + "?_pragma=busy_timeout(" + strconv.Itoa(busyTimeoutMS) + ")" +
		"&_pragma=foreign_keys(1)&_pragma=journal_mode(WAL)&_pragma=synchronous(FULL)&_pragma=cache_size(-32768)&_pragma=mmap_size(268435456)&_txlock=immediate"
	sdb, err := sql.Open("sqlite", dsn)
	if err != nil {
		return nil, fmt.Errorf("store: opening database %s: %w", path, err)
	}
	db := &DB{sql: sdb, path: path}
	if err := db.ping(ctx); err != nil {
		sdb.Close()
		return nil, db.fail("opening", err)
	}
	if err := db.migrate(ctx, upto); err != nil {
		sdb.Close()
		return nil, err
	}
	if upto < 0 {
		if err := db.fillUIDs(ctx); err != nil {
			sdb.Close()
			return nil, err
		}
		if err := db.fillSummaries(ctx); err != nil {
			sdb.Close()
			return nil, err
		}
	}
	return db, nil
}

// ErrNotWritable marks an Open that failed because the database or its
// directory cannot be written (read-only media, permissions); such a
// database may still be read with OpenReadOnly.
var ErrNotWritable = errors.New("cannot be written")

// openReadOnlyFile opens an existing database for reading only, for where Open
// cannot write (an archive on read-only media or a read-only share): to
// look through the records, export or verify them. It reads through
// SQLite's immutable mode, which takes no locks and reads no journal, so a
// database with a write-ahead log beside it that is not empty (its last
// samples may be there, not yet in the file) is refused, and so is one
// whose schema is older or newer than this undercool's (it cannot be
// brought up to date). Errors name the path; nothing is ever written.
func openReadOnlyFile(ctx context.Context, path string) (*DB, error) {
	if err := checkPath(path, "?#%"); err != nil { // '%' too: the path goes into a URI
		return nil, err
	}
	st, err := os.Stat(path)
	switch {
	case err != nil:
		return nil, fmt.Errorf("store: database %s: %w", path, err)
	case st.Size() == 0:
		return nil, fmt.Errorf("store: database %s is empty: there are no records to read", path)
	}
	if wal, err := os.Stat(path + "-wal"); err == nil && wal.Size() > 0 {
		return nil, fmt.Errorf("store: database %s has a write-ahead log beside it (%s) that holds samples not yet in the file, and neither can be written: copy both to a writable place and open the copy", path, path+"-wal")
	}
	// a URI (SQLite's form: file:///C:/dir/x.db for a Windows drive)
	u := url.URL{Scheme: "file", Path: filepath.ToSlash(path), RawQuery: "mode=ro&immutable=1"}
	switch {
	case filepath.VolumeName(path) != "":
		u.Path = "/" + u.Path
	case !filepath.IsAbs(path):
		u = url.URL{Scheme: "file", Opaque: filepath.ToSlash(path), RawQuery: "mode=ro&immutable=1"}
	}
	sdb, err := sql.Open("sqlite", u.String()+"&_pragma=query_only(1)")
	if err != nil {
		return nil, fmt.Errorf("store: opening database %s: %w", path, err)
	}
	db := &DB{sql: sdb, path: path}
	if err := checkOursRO(ctx, db); err != nil {
		sdb.Close()
		return nil, err
	}
	return db, nil
}

// checkOursRO checks, for OpenReadOnly, that the database is ours (by its
// application_id; an earlier undercool's database without one is of an
// older schema, which cannot be read here) and of this undercool's schema
// version.
func checkOursRO(ctx context.Context, db *DB) error {
	var id, n int
	if err := db.sql.QueryRowContext(ctx, "PRAGMA application_id").Scan(&id); err != nil {
		return db.fail("opening", err)
	}
	if err := db.sql.QueryRowContext(ctx, `SELECT count(*) FROM sqlite_master WHERE type = 'table' AND name = 'schema_version'`).Scan(&n); err != nil {
		return db.fail("opening", err)
	}
	if n == 0 || id != applicationID && id != 0 {
		return fmt.Errorf("store: %s is not an undercool records database; nothing was read", db.path)
	}
	ms, err := migrations()
	if err != nil {
		return err
	}
	have, err := db.version(ctx)
	switch {
	case err != nil:
		return err
	case have > len(ms):
		return db.newerSchema(have, len(ms))
	case have < len(ms) || id != applicationID:
		return fmt.Errorf("store: database %s has schema version %d and this undercool reads %d; it cannot be brought up to date where it is read-only: copy it to a writable place and open the copy", db.path, have, len(ms))
	}
	return nil
}

// ping opens the first connection. Switching a new file to WAL needs a
// moment alone with it, and SQLite answers SQLITE_BUSY at once (without
// waiting the busy timeout) when another process is doing the same, so
// that is retried for as long as the busy timeout.
func (db *DB) ping(ctx context.Context) error {
	deadline := time.Now().Add(time.Duration(busyTimeoutMS) * time.Millisecond)
	for {
		err := db.sql.PingContext(ctx)
		var se *sqlite.Error
		if err == nil || !errors.As(err, &se) || se.Code()&0xff != sqlite3.SQLITE_BUSY || time.Now().After(deadline) {
			return err
		}
		select {
		case <-ctx.Done():
			return ctx.Err()
		case <-time.After(20 * time.Millisecond):
		}
	}
}

// checkWritable makes the database's directory and checks that the
// directory and an existing database file can be written, so a read-only
// place fails here with a clear error rather than on the first sample.
func checkWritable(path string) error {
	dir := filepath.Dir(path)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("store: database %s: cannot create its directory (it %w; choose another place with --db or UNDERCOOL_DB): %w", path, ErrNotWritable, err)
	}
	probe, err := os.CreateTemp(dir, ".undercool-probe-*")
	if err != nil {
		return fmt.Errorf("store: database %s: its directory %s %w (SQLite needs it for the journal; choose another place with --db or UNDERCOOL_DB): %w", path, dir, ErrNotWritable, err)
	}
	probe.Close()
	os.Remove(probe.Name())
	f, err := os.OpenFile(path, os.O_RDWR, 0)
	switch {
	case err == nil:
		f.Close()
	case errors.Is(err, fs.ErrNotExist):
	default:
		return fmt.Errorf("store: database %s %w: %w", path, ErrNotWritable, err)
	}
	return nil
}

// applicationID marks a SQLite file as an undercool records database: the
// 32-bit application_id of the SQLite file header (offset 68), set by
// PRAGMA application_id. It is ASCII "UCRD" (undercool records),
// 0x55435244 = 1430475332. Databases made by undercool before it was set
// have none (0); see checkOurs for how they are recognised.
const applicationID = 0x55435244

// schemaVersionDDL creates the table that counts the migrations applied.
const schemaVersionDDL = `CREATE TABLE IF NOT EXISTS schema_version (
		version INTEGER PRIMARY KEY, name TEXT NOT NULL, applied_at TEXT NOT NULL)`

// checkOurs refuses an existing SQLite file that is not undercool's
// before anything is written to it, so that migrating never changes
// another program's database. A file is undercool's when
//   - its application_id is applicationID, or
//   - it is empty: a zero-length file, or a SQLite file holding no tables,
//     views, indexes or triggers and no application_id, or
//   - it was made by an undercool from before the application_id (schema
//     versions 0 to 5): no application_id, a schema_version table whose rows
//     are exactly migrations 1…v of this program, by number and file name,
//     and a schema that is exactly what those migrations build (every
//     table, index, view and trigger, compared by its SQL text with
//     whitespace runs made one space). Anything more or less is someone
//     else's.
//
// Everything else is refused, naming the path, with the file unchanged.
// It looks through a query-only connection, before the WAL pragma of the
// real one touches the file. A file another program holds locked is waited
// for as long as the busy timeout, then refused as busy.
func checkOurs(ctx context.Context, path string) error {
	if st, err := os.Stat(path); err != nil || st.Size() == 0 {
		return nil
	}
	sdb, err := sql.Open("sqlite", path+"?_pragma=busy_timeout("+strconv.Itoa(busyTimeoutMS)+")&_pragma=query_only(1)")
	if err != nil {
		return fmt.Errorf("store: opening database %s: %w", path, err)
	}
	defer sdb.Close()
	deadline := time.Now().Add(time.Duration(busyTimeoutMS) * time.Millisecond)
	var o ownership
	for {
		o, err = readOwnership(ctx, sdb)
		var se *sqlite.Error
		if err == nil || !errors.As(err, &se) || se.Code()&0xff != sqlite3.SQLITE_BUSY {
			break
		}
		if time.Now().After(deadline) {
			return fmt.Errorf("store: database %s is busy: another program has held it locked for %.0f s, so it cannot be checked to be undercool's; nothing was changed; close that program, or choose another file with --db or UNDERCOOL_DB",
				path, float64(busyTimeoutMS)/1000)
		}
		select {
		case <-ctx.Done():
			return ctx.Err()
		case <-time.After(20 * time.Millisecond):
		}
	}
	if err != nil {
		return (&DB{path: path}).fail("opening", err)
	}
	switch {
	case o.appID == applicationID, o.appID == 0 && len(o.objects) == 0:
		return nil
	case o.appID != 0:
		return fmt.Errorf("store: database %s is not an undercool database: it is another program's SQLite file (application_id %#x); nothing was changed; choose another file with --db or UNDERCOOL_DB", path, o.appID)
	}
	ok, err := o.earlierUndercool(ctx)
	if err != nil {
		return fmt.Errorf("store: checking database %s: %w", path, err)
	}
	if !ok {
		return fmt.Errorf("store: database %s is not an undercool database: it is another program's SQLite file (%s); nothing was changed; choose another file with --db or UNDERCOOL_DB",
			path, o.describe())
	}
	return nil
}

// ownership is what checkOurs reads of a SQLite file.
type ownership struct {
	appID    int
	objects  []schemaObject // not SQLite's own (sqlite_*)
	versions []migration    // schema_version rows (version, name), if the table is there
}

type schemaObject struct{ kind, name, sql string }

// readOwnership reads the application_id, the schema and the
// schema_version rows, all in one read transaction.
func readOwnership(ctx context.Context, sdb *sql.DB) (ownership, error) {
	var o ownership
	conn, err := sdb.Conn(ctx)
	if err != nil {
		return o, err
	}
	defer conn.Close()
	if _, err := conn.ExecContext(ctx, "BEGIN"); err != nil {
		return o, err
	}
	defer conn.ExecContext(context.WithoutCancel(ctx), "ROLLBACK")
	if err := conn.QueryRowContext(ctx, "PRAGMA application_id").Scan(&o.appID); err != nil {
		return o, err
	}
	if o.objects, err = readSchema(ctx, conn); err != nil {
		return o, err
	}
	if !slices.ContainsFunc(o.objects, func(s schemaObject) bool { return s.kind == "table" && s.name == "schema_version" }) {
		return o, nil
	}
	rows, err := conn.QueryContext(ctx, "SELECT version, name FROM schema_version ORDER BY version")
	if err != nil {
		return o, nil // not our table's columns: not ours
	}
	defer rows.Close()
	for rows.Next() {
		var m migration
		if err := rows.Scan(&m.version, &m.name); err != nil {
			return o, nil
		}
		o.versions = append(o.versions, m)
	}
	return o, rows.Err()
}

// readSchema lists the schema's objects other than SQLite's own, sorted.
func readSchema(ctx context.Context, q interface {
	QueryContext(context.Context, string, ...any) (*sql.Rows, error)
}) ([]schemaObject, error) {
	rows, err := q.QueryContext(ctx, `SELECT type, name, coalesce(sql, '') FROM sqlite_master WHERE name NOT LIKE 'sqlite\_%' ESCAPE '\' ORDER BY type, name`)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	var out []schemaObject
	for rows.Next() {
		var s schemaObject
		if err := rows.Scan(&s.kind, &s.name, &s.sql); err != nil {
			return nil, err
		}
		s.sql = strings.Join(strings.Fields(s.sql), " ")
		out = append(out, s)
	}
	return out, rows.Err()
}

// earlierUndercool reports whether the file is a database made by an
// undercool from before the application_id: its schema_version rows are
// migrations 1…v of this program and its schema is exactly what they
// build (built again in memory to compare).
func (o ownership) earlierUndercool(ctx context.Context) (bool, error) {
	ms, err := migrations()
	if err != nil {
		return false, err
	}
	if len(o.versions) > len(ms) {
		return false, nil
	}
	for i, v := range o.versions {
		if v.version != i+1 || v.name != ms[i].name {
			return false, nil
		}
	}
	if !slices.ContainsFunc(o.objects, func(s schemaObject) bool { return s.name == "schema_version" }) {
		return false, nil
	}
	ref, err := sql.Open("sqlite", ":memory:")
	if err != nil {
		return false, err
	}
	defer ref.Close()
	ref.SetMaxOpenConns(1) // one connection: one in-memory database
	if _, err := ref.ExecContext(ctx, schemaVersionDDL); err != nil {
		return false, err
	}
	for _, m := range ms[:len(o.versions)] {
		if _, err := ref.ExecContext(ctx, m.sql); err != nil {
			return false, fmt.Errorf("building schema version %d to compare: %w", m.version, err)
		}
	}
	want, err := readSchema(ctx, ref)
	if err != nil {
		return false, err
	}
	return slices.Equal(want, o.objects), nil
}

// describe names the objects of a schema by kind, for an error.
func (o ownership) describe() string {
	var parts []string
	for _, kind := range []string{"table", "view", "index", "trigger"} {
		var names []string
		for _, s := range o.objects {
			if s.kind == kind {
				names = append(names, s.name)
			}
		}
		if len(names) > 0 {
			parts = append(parts, kind+"s "+strings.Join(names, ", "))
		}
	}
	return strings.Join(parts, "; ")
}

// fail wraps err with the database's name and, for the errors a user can
// do something about (read-only, disk full, cannot open; for PostgreSQL
// see failPG), plain advice.
func (db *DB) fail(doing string, err error) error {
	if db.pg {
		return db.failPG(doing, err)
	}
	var se *sqlite.Error
	hint := ""
	if errors.As(err, &se) {
		switch se.Code() & 0xff {
		case sqlite3.SQLITE_READONLY:
			hint = " (the database or its directory is read-only; nothing was written; choose another place with --db or UNDERCOOL_DB)"
		case sqlite3.SQLITE_FULL:
			hint = " (the disk is full; this change was not written and the records already stored are intact; free some space and retry)"
		case sqlite3.SQLITE_CANTOPEN:
			hint = " (cannot open the file; check the path and its permissions)"
		case sqlite3.SQLITE_NOTADB, sqlite3.SQLITE_CORRUPT:
			hint = " (this file is not an undercool database or is damaged; nothing was changed)"
		case sqlite3.SQLITE_BUSY:
			hint = " (another program held the database too long; retry)"
		}
	}
	return fmt.Errorf("store: %s database %s%s: %w", doing, db.path, hint, err)
}

// migrate applies every migration newer than the database's version, up to
// upto (-1: all), each in its own transaction.
func (db *DB) migrate(ctx context.Context, upto int) error {
	ms, err := migrations()
	if err != nil {
		return err
	}
	if upto < 0 || upto > len(ms) {
		upto = len(ms)
	}
	if _, err := db.sql.ExecContext(ctx, schemaVersionDDL); err != nil {
		return db.fail("preparing", err)
	}
	have, err := db.version(ctx)
	if err != nil {
		return err
	}
	if have > len(ms) {
		return db.newerSchema(have, len(ms))
	}
	for _, m := range ms[:upto] {
		if err := db.apply(ctx, m); err != nil {
			return err
		}
	}
	// an earlier undercool's database with nothing to migrate, or a new
	// one built to version 0, is marked on its own
	var id int
	if err := db.sql.QueryRowContext(ctx, "PRAGMA application_id").Scan(&id); err != nil {
		return db.fail("reading the application_id of", err)
	}
	if id != applicationID {
		if _, err := db.sql.ExecContext(ctx, "PRAGMA application_id = "+strconv.Itoa(applicationID)); err != nil {
			return db.fail("marking", err)
		}
	}
	return nil
}

func (db *DB) version(ctx context.Context) (int, error) {
	var v int
	if err := db.sql.QueryRowContext(ctx, `SELECT coalesce(max(version), 0) FROM schema_version`).Scan(&v); err != nil {
		return 0, db.fail("reading the schema version of", err)
	}
	return v, nil
}

// apply runs one migration in its own transaction, unless another process
// applied it first (checked inside the transaction, which holds the write
// lock from its start).
func (db *DB) apply(ctx context.Context, m migration) error {
	tx, err := db.sql.BeginTx(ctx, nil)
	if err != nil {
		return db.fail("migrating", err)
	}
	defer tx.Rollback()
	var done int
	if err := tx.QueryRowContext(ctx, `SELECT count(*) FROM schema_version WHERE version = ?`, m.version).Scan(&done); err != nil {
		return db.fail("migrating", err)
	}
	if done > 0 {
		return nil
	}
	if _, err := tx.ExecContext(ctx, m.sql); err != nil {
		return db.fail("applying migration "+m.name+" to", err)
	}
	if _, err := tx.ExecContext(ctx, "PRAGMA application_id = "+strconv.Itoa(applicationID)); err != nil {
		return db.fail("marking", err)
	}
	if _, err := tx.ExecContext(ctx, `INSERT INTO schema_version(version, name, applied_at) VALUES (?, ?, ?)`,
		m.version, m.name, formatTime(time.Now())); err != nil {
		return db.fail("migrating", err)
	}
	if err := tx.Commit(); err != nil {
		return db.fail("applying migration "+m.name+" to", err)
	}
	return nil
}
