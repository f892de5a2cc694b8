// Package store keeps the records of every sample: one samples row per
// finished sample, with its metadata, its site and deck and the SHA-256 of
// its curve file, and one results row per analysis of it. Re-analysis
// after a limits change adds a results row and keeps the old one; history
// shows the latest by default.
//
// Two engines hold the same records behind the one type DB: a SQLite file
// (modernc.org/sqlite, pure Go, no server), each melt deck's own and the
// default, and a PostgreSQL database (jackc/pgx), the plant's, shared by
// every deck and read by the quality office. Open takes a file path or a
// postgres:// connection string; nothing outside this package knows which
// engine it has. Each engine has its schema as numbered migrations
// embedded in the program (migrations/sqlite, migrations/postgres), each
// applied in its own transaction and counted in its schema_version table.
//
// A SQLite database runs in WAL mode with a busy timeout, so the
// dashboard, a re-analysis and a history query may use it at the same
// time, from one process or several. Writes are transactions begun
// IMMEDIATE: a writer killed at any moment leaves the database as it was
// before its transaction. Every result written to a SQLite file joins its
// outbox, which a Forwarder empties into the plant database, in order,
// whenever the link is up (forward.go); each sample and result carries a
// uid that is the same on every copy, so a row sent twice is stored once.
//
// The PostgreSQL engine takes credentials only from the environment
// (PGPASSWORD) or the password file (~/.pgpass, $PGPASSFILE), never from
// the connection string; it verifies the server's certificate over TLS
// whenever the server is not on this computer; its SQL is parameterised
// throughout; and it never shows the password in an error (postgres.go).
package store

import (
	"context"
	"database/sql"
	"embed"
	"errors"
	"fmt"
	"io/fs"
	"path/filepath"
	"runtime"
	"sort"
	"strconv"
	"strings"
	"sync"
	"time"
	"unicode"
)

//go:embed migrations/sqlite/*.sql migrations/postgres/*.sql
var migrationFiles embed.FS

// DB is an open records database, in a SQLite file or on a PostgreSQL
// server. It is safe for concurrent use.
type DB struct {
	sql  *sql.DB
	path string // the file, or the server and database (never a secret)
	pg   bool   // PostgreSQL; else SQLite

	secrets []string // text never to show in an error (the password)
	origin  Origin   // the site and deck of samples written without one
	binds   sync.Map // query with ? placeholders → PostgreSQL's $n form
}

// IsServer reports whether target names a PostgreSQL database (a
// postgres:// or postgresql:// connection string) rather than a file.
func IsServer(target string) bool {
	return strings.HasPrefix(target, "postgres://") || strings.HasPrefix(target, "postgresql://")
}

// Open opens the records database target and brings its schema up to
// date: a SQLite file path (created, with its directory, where needed) or
// a PostgreSQL connection string (see openPostgres for what it accepts and
// when it migrates). Errors name the database, never a password.
func Open(ctx context.Context, target string) (*DB, error) {
	if IsServer(target) {
		return openPostgres(ctx, target, -1, false)
	}
	return open(ctx, target, -1)
}

// OpenReadOnly opens an existing database for reading only: a SQLite file
// where Open cannot write it (see openReadOnlyFile), or a PostgreSQL
// database in read-only transactions.
func OpenReadOnly(ctx context.Context, target string) (*DB, error) {
	if IsServer(target) {
		return openPostgres(ctx, target, -1, true)
	}
	return openReadOnlyFile(ctx, target)
}

// Engine names the database's engine: "sqlite" or "postgres".
func (db *DB) Engine() string {
	if db.pg {
		return "postgres"
	}
	return "sqlite"
}

// Origin is where samples are taken: the site (plant) and the melt deck
// there, set once per deck (its configuration or flags) and stored with
// every sample it writes.
type Origin struct {
	Site string
	Deck string
}

// CheckOrigin refuses a site or deck name that is too long (over 64 bytes)
// or holds control characters or invalid UTF-8.
func CheckOrigin(o Origin) error {
	for _, f := range []struct{ what, v string }{{"site", o.Site}, {"deck", o.Deck}} {
		if len(f.v) > 64 {
			return fmt.Errorf("store: %s name %.20q… is longer than 64 bytes", f.what, f.v)
		}
		for _, r := range f.v {
			if r == unicode.ReplacementChar || unicode.IsControl(r) || unicode.Is(unicode.Bidi_Control, r) {
				return fmt.Errorf("store: %s name %q holds a control character or invalid text", f.what, f.v)
			}
		}
	}
	return nil
}

// SetOrigin sets the site and deck stored with samples written without
// their own (call it before the first write).
func (db *DB) SetOrigin(o Origin) error {
	if err := CheckOrigin(o); err != nil {
		return err
	}
	db.origin = o
	return nil
}

// Origin returns the site and deck set by SetOrigin.
func (db *DB) Origin() Origin { return db.origin }

// q gives a query written with ? placeholders in the engine's form
// (PostgreSQL numbers them: $1, $2, ...). Our queries hold no ? inside
// literals.
func (db *DB) q(query string) string {
	if !db.pg {
		return query
	}
	if v, ok := db.binds.Load(query); ok {
		return v.(string)
	}
	var b strings.Builder
	n := 0
	for i := 0; i < len(query); i++ {
		if query[i] == '?' {
			n++
			b.WriteString("$" + strconv.Itoa(n))
			continue
		}
		b.WriteByte(query[i])
	}
	db.binds.Store(query, b.String())
	return b.String()
}

// ts gives a time as the engine stores it: fixed-width UTC text with
// milliseconds in SQLite (timeLayout), a timestamptz (to the millisecond
// too) in PostgreSQL.
func (db *DB) ts(t time.Time) any {
	if db.pg {
		return t.UTC().Truncate(time.Millisecond)
	}
	return formatTime(t)
}

// dbTime scans a stored time from either engine.
type dbTime struct{ t *time.Time }

func (d dbTime) Scan(src any) error {
	switch v := src.(type) {
	case time.Time:
		*d.t = v.UTC()
		return nil
	case string:
		t, err := parseTime(v)
		*d.t = t
		return err
	case []byte:
		t, err := parseTime(string(v))
		*d.t = t
		return err
	}
	return fmt.Errorf("stored time of type %T", src)
}

// Path names the database: its file path, or for PostgreSQL the server,
// role and database (never the password).
func (db *DB) Path() string { return db.path }

// Close closes the database.
func (db *DB) Close() error {
	if err := db.sql.Close(); err != nil {
		return db.fail("closing", err)
	}
	return nil
}

// migration is one numbered schema step.
type migration struct {
	version int
	name    string
	sql     string
}

// migrations returns the embedded SQLite migrations in version order.
func migrations() ([]migration, error) { return engineMigrations("sqlite") }

// engineMigrations returns one engine's embedded migrations
// (migrations/ENGINE/NNNN_name.sql) in version order.
func engineMigrations(engine string) ([]migration, error) {
	dir := "migrations/" + engine
	ents, err := fs.ReadDir(migrationFiles, dir)
	if err != nil {
		return nil, fmt.Errorf("store: reading embedded migrations: %w", err)
	}
	var ms []migration
	for _, e := range ents {
		num, _, ok := strings.Cut(e.Name(), "_")
		v, err := strconv.Atoi(num)
		if !ok || err != nil || !strings.HasSuffix(e.Name(), ".sql") {
			return nil, fmt.Errorf("store: embedded migration %q is not named NNNN_name.sql", e.Name())
		}
		b, err := migrationFiles.ReadFile(dir + "/" + e.Name())
		if err != nil {
			return nil, fmt.Errorf("store: reading migration %s: %w", e.Name(), err)
		}
		ms = append(ms, migration{version: v, name: e.Name(), sql: string(b)})
	}
	sort.Slice(ms, func(i, j int) bool { return ms[i].version < ms[j].version })
	for i, m := range ms {
		if m.version != i+1 {
			return nil, fmt.Errorf("store: migrations must be numbered 1, 2, 3...: %s is number %d", m.name, i+1)
		}
	}
	return ms, nil
}

// SchemaVersion is the schema version of the SQLite files this program
// builds.
func SchemaVersion() int {
	ms, err := migrations()
	if err != nil {
		panic(err) // the embedded files are part of the program
	}
	return len(ms)
}

// newerSchema is the error for a database of a schema version this
// undercool does not know.
func (db *DB) newerSchema(have, known int) error {
	return fmt.Errorf("store: database %s has schema version %d, newer than this undercool knows (%d): use a newer undercool", db.path, have, known)
}

// checkPath refuses an empty database path and one holding any of bad,
// characters SQLite would read as part of a URI.
func checkPath(path, bad string) error {
	if path == "" {
		return errors.New("store: no database path given")
	}
	if i := strings.IndexAny(path, bad); i >= 0 {
		return fmt.Errorf("store: database path %q: %q is not allowed in the path", path, path[i])
	}
	return nil
}

// DefaultPath is where the records live unless the user says otherwise:
// $UNDERCOOL_DB when set; else undercool/undercool.db under the user's data
// directory: $XDG_DATA_HOME or ~/.local/share (Linux and other Unix, XDG
// Base Directory Specification), ~/Library/Application Support (macOS),
// %LocalAppData% (Windows). getenv is os.Getenv or a test's stand-in.
func DefaultPath(getenv func(string) string) (string, error) {
	return defaultPath(runtime.GOOS, getenv)
}

func defaultPath(goos string, getenv func(string) string) (string, error) {
	if p := getenv("UNDERCOOL_DB"); p != "" {
		return p, nil
	}
	var dir string
	switch goos {
	case "windows":
		dir = getenv("LocalAppData")
		if dir == "" {
			dir = getenv("LOCALAPPDATA")
		}
		if dir == "" {
			return "", errors.New("store: %LocalAppData% is not set: give the database with --db or UNDERCOOL_DB")
		}
	case "darwin", "ios":
		home := getenv("HOME")
		if home == "" {
			return "", errors.New("store: $HOME is not set: give the database with --db or UNDERCOOL_DB")
		}
		dir = filepath.Join(home, "Library", "Application Support")
	default:
		dir = getenv("XDG_DATA_HOME")
		if dir == "" || !filepath.IsAbs(dir) { // the XDG spec says to ignore a relative value
			home := getenv("HOME")
			if home == "" {
				return "", errors.New("store: neither $XDG_DATA_HOME nor $HOME is set: give the database with --db or UNDERCOOL_DB")
			}
			dir = filepath.Join(home, ".local", "share")
		}
	}
	return filepath.Join(dir, "undercool", "undercool.db"), nil
}

// timeLayout is fixed-width UTC with milliseconds, so that text order in
// the database is time order.
const timeLayout = "2006-01-02T15:04:05.000Z"

func formatTime(t time.Time) string { return t.UTC().Format(timeLayout) }

// parseTime reads timeLayout. It is hand-written because history parses
// thousands of these per query and time.Parse costs several times more;
// anything not in exactly that layout goes to time.Parse for its error.
func parseTime(s string) (time.Time, error) {
	if len(s) == len(timeLayout) && s[4] == '-' && s[7] == '-' && s[10] == 'T' && s[13] == ':' && s[16] == ':' && s[19] == '.' && s[23] == 'Z' {
		n := func(i, j int) (int, bool) {
			v := 0
			for _, c := range []byte(s[i:j]) {
				if c < '0' || c > '9' {
					return 0, false
				}
				v = v*10 + int(c-'0')
			}
			return v, true
		}
		y, ok1 := n(0, 4)
		mo, ok2 := n(5, 7)
		d, ok3 := n(8, 10)
		h, ok4 := n(11, 13)
		mi, ok5 := n(14, 16)
		se, ok6 := n(17, 19)
		ms, ok7 := n(20, 23)
		if ok1 && ok2 && ok3 && ok4 && ok5 && ok6 && ok7 && mo >= 1 && mo <= 12 && d >= 1 && d <= 31 && h < 24 && mi < 60 && se < 60 {
			t := time.Date(y, time.Month(mo), d, h, mi, se, ms*1e6, time.UTC)
			if t.Day() == d { // not 31 April
				return t, nil
			}
		}
	}
	t, err := time.Parse(timeLayout, s)
	if err != nil {
		return time.Time{}, fmt.Errorf("stored time %q: %w", s, err)
	}
	return t, nil
}
