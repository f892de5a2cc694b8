package store

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"net"
	"net/url"
	"os"
	"strings"
	"time"

	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/pgconn"
	"github.com/jackc/pgx/v5/stdlib"
)

// The PostgreSQL engine: the plant database.
//
// What a connection string may hold, and what is refused before anything
// is sent:
//   - a password (postgres://role:secret@…, ?password=, ?sslpassword=) is
//     refused: it would be on a command line, in a shell history or a
//     service file. The password comes from $PGPASSWORD or the password
//     file (~/.pgpass, or $PGPASSFILE), as libpq reads them.
//   - a server that is not on this computer (not a Unix socket, localhost
//     or a loopback address) is reached only over TLS that verifies its
//     certificate: sslmode=verify-full is set when no sslmode is given (in
//     the string or $PGSSLMODE); verify-ca is accepted; disable, allow,
//     prefer and require are refused. The certificate authority is
//     sslrootcert=FILE, ~/.postgresql/root.crt's place in libpq, or the
//     system's (sslrootcert=system).
//   - everything else (host, port, dbname, user, options such as
//     search_path) is as libpq reads it, from the string or the PG*
//     environment variables; "postgres://" alone takes them all from the
//     environment.
//
// Errors name the role, server and database, never the password (every
// error text is scrubbed of it, see redacted).

// pgMigrationLock is the key of the advisory lock that serialises
// migrations of one database ("UCRDMIGR" in ASCII).
const pgMigrationLock = 0x554352444d494752

// openPostgres opens the PostgreSQL database of target. A schema older
// than this program's is migrated when the role may create in the schema
// (the owner, see docs/plant-database.md); a deck or reader role gets a
// clear error instead. A newer schema is accepted when each newer
// migration was marked as keeping older programs working (see migratePG).
func openPostgres(ctx context.Context, target string, upto int, readOnly bool) (*DB, error) {
	cfg, err := pgConfig(target, os.Getenv)
	if err != nil {
		return nil, err
	}
	if cfg.RuntimeParams == nil {
		cfg.RuntimeParams = map[string]string{}
	}
	if cfg.RuntimeParams["application_name"] == "" {
		cfg.RuntimeParams["application_name"] = "undercool"
	}
	if readOnly {
		cfg.RuntimeParams["default_transaction_read_only"] = "on"
	}
	db := &DB{pg: true, path: pgName(cfg)}
	if cfg.Password != "" {
		db.secrets = append(db.secrets, cfg.Password)
	}
	db.sql = sql.OpenDB(stdlib.GetConnector(*cfg))
	db.sql.SetMaxOpenConns(4)
	db.sql.SetConnMaxIdleTime(5 * time.Minute)
	if err := db.sql.PingContext(ctx); err != nil {
		db.sql.Close()
		return nil, db.fail("connecting to", err)
	}
	if err := db.migratePG(ctx, upto, readOnly); err != nil {
		db.sql.Close()
		return nil, err
	}
	return db, nil
}

// pgName names the database in messages: postgres://ROLE@HOST:PORT/DB.
func pgName(cfg *pgx.ConnConfig) string {
	host := cfg.Host
	if strings.HasPrefix(host, "/") {
		host = "[socket " + host + "]"
	}
	return fmt.Sprintf("postgres://%s@%s:%d/%s", cfg.User, host, cfg.Port, cfg.Database)
}

// pgConfig checks target (see the rules above) and parses it.
func pgConfig(target string, getenv func(string) string) (*pgx.ConnConfig, error) {
	u, err := url.Parse(target)
	if err != nil {
		// url's error quotes the string, which may hold a password
		return nil, errors.New("store: the PostgreSQL connection string is not a valid URL (postgres://ROLE@HOST:PORT/DATABASE?key=value)")
	}
	if _, has := u.User.Password(); has {
		return nil, errors.New("store: the PostgreSQL connection string holds a password: it is not used from there (it would show on the command line and in logs); put it in $PGPASSWORD or the password file ~/.pgpass instead")
	}
	q := u.Query()
	for _, k := range []string{"password", "sslpassword"} {
		if q.Has(k) {
			return nil, fmt.Errorf("store: the PostgreSQL connection string holds %s=: it is not used from there (it would show on the command line and in logs); put the password in $PGPASSWORD or the password file ~/.pgpass instead", k)
		}
	}
	cfg, err := parsePG(target)
	if err != nil {
		return nil, err
	}
	if unverified(cfg) == "" {
		return cfg, nil
	}
	mode := q.Get("sslmode")
	if mode == "" {
		mode = getenv("PGSSLMODE")
	}
	if mode == "" { // none asked for: verify the certificate
		q.Set("sslmode", "verify-full")
		u.RawQuery = q.Encode()
		if cfg, err = parsePG(u.String()); err != nil {
			return nil, err
		}
		if unverified(cfg) == "" {
			return cfg, nil
		}
	}
	return nil, fmt.Errorf("store: PostgreSQL server %s is not on this computer, and sslmode=%s does not verify its certificate: use sslmode=verify-full (the default when none is given), with sslrootcert=FILE naming the plant's certificate authority",
		unverified(cfg), mode)
}

// parsePG parses a connection string with pgx (the PG* environment
// variables and the password file included); its errors are scrubbed of
// the string, which has been checked to hold no password but may come
// from the environment.
func parsePG(target string) (*pgx.ConnConfig, error) {
	cfg, err := pgx.ParseConfig(target)
	if err != nil {
		var pe *pgconn.ParseConfigError
		if errors.As(err, &pe) && pe.Unwrap() != nil {
			return nil, fmt.Errorf("store: the PostgreSQL connection string: %v", pe.Unwrap())
		}
		return nil, errors.New("store: the PostgreSQL connection string cannot be read (postgres://ROLE@HOST:PORT/DATABASE?key=value)")
	}
	return cfg, nil
}

// unverified returns the first host of cfg (its fallbacks included) that
// is not on this computer and would be reached without verifying its
// certificate, or "" when there is none.
func unverified(cfg *pgx.ConnConfig) string {
	check := func(host string, tlsOK bool) bool { return loopback(host) || tlsOK }
	verified := func(c *pgconn.Config) bool {
		t := c.TLSConfig
		return t != nil && (!t.InsecureSkipVerify || t.VerifyPeerCertificate != nil)
	}
	if !check(cfg.Host, verified(&cfg.Config)) {
		return cfg.Host
	}
	for _, f := range cfg.Fallbacks {
		t := f.TLSConfig
		if !check(f.Host, t != nil && (!t.InsecureSkipVerify || t.VerifyPeerCertificate != nil)) {
			return f.Host
		}
	}
	return ""
}

// loopback reports whether host is on this computer: a Unix socket
// directory, localhost, or a loopback address.
func loopback(host string) bool {
	if strings.HasPrefix(host, "/") || host == "localhost" {
		return true
	}
	ip := net.ParseIP(host)
	return ip != nil && ip.IsLoopback()
}

// redacted is an error whose text has the secrets taken out; it unwraps
// to the original (for errors.Is and As), which callers never print.
type redacted struct {
	msg string
	err error
}

func (e *redacted) Error() string { return e.msg }
func (e *redacted) Unwrap() error { return e.err }

// failPG wraps a PostgreSQL error with the database's name and, for what
// plant IT or the user can do something about, plain advice; the text is
// scrubbed of the password.
func (db *DB) failPG(doing string, err error) error {
	hint := ""
	var pe *pgconn.PgError
	var ce *pgconn.ConnectError
	switch {
	case errors.As(err, &pe):
		switch pe.Code {
		case "28P01":
			hint = " (the server refused the password: check $PGPASSWORD or the password file ~/.pgpass; the password is not shown here)"
		case "28000":
			hint = " (the server refused this role: ask the plant's IT to let it log in, see docs/plant-database.md)"
		case "42501":
			hint = " (this role may not do that: a deck's role must be a member of undercool_deck, a reader's of undercool_reader; see docs/plant-database.md)"
		case "3D000":
			hint = " (no such database on the server: check the connection string)"
		case "42P01", "3F000":
			hint = " (the records' tables are not there: the plant's IT creates them with 'undercool migrate' as the owner role, see docs/plant-database.md)"
		case "25006":
			hint = " (opened read-only)"
		case "57P01", "57P02", "57P03":
			hint = " (the server is shutting down or starting up; retry)"
		}
	case errors.As(err, &ce), errors.Is(err, driverBadConn):
		hint = " (cannot reach the server: check the network and that the server runs)"
	}
	msg := fmt.Sprintf("store: %s database %s%s: %v", doing, db.path, hint, err)
	for _, s := range db.secrets {
		if s != "" {
			msg = strings.ReplaceAll(msg, s, "********")
		}
	}
	return &redacted{msg: msg, err: err}
}

// rawRowsPG runs query through pgx itself rather than database/sql, on
// one of the pool's connections, and calls fn with each row's values as
// the server sent them, in binary format (valid until fn returns): no
// conversion or copy of a value, and no allocation a row, which for a
// month of plant history (30,000 rows) is most of the client's time (see
// BenchmarkPlantHistoryMonth). A NULL value is nil.
func (db *DB) rawRowsPG(ctx context.Context, query string, args []any, fn func(vals [][]byte) error) error {
	conn, err := db.sql.Conn(ctx)
	if err != nil {
		return err
	}
	defer conn.Close()
	return conn.Raw(func(driverConn any) error {
		c, ok := driverConn.(*stdlib.Conn)
		if !ok {
			return fmt.Errorf("store: PostgreSQL connection of type %T", driverConn)
		}
		rows, err := c.Conn().Query(ctx, query, append([]any{pgx.QueryResultFormats{pgx.BinaryFormatCode}}, args...)...)
		if err != nil {
			return err
		}
		defer rows.Close()
		for rows.Next() {
			if err := fn(rows.RawValues()); err != nil {
				return err
			}
		}
		return rows.Err()
	})
}

// driverBadConn is database/sql's error for a connection that went away.
var driverBadConn = errors.New("driver: bad connection")

// pgSchemaVersionDDL creates the plant database's migration count. Each
// row says whether programs that know only the migrations before it may
// go on writing (older_ok): true unless its file says
// "-- older programs: refused".
const pgSchemaVersionDDL = `CREATE TABLE IF NOT EXISTS schema_version (
		version integer PRIMARY KEY, name text NOT NULL, applied_at timestamptz NOT NULL DEFAULT now(),
		older_ok boolean NOT NULL DEFAULT true)`

// migratePG checks the schema's version and, where it is behind and the
// role may create in the schema, applies the missing migrations up to
// upto (-1: all), each in its own transaction, under an advisory lock so
// that two programs never migrate at once. readOnly: only check.
func (db *DB) migratePG(ctx context.Context, upto int, readOnly bool) error {
	ms, err := engineMigrations("postgres")
	if err != nil {
		return err
	}
	if upto < 0 || upto > len(ms) {
		upto = len(ms)
	}
	conn, err := db.sql.Conn(ctx)
	if err != nil {
		return db.fail("connecting to", err)
	}
	defer conn.Close()
	have, refused, err := db.pgVersion(ctx, conn, len(ms))
	if err != nil {
		return err
	}
	switch {
	case have > len(ms) && refused:
		return db.newerSchema(have, len(ms))
	case have >= upto:
		return nil
	case readOnly:
		return db.behind(have, len(ms))
	}
	var schema sql.NullString
	var canCreate bool
	if err := conn.QueryRowContext(ctx, `SELECT current_schema(), coalesce(has_schema_privilege(current_schema(), 'CREATE'), false)`).Scan(&schema, &canCreate); err != nil {
		return db.fail("checking", err)
	}
	if !schema.Valid {
		return fmt.Errorf("store: database %s: this role may not use the records' schema, or none on its search_path exists: a deck's role must be a member of undercool_deck, a reader's of undercool_reader (see docs/plant-database.md)", db.path)
	}
	if !canCreate {
		return db.behind(have, len(ms))
	}
	if _, err := conn.ExecContext(ctx, `SELECT pg_advisory_lock($1)`, int64(pgMigrationLock)); err != nil {
		return db.fail("migrating", err)
	}
	defer conn.ExecContext(context.WithoutCancel(ctx), `SELECT pg_advisory_unlock($1)`, int64(pgMigrationLock))
	if _, err := conn.ExecContext(ctx, pgSchemaVersionDDL); err != nil {
		return db.fail("preparing", err)
	}
	for _, m := range ms[:upto] {
		if err := db.applyPG(ctx, conn, m); err != nil {
			return err
		}
	}
	return nil
}

// pgVersion reads the schema version (0 when there is no schema_version
// table yet) and whether a migration newer than known refuses older
// programs.
func (db *DB) pgVersion(ctx context.Context, conn *sql.Conn, known int) (int, bool, error) {
	var exists bool
	if err := conn.QueryRowContext(ctx, `SELECT to_regclass('schema_version') IS NOT NULL`).Scan(&exists); err != nil {
		return 0, false, db.fail("reading the schema version of", err)
	}
	if !exists {
		return 0, false, nil
	}
	var have int
	var refused bool
	err := conn.QueryRowContext(ctx, `SELECT coalesce(max(version), 0), coalesce(bool_or(NOT older_ok AND version > $1), false) FROM schema_version`, known).
		Scan(&have, &refused)
	if err != nil {
		return 0, false, db.fail("reading the schema version of", err)
	}
	return have, refused, nil
}

// behind is the error for a plant schema this role cannot bring up to
// date.
func (db *DB) behind(have, want int) error {
	if have == 0 {
		return fmt.Errorf("store: database %s holds no undercool records yet: the plant's IT creates their tables with 'undercool migrate --db …' as the owner role (see docs/plant-database.md)", db.path)
	}
	return fmt.Errorf("store: database %s has schema version %d and this undercool needs %d: the plant's IT brings it up to date with 'undercool migrate --db …' as the owner role (see docs/plant-database.md)", db.path, have, want)
}

// applyPG runs one migration in its own transaction unless it is applied
// already, with the search path pinned to the schema and pg_temp last, so
// that the functions it makes (SET search_path FROM CURRENT) cannot be led
// to another table of the same name.
func (db *DB) applyPG(ctx context.Context, conn *sql.Conn, m migration) error {
	tx, err := conn.BeginTx(ctx, nil)
	if err != nil {
		return db.fail("migrating", err)
	}
	defer tx.Rollback()
	var done int
	if err := tx.QueryRowContext(ctx, `SELECT count(*) FROM schema_version WHERE version = $1`, m.version).Scan(&done); err != nil {
		return db.fail("migrating", err)
	}
	if done > 0 {
		return nil
	}
	if _, err := tx.ExecContext(ctx, `SELECT set_config('search_path', quote_ident(current_schema()) || ', pg_temp', true)`); err != nil {
		return db.fail("migrating", err)
	}
	if _, err := tx.ExecContext(ctx, m.sql); err != nil {
		hint := ""
		if strings.Contains(err.Error(), "role \"undercool_") {
			hint = " (create the roles undercool_deck and undercool_reader first, see docs/plant-database.md)"
		}
		return db.fail("applying migration "+m.name+hint+" to", err)
	}
	olderOK := !strings.Contains(m.sql, "-- older programs: refused")
	if _, err := tx.ExecContext(ctx, `INSERT INTO schema_version(version, name, older_ok) VALUES ($1, $2, $3)`, m.version, m.name, olderOK); err != nil {
		return db.fail("migrating", err)
	}
	if err := tx.Commit(); err != nil {
		return db.fail("applying migration "+m.name+" to", err)
	}
	return nil
}

// PlantSchemaVersion is the schema version of the PostgreSQL databases
// this program builds.
func PlantSchemaVersion() int {
	ms, err := engineMigrations("postgres")
	if err != nil {
		panic(err) // the embedded files are part of the program
	}
	return len(ms)
}

// Version returns the database's schema version.
func (db *DB) Version(ctx context.Context) (int, error) {
	if !db.pg {
		return db.version(ctx)
	}
	conn, err := db.sql.Conn(ctx)
	if err != nil {
		return 0, db.fail("connecting to", err)
	}
	defer conn.Close()
	v, _, err := db.pgVersion(ctx, conn, PlantSchemaVersion())
	return v, err
}
