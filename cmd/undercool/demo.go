package main

import (
	"bytes"
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"sync"

	"github.com/undercool-foundry/undercool/acquire"
	"github.com/undercool-foundry/undercool/internal/arrest"
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
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return nil
		}
		return errUsage
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
	watch := &alloyWatch{r: pr, fam: map[string]arrest.Family{}}
	var once sync.Once
	open := func(ctx context.Context) (io.ReadCloser, error) {
		var rc io.ReadCloser
		once.Do(func() {
			rc = struct {
				io.Reader
				io.Closer
			}{watch, pr}
		})
		if rc == nil {
			return nil, errors.New("the simulated deck has stopped")
		}
		return rc, nil
	}
	title := fmt.Sprintf("demo · SIMULATED deck · seed %d · %g×", *seed, *speed)
	return runDashboard(ctx, env, dashboard{
		dir: dir, limitsPath: limitsPath, title: title,
		open: acquire.Opener(open), cfg: acquire.Config{Port: "simulated deck", Finished: watch.finished},
		simulated: true, maxSamples: *samples,
		feed: func(ctx context.Context) error {
			err := deck.Run(ctx, pw)
			pw.CloseWithError(errors.Join(err, errors.New("the simulated deck stopped")))
			return err
		},
	})
}

// alloyWatch reads the simulated deck's line stream on its way to the
// acquirer and notes each channel's alloy from its device-info lines, so
// the end of freezing is judged with the right detector family (the deck
// pours iron, aluminium and pure-metal cups in turn).
type alloyWatch struct {
	r    io.Reader
	mu   sync.Mutex
	fam  map[string]arrest.Family
	part []byte
}

func (w *alloyWatch) Read(p []byte) (int, error) {
	n, err := w.r.Read(p)
	w.part = append(w.part, p[:n]...)
	for {
		i := bytes.IndexByte(w.part, '\n')
		if i < 0 {
			break
		}
		w.line(w.part[:i])
		w.part = w.part[i+1:]
	}
	if len(w.part) > 4096 {
		w.part = w.part[:0]
	}
	return n, err
}

// line takes `! ... alloy=NAME ch=ID ...` (values may be quoted).
func (w *alloyWatch) line(l []byte) {
	if len(l) == 0 || l[0] != '!' {
		return
	}
	alloy, ch := "", "1"
	for _, f := range strings.Fields(string(l[1:])) {
		k, v, ok := strings.Cut(f, "=")
		if !ok {
			continue
		}
		v = strings.Trim(v, `"`)
		switch k {
		case "alloy":
			alloy = v
		case "ch":
			ch = v
		}
	}
	if alloy == "" {
		return
	}
	w.mu.Lock()
	w.fam[ch] = limits.Family(alloy)
	w.mu.Unlock()
}

// finished is the acquirer's end-of-freezing test: the analysis under the
// family of the channels' current alloys (with one cup, exactly its own;
// with two of different families, either).
func (w *alloyWatch) finished(t, temp []float64) bool {
	w.mu.Lock()
	fams := map[arrest.Family]bool{}
	for _, f := range w.fam {
		fams[f] = true
	}
	w.mu.Unlock()
	if len(fams) == 0 {
		fams[arrest.FamilyIron] = true
	}
	for f := range fams {
		if arrest.Analyze(t, temp, arrest.Options{Family: f}).Complete {
			return true
		}
	}
	return false
}
