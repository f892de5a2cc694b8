//go:build linux

package main

import (
	"bufio"
	"context"
	"errors"
	"io"
	"os"
	"os/exec"
	"strings"
	"syscall"
	"testing"
	"time"
)

func init() {
	// A command of the test binary only: it waits for the clean stop and
	// then never finishes it, as a stop that hangs would (a device that
	// never answers, a disk that never returns).
	register(command{name: "test-hang", summary: "(tests only)", run: func(ctx context.Context, env *environ, _ []string) error {
		io.WriteString(env.stderr, "waiting\n")
		<-ctx.Done()
		io.WriteString(env.stderr, "stopping cleanly\n")
		select {}
	}})
}

// TestMainHelperProcess is the child of the signal tests: undercool's
// main with the arguments in $UNDERCOOL_MAIN_ARGS.
func TestMainHelperProcess(t *testing.T) {
	args := os.Getenv("UNDERCOOL_MAIN_ARGS")
	if args == "" {
		t.Skip("the child process of the signal tests")
	}
	ctx, stop := interruptContext(os.Stderr)
	env := &environ{stdin: os.Stdin, stdout: os.Stdout, stderr: os.Stderr, getenv: os.Getenv}
	code := runMain(ctx, env, strings.Split(args, "\x1f"))
	stop()
	os.Exit(code)
}

// child runs undercool in a child process and returns it with its stdout
// and stderr read line by line.
func child(t *testing.T, args ...string) (*exec.Cmd, <-chan string, <-chan string) {
	t.Helper()
	c := exec.Command(os.Args[0], "-test.run=^TestMainHelperProcess$")
	c.Env = append(os.Environ(), "UNDERCOOL_MAIN_ARGS="+strings.Join(args, "\x1f"), "UNDERCOOL_DB="+t.TempDir()+"/u.db")
	lines := func(r io.Reader) <-chan string {
		ch := make(chan string, 100)
		go func() {
			defer close(ch)
			sc := bufio.NewScanner(r)
			for sc.Scan() {
				ch <- sc.Text()
			}
		}()
		return ch
	}
	out, err := c.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	errp, err := c.StderrPipe()
	if err != nil {
		t.Fatal(err)
	}
	if err := c.Start(); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { c.Process.Kill(); c.Wait() })
	return c, lines(out), lines(errp)
}

// waitLine waits for a line holding want, up to 20 s.
func waitLine(t *testing.T, ch <-chan string, want string) {
	t.Helper()
	deadline := time.After(20 * time.Second)
	for {
		select {
		case l, ok := <-ch:
			if !ok {
				t.Fatalf("output ended before %q", want)
			}
			if strings.Contains(l, want) {
				return
			}
		case <-deadline:
			t.Fatalf("no line %q in 20 s", want)
		}
	}
}

// exitCode waits up to 20 s for c to exit and returns its status.
func exitCode(t *testing.T, c *exec.Cmd) int {
	t.Helper()
	done := make(chan error, 1)
	go func() { done <- c.Wait() }()
	select {
	case err := <-done:
		var ee *exec.ExitError
		if errors.As(err, &ee) {
			return ee.ExitCode()
		}
		if err != nil {
			t.Fatal(err)
		}
		return 0
	case <-time.After(20 * time.Second):
		t.Fatal("the program did not end in 20 s")
		return -1
	}
}

// TestFaultSecondInterrupt: the first Ctrl-C or SIGTERM asks for a clean
// stop; a second one ends the program at once, whatever the stop is
// waiting for, with 130 (SIGINT) or 143 (SIGTERM). Before the fix every
// later signal was ignored and only kill -9 ended such a program.
func TestFaultSecondInterrupt(t *testing.T) {
	for _, c := range []struct {
		sig  syscall.Signal
		code int
	}{{syscall.SIGINT, 130}, {syscall.SIGTERM, 143}} {
		t.Run(c.sig.String(), func(t *testing.T) {
			p, _, stderr := child(t, "test-hang")
			waitLine(t, stderr, "waiting")
			p.Process.Signal(c.sig)
			waitLine(t, stderr, "stopping cleanly")
			p.Process.Signal(c.sig)
			waitLine(t, stderr, "again: stopping at once")
			if got := exitCode(t, p); got != c.code {
				t.Errorf("exit status %d, want %d", got, c.code)
			}
		})
	}
}

// TestFaultSimulateServeSignal: `simulate --serve` with nobody reading its
// pseudo-terminal ends cleanly on the first SIGTERM or Ctrl-C. Before the
// fix a write to the full terminal never returned and the program waited
// for it for ever. At 1000 times real time on four channels the deck
// writes about 1 MB/s, so the terminal's buffer (4 to 64 KiB) is full
// well within the second waited.
func TestFaultSimulateServeSignal(t *testing.T) {
	for _, sig := range []syscall.Signal{syscall.SIGTERM, syscall.SIGINT} {
		t.Run(sig.String(), func(t *testing.T) {
			p, stdout, _ := child(t, "simulate", "--serve", "--speed", "1000", "--channels", "1,2,3,4")
			waitLine(t, stdout, "virtual device:")
			time.Sleep(time.Second) // for the buffer to fill; the test passes (and shows nothing) if it has not
			p.Process.Signal(sig)
			if got := exitCode(t, p); got != 0 {
				t.Errorf("exit status %d, want 0 (a clean stop)", got)
			}
		})
	}
}
