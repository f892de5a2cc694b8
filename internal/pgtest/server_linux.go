//go:build linux

package pgtest

import (
	"bufio"
	"context"
	"crypto/rand"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"net"
	"os"
	"os/exec"
	"os/user"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"syscall"
)

// Server is one throw-away PostgreSQL cluster.
type Server struct {
	Dir      string // the temporary directory: data/, the socket, the password file
	Socket   string // the Unix socket directory
	Port     int    // the loopback TCP port (also the socket's number)
	PassFile string // the client password file ($PGPASSFILE)

	bin     string
	adminPW string
	cred    *syscall.Credential // who the server runs as (nil: this process's user)
	mu      sync.Mutex
	cmd     *exec.Cmd
	exited  chan struct{}
	log     *tail
}

// Start makes a cluster in a new temporary directory, starts it, runs
// setup as the superuser, and points $PGPASSFILE at its password file.
func Start(ctx context.Context, setup ...string) (*Server, error) {
	bin, err := Bin()
	if err != nil {
		return nil, err
	}
	dir, err := os.MkdirTemp("", "undercool-pg-*")
	if err != nil {
		return nil, err
	}
	s := &Server{Dir: dir, Socket: dir, PassFile: filepath.Join(dir, "pgpass"), bin: bin}
	ok := false
	defer func() {
		if !ok {
			s.Stop()
		}
	}()
	pw := make([]byte, 16)
	rand.Read(pw)
	s.adminPW = hex.EncodeToString(pw)
	if os.Geteuid() == 0 {
		if s.cred, err = serverUser(); err != nil {
			return nil, err
		}
		if err := os.Chown(dir, int(s.cred.Uid), int(s.cred.Gid)); err != nil {
			return nil, err
		}
	}
	if err := os.Chmod(dir, 0o755); err != nil {
		return nil, err
	}
	pwFile := filepath.Join(dir, "admin-password")
	if err := os.WriteFile(pwFile, []byte(s.adminPW+"\n"), 0o600); err != nil {
		return nil, err
	}
	if s.cred != nil {
		os.Chown(pwFile, int(s.cred.Uid), int(s.cred.Gid))
	}
	out, err := s.run(ctx, filepath.Join(bin, "initdb"), "-D", filepath.Join(dir, "data"), "-U", Admin, "--pwfile="+pwFile,
		"-A", "scram-sha-256", "-E", "UTF8", "--locale=C", "--no-sync", "--no-instructions")
	os.Remove(pwFile)
	if err != nil {
		return nil, fmt.Errorf("pgtest: initdb: %w\n%s", err, out)
	}
	if s.Port, err = freePort(); err != nil {
		return nil, err
	}
	if err := s.Resume(); err != nil {
		return nil, err
	}
	if err := os.WriteFile(s.PassFile, nil, 0o600); err != nil {
		return nil, err
	}
	os.Setenv("PGPASSFILE", s.PassFile)
	if err := s.Exec(ctx, "postgres", setup...); err != nil {
		return nil, err
	}
	ok = true
	return s, nil
}

// serverUser is who initdb and the server run as when the tests run as
// root: the "postgres" user of Debian's package, else "nobody".
func serverUser() (*syscall.Credential, error) {
	for _, name := range []string{"postgres", "nobody"} {
		u, err := user.Lookup(name)
		if err != nil {
			continue
		}
		uid, _ := strconv.Atoi(u.Uid)
		gid, _ := strconv.Atoi(u.Gid)
		return &syscall.Credential{Uid: uint32(uid), Gid: uint32(gid)}, nil
	}
	return nil, errors.New("pgtest: running as root, and there is neither a postgres nor a nobody user to run the server as")
}

func (s *Server) run(ctx context.Context, name string, args ...string) ([]byte, error) {
	c := exec.CommandContext(ctx, name, args...)
	c.Dir = s.Dir
	c.Env = []string{"PATH=/usr/bin:/bin", "LANG=C", "LC_ALL=C"}
	c.SysProcAttr = &syscall.SysProcAttr{Credential: s.cred}
	return c.CombinedOutput()
}

func freePort() (int, error) {
	l, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		return 0, err
	}
	defer l.Close()
	return l.Addr().(*net.TCPAddr).Port, nil
}

// Resume starts the server (again, after Halt) and returns once its log
// says it accepts connections. The server is this process's child and
// gets SIGQUIT if this process dies.
func (s *Server) Resume() error {
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.cmd != nil {
		return errors.New("pgtest: the server is running")
	}
	c := exec.Command(filepath.Join(s.bin, "postgres"), "-D", filepath.Join(s.Dir, "data"),
		"-k", s.Socket, "-p", strconv.Itoa(s.Port), "-c", "listen_addresses=127.0.0.1",
		"-c", "max_connections=60", "-c", "shared_buffers=128MB", "-c", "log_min_messages=warning",
		"-c", "log_connections=off", "-c", "logging_collector=off")
	c.Dir = s.Dir
	c.Env = []string{"PATH=/usr/bin:/bin", "LANG=C", "LC_ALL=C"}
	c.SysProcAttr = &syscall.SysProcAttr{Credential: s.cred, Pdeathsig: syscall.SIGQUIT}
	stderr, err := c.StderrPipe()
	if err != nil {
		return err
	}
	if err := c.Start(); err != nil {
		return fmt.Errorf("pgtest: starting postgres: %w", err)
	}
	s.log = &tail{}
	ready := make(chan struct{})
	exited := make(chan struct{})
	go func() {
		sc := bufio.NewScanner(stderr)
		once := false
		for sc.Scan() {
			line := sc.Text()
			s.log.add(line)
			if !once && strings.Contains(line, "ready to accept connections") {
				once = true
				close(ready)
			}
		}
		io.Copy(io.Discard, stderr)
	}()
	go func() {
		c.Wait()
		close(exited)
	}()
	select {
	case <-ready:
	case <-exited:
		return fmt.Errorf("pgtest: postgres exited at start:\n%s", s.log.String())
	}
	s.cmd, s.exited = c, exited
	return nil
}

// Halt stops the server at once (SIGQUIT, immediate shutdown: what a
// crash or a pulled cable looks like to a client) and waits for it to
// end. Resume starts it again on the same data.
func (s *Server) Halt() error { return s.signal(syscall.SIGQUIT) }

func (s *Server) signal(sig syscall.Signal) error {
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.cmd == nil {
		return nil
	}
	if err := s.cmd.Process.Signal(sig); err != nil {
		return err
	}
	<-s.exited
	s.cmd = nil
	return nil
}

// Stop shuts the server down (fast shutdown, SIGINT) and removes its
// directory.
func (s *Server) Stop() error {
	err := s.signal(syscall.SIGINT)
	os.RemoveAll(s.Dir)
	return err
}

// Log returns the last lines the server logged.
func (s *Server) Log() string {
	if s.log == nil {
		return ""
	}
	return s.log.String()
}

// tail keeps the last lines of a log.
type tail struct {
	mu    sync.Mutex
	lines []string
}

func (t *tail) add(l string) {
	t.mu.Lock()
	defer t.mu.Unlock()
	t.lines = append(t.lines, l)
	if len(t.lines) > 200 {
		t.lines = t.lines[len(t.lines)-200:]
	}
}

func (t *tail) String() string {
	t.mu.Lock()
	defer t.mu.Unlock()
	return strings.Join(t.lines, "\n")
}
