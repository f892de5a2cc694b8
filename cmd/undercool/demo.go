package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sync"

	"github.com/undercool-foundry/undercool/acquire"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sim"
)

func init() {
	register(command{
		name:    "demo",
		summary: "the live dashboard on a simulated melt deck (no hardware needed)",
		run:     runDemo,
	})
}

func runDemo(ctx context.Context, env *environ, args []string) error {
	fs := flag.NewFlagSet("demo", flag.ContinueOnError)
	fs.SetOutput(env.stderr)
	speed := fs.Float64("speed", 4, "how many times faster than real time the simulated deck runs (1 to 50)")
	seed := fs.Uint64("seed", 1, "random seed of the simulated deck (the same seed gives the same ladles)")
	data := fs.String("data", "", "keep curve files, records and the log in DIR (default: a temporary directory removed at exit)")
	cups := fs.Int("cups", 1, "cups poured side by side, 1 or 2")
	samples := fs.Int("samples", 0, "without a terminal: stop after this many finished samples (0: run until interrupted)")
	fs.Usage = func() {
		fmt.Fprintln(env.stderr, "usage: undercool demo [--speed X] [--seed N] [--data DIR] [--cups 1|2]")
		fmt.Fprintln(env.stderr, "The live dashboard fed by a SIMULATED melt deck through the real acquisition path.")
		fmt.Fprintln(env.stderr, "Without a terminal it prints the readings and results as lines.")
		fs.PrintDefaults()
	}
	if help, err := parseFlags(fs, args); help || err != nil {
		return err
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(env.stderr, "undercool demo: unexpected argument %q\n", fs.Arg(0))
		return errUsage
	}
	if *speed < 1 || *speed > 50 {
		fmt.Fprintf(env.stderr, "undercool demo: --speed %g: use 1 to 50\n", *speed)
		return errUsage
	}
	if *cups != 1 && *cups != 2 {
		fmt.Fprintf(env.stderr, "undercool demo: --cups %d: use 1 or 2\n", *cups)
		return errUsage
	}
	dir := *data
	if dir == "" {
		tmp, err := os.MkdirTemp("", "undercool-demo-")
		if err != nil {
			return fmt.Errorf("temporary data directory: %w", err)
		}
		defer os.RemoveAll(tmp)
		dir = tmp
	} else if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("--data %s: %w", dir, err)
	}
	// The demo's limits file: the shipped examples, editable and saved
	// (with a backup and a change log) inside the data directory.
	limitsPath := filepath.Join(dir, "limits.toml")
	if _, err := os.Stat(limitsPath); errors.Is(err, os.ErrNotExist) {
		if err := os.WriteFile(limitsPath, limits.Example(), 0o644); err != nil {
			return fmt.Errorf("demo limits file: %w", err)
		}
	}

	opts := sim.DeckOptions{Seed: *seed, Speed: *speed}
	if *cups == 2 {
		opts.Channels = []string{"1", "2"}
	}
	deck := sim.NewDeck(opts)
	pr, pw := io.Pipe()
	var once sync.Once
	open := func(ctx context.Context) (io.ReadCloser, error) {
		var rc io.ReadCloser
		once.Do(func() {
			rc = struct {
				io.Reader
				io.Closer
			}{pr, pr}
		})
		if rc == nil {
			return nil, errors.New("the simulated deck has stopped")
		}
		return rc, nil
	}
	title := fmt.Sprintf("demo · SIMULATED deck · seed %d · %g×", *seed, *speed)
	return runDashboard(ctx, env, dashboard{
		dir: dir, limitsPath: limitsPath, title: title,
		open: acquire.Opener(open), cfg: acquire.Config{Port: "simulated deck"}, // the end of freezing is judged by each sample's alloy (from the deck's info lines)
		maxSamples: *samples,
		feed: func(ctx context.Context) error {
			err := deck.Run(ctx, pw)
			pw.CloseWithError(errors.Join(err, errors.New("the simulated deck stopped")))
			return err
		},
	})
}
