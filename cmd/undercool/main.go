// Command undercool is the melt-deck thermal-analysis tool: live cup
// acquisition, cooling-curve analysis, limits, records and reports.
//
// Each subcommand lives in its own file and registers itself in init.
package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"runtime/pprof"
	"sort"
	"sync"
	"syscall"

	"github.com/undercool-foundry/undercool/internal/escape"
)

// command is one subcommand of undercool.
type command struct {
	name    string
	summary string // one line for the command list
	// run gets the arguments after the subcommand's name. It returns an
	// error to print; errUsage prints the usage and exits 2.
	run func(ctx context.Context, env *environ, args []string) error
}

// environ is what a subcommand may touch of the process.
type environ struct {
	stdin  io.Reader
	stdout io.Writer
	stderr io.Writer
	getenv func(string) string
}

var commands = map[string]command{}

func register(c command) {
	if _, dup := commands[c.name]; dup {
		panic("undercool: command registered twice: " + c.name)
	}
	commands[c.name] = c
}

// exitError carries a chosen exit status without printing more.
type exitError struct{ code int }

func (e exitError) Error() string { return fmt.Sprintf("exit status %d", e.code) }

// errUsage asks main to print usage and exit with status 2.
var errUsage = errors.New("usage")

func main() {
	ctx, stop := interruptContext(os.Stderr)
	env := &environ{stdin: os.Stdin, stdout: os.Stdout, stderr: os.Stderr, getenv: os.Getenv}
	stopProfile := startProfile(env)
	code := runMain(ctx, env, os.Args[1:])
	stopProfile()
	stop()
	os.Exit(code)
}

// interruptContext is the program's context: the first Ctrl-C (SIGINT) or
// SIGTERM cancels it, asking for a clean stop (a sample being recorded is
// completed and stored, as much as is recorded); a second one ends the
// program at once, with the status a shell gives a process killed by that
// signal (130 for SIGINT, 143 for SIGTERM), saying so on stderr. What is
// recorded is safe even then: the raw log of a sample is recovered at the
// next start.
func interruptContext(stderr io.Writer) (context.Context, context.CancelFunc) {
	ctx, cancel := context.WithCancel(context.Background())
	sigs := make(chan os.Signal, 2)
	signal.Notify(sigs, os.Interrupt, syscall.SIGTERM)
	done := make(chan struct{})
	go func() {
		select {
		case <-sigs:
			cancel()
		case <-done:
			return
		}
		select {
		case s := <-sigs:
			fmt.Fprintf(stderr, "undercool: %v again: stopping at once (a sample being recorded is recovered at the next start)\n", s)
			code := 130
			if s == syscall.SIGTERM {
				code = 143
			}
			os.Exit(code)
		case <-done:
		}
	}()
	var once sync.Once
	return ctx, func() {
		once.Do(func() {
			signal.Stop(sigs)
			close(done)
			cancel()
		})
	}
}

func runMain(ctx context.Context, env *environ, args []string) int {
	if len(args) == 0 || args[0] == "help" || args[0] == "-h" || args[0] == "--help" {
		usage(env.stdout)
		if len(args) == 0 {
			return 2
		}
		return 0
	}
	c, ok := commands[args[0]]
	if !ok {
		fmt.Fprintf(env.stderr, "undercool: unknown command %q (try 'undercool help')\n", args[0])
		return 2
	}
	err := c.run(ctx, env, args[1:])
	var ee exitError
	switch {
	case err == nil:
		return 0
	case errors.As(err, &ee):
		return ee.code
	case errors.Is(err, errUsage):
		fmt.Fprintf(env.stderr, "undercool %s: see 'undercool %s -h'\n", c.name, c.name)
		return 2
	default:
		fmt.Fprintf(env.stderr, "undercool %s: %s\n", c.name, escape.Text(err.Error()))
		return 1
	}
}

func usage(w io.Writer) {
	fmt.Fprintln(w, "undercool: thermal analysis of cast-iron and aluminium cup samples on the melt deck.")
	fmt.Fprintln(w, "Advice only: follow your shop's written procedures and your metallurgist.")
	fmt.Fprintln(w, "\nCommands:")
	names := make([]string, 0, len(commands))
	for n := range commands {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		fmt.Fprintf(w, "  %-10s %s\n", n, commands[n].summary)
	}
	fmt.Fprintln(w, "\nRun 'undercool COMMAND -h' for a command's options.")
}

// startProfile writes a CPU profile of the whole run to the file named by
// $UNDERCOOL_CPUPROFILE, for developers measuring a live session (see
// DEVELOPERS.md); it returns the function that ends the profile.
func startProfile(env *environ) func() {
	path := env.getenv("UNDERCOOL_CPUPROFILE")
	if path == "" {
		return func() {}
	}
	f, err := os.Create(path)
	if err == nil {
		err = pprof.StartCPUProfile(f)
	}
	if err != nil {
		fmt.Fprintf(env.stderr, "undercool: UNDERCOOL_CPUPROFILE %s: %v\n", path, err)
		return func() {}
	}
	return func() {
		pprof.StopCPUProfile()
		f.Close()
	}
}

// parseFlags parses a subcommand's args. help is true when -h or -help was
// asked (the flag set has printed its usage; the command then returns nil);
// a bad flag gives errUsage (the flag set has said what was wrong).
func parseFlags(fs *flag.FlagSet, args []string) (help bool, err error) {
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return true, nil
		}
		return false, errUsage
	}
	return false, nil
}
