//go:build !windows

package main

import (
	"context"
	"fmt"
	"os"
	"time"

	"github.com/charmbracelet/x/term"
	"github.com/creack/pty"

	"github.com/undercool-foundry/undercool/internal/sim"
)

// serveDevice opens a pseudo-terminal in raw mode, prints the path of its
// device side and writes the deck's line protocol to it until ctx ends.
// Lines are dropped, as on a real serial line, while nobody reads.
func serveDevice(ctx context.Context, env *environ, deck *sim.Deck, opt sim.DeckOptions) error {
	ptmx, tty, err := pty.Open()
	if err != nil {
		return fmt.Errorf("opening a pseudo-terminal: %w", err)
	}
	defer tty.Close()
	defer ptmx.Close()
	if _, err := term.MakeRaw(tty.Fd()); err != nil {
		return fmt.Errorf("raw mode on %s: %w", tty.Name(), err)
	}
	fmt.Fprintf(env.stdout, "virtual device: %s\n", tty.Name())
	fmt.Fprintf(env.stdout, "serving %s\n", deckSummary(opt))
	fmt.Fprintf(env.stdout, "try: undercool record --port %s   (SIMULATED data; Ctrl-C stops)\n", tty.Name())
	stop := context.AfterFunc(ctx, func() { ptmx.Close() })
	defer stop()
	w := newDropWriter(ptmx)
	defer w.Close()
	if err := deck.Run(ctx, w); err != nil && ctx.Err() == nil {
		return fmt.Errorf("virtual device %s: %w", tty.Name(), err)
	}
	return nil
}

// dropWriter hands writes to a goroutine and drops them when it falls
// behind, so a device nobody reads never blocks the deck's clock.
type dropWriter struct {
	ch   chan []byte
	done chan struct{}
}

func newDropWriter(f *os.File) *dropWriter {
	w := &dropWriter{ch: make(chan []byte, 64), done: make(chan struct{})}
	go func() {
		defer close(w.done)
		for b := range w.ch {
			if _, err := f.Write(b); err != nil {
				for range w.ch { // closed pty: drain until Close
				}
				return
			}
		}
	}()
	return w
}

func (w *dropWriter) Write(p []byte) (int, error) {
	select {
	case w.ch <- append([]byte(nil), p...):
	default: // nobody is reading: the bytes are lost, as on a serial line
	}
	return len(p), nil
}

// Close ends the writer. It waits for the bytes handed over for at most a
// second: a write to a pseudo-terminal that nobody reads blocks until
// someone does, and closing the file does not wake it (before this bound,
// simulate --serve with nobody reading was deaf to Ctrl-C and SIGTERM).
func (w *dropWriter) Close() {
	close(w.ch)
	t := time.NewTimer(time.Second)
	defer t.Stop()
	select {
	case <-w.done:
	case <-t.C:
	}
}
