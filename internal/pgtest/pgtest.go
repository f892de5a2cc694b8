// Package pgtest starts throw-away PostgreSQL servers for tests: initdb on
// a temporary directory, the server listening on a Unix socket in it and
// on a loopback port, password (SCRAM) authentication for every role, and
// removal of it all when the server is stopped. The binaries are Debian's
// (package postgresql, /usr/lib/postgresql/NN/bin) or those named by
// $UNDERCOOL_PG_BIN. As root, initdb and the server run as the "postgres"
// user (else "nobody"), since PostgreSQL refuses to run as root.
//
// Tests that need a server call Shared; where no binaries are found they
// are skipped with the reason, unless UNDERCOOL_PG=required (CI), where
// they fail instead.
package pgtest

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"sync"
	"testing"

	"github.com/jackc/pgx/v5"
)

// Admin is the superuser of every server; the tests themselves never
// connect as it (only setup does).
const Admin = "uc_admin"

// Bin finds the directory of the PostgreSQL server binaries (initdb,
// postgres): $UNDERCOOL_PG_BIN, else the newest /usr/lib/postgresql/NN/bin.
func Bin() (string, error) {
	if d := os.Getenv("UNDERCOOL_PG_BIN"); d != "" {
		if _, err := os.Stat(filepath.Join(d, "initdb")); err != nil {
			return "", fmt.Errorf("UNDERCOOL_PG_BIN=%s: %w", d, err)
		}
		return d, nil
	}
	dirs, _ := filepath.Glob("/usr/lib/postgresql/*/bin")
	sort.Slice(dirs, func(i, j int) bool { return version(dirs[i]) > version(dirs[j]) })
	for _, d := range dirs {
		if _, err := os.Stat(filepath.Join(d, "initdb")); err == nil {
			return d, nil
		}
	}
	return "", errors.New("no PostgreSQL server binaries (initdb, postgres) under /usr/lib/postgresql/*/bin or in $UNDERCOOL_PG_BIN: install Debian's postgresql package")
}

func version(binDir string) int {
	v, _ := strconv.Atoi(filepath.Base(filepath.Dir(binDir)))
	return v
}

var (
	sharedOnce sync.Once
	shared     *Server
	sharedErr  error
	// SharedSetup is SQL run as the superuser when the shared server
	// starts (a test package's roles and database); set it before the
	// first Shared.
	SharedSetup []string
)

// Shared returns the test binary's one server, starting it on first use
// (with SharedSetup). Without binaries the test is skipped with the
// reason, or fails when UNDERCOOL_PG=required.
func Shared(t testing.TB) *Server {
	t.Helper()
	sharedOnce.Do(func() {
		shared, sharedErr = Start(context.Background(), SharedSetup...)
	})
	if sharedErr != nil {
		if os.Getenv("UNDERCOOL_PG") == "required" {
			t.Fatalf("PostgreSQL is required here (UNDERCOOL_PG=required): %v", sharedErr)
		}
		t.Skipf("no throw-away PostgreSQL server: %v", sharedErr)
	}
	return shared
}

// StopShared stops the shared server, if one was started (from TestMain,
// after the tests).
func StopShared() {
	if shared != nil {
		shared.Stop()
	}
}

// Exec runs statements as the superuser in database db, each on its own
// (so CREATE DATABASE may be among them).
func (s *Server) Exec(ctx context.Context, db string, stmts ...string) error {
	cfg, err := pgx.ParseConfig(fmt.Sprintf("host=%s port=%d user=%s dbname=%s sslmode=disable", s.Socket, s.Port, Admin, db))
	if err != nil {
		return err
	}
	cfg.Password = s.adminPW
	c, err := pgx.ConnectConfig(ctx, cfg)
	if err != nil {
		return fmt.Errorf("pgtest: connecting as %s: %w", Admin, err)
	}
	defer c.Close(ctx)
	for _, q := range stmts {
		if strings.TrimSpace(q) == "" {
			continue
		}
		if _, err := c.Exec(ctx, q); err != nil {
			return fmt.Errorf("pgtest: %s: %w", q, err)
		}
	}
	return nil
}

// SQLAfter reads the first ```sql block after the line heading in a
// Markdown file (a documented setup, run by tests as written) and splits
// it into statements (each ends with ";" at a line's end).
func SQLAfter(file, heading string) ([]string, error) {
	b, err := os.ReadFile(file)
	if err != nil {
		return nil, fmt.Errorf("pgtest: %w", err)
	}
	doc := string(b)
	i := strings.Index(doc, "\n"+heading+"\n")
	if i < 0 {
		return nil, fmt.Errorf("pgtest: %s has no heading %q", file, heading)
	}
	j := strings.Index(doc[i:], "```sql\n")
	if j < 0 {
		return nil, fmt.Errorf("pgtest: %s has no sql block after %q", file, heading)
	}
	block := doc[i+j+len("```sql\n"):]
	k := strings.Index(block, "```")
	if k < 0 {
		return nil, fmt.Errorf("pgtest: %s: the sql block after %q does not end", file, heading)
	}
	return strings.Split(block[:k], ";\n"), nil
}

// URL is a connection string for role to database db over the Unix
// socket, with extra key=value parameters; it holds no password (that
// comes from the password file, see SetPassword).
func (s *Server) URL(role, db string, params ...string) string {
	q := append([]string{"host=" + s.Socket, "port=" + strconv.Itoa(s.Port)}, params...)
	return "postgres://" + role + "@/" + db + "?" + strings.Join(q, "&")
}

// TCPURL is URL over the loopback TCP port instead.
func (s *Server) TCPURL(role, db string, params ...string) string {
	u := "postgres://" + role + "@127.0.0.1:" + strconv.Itoa(s.Port) + "/" + db
	if len(params) > 0 {
		u += "?" + strings.Join(params, "&")
	}
	return u
}

// SetPassword sets role's password on the server and writes it to the
// server's password file ($PGPASSFILE for this process, set by Start),
// where the client library finds it.
func (s *Server) SetPassword(ctx context.Context, role, password string) error {
	if err := s.Exec(ctx, "postgres", fmt.Sprintf("ALTER ROLE %s PASSWORD '%s'", pgx.Identifier{role}.Sanitize(), strings.ReplaceAll(password, "'", "''"))); err != nil {
		return err
	}
	s.mu.Lock()
	defer s.mu.Unlock()
	f, err := os.OpenFile(s.PassFile, os.O_APPEND|os.O_WRONLY|os.O_CREATE, 0o600)
	if err != nil {
		return err
	}
	defer f.Close()
	_, err = fmt.Fprintf(f, "*:*:*:%s:%s\n", role, password)
	return err
}
