//go:build windows

package main

import (
	"context"
	"errors"

	"github.com/undercool-foundry/undercool/internal/sim"
)

// serveDevice is not available on Windows.
func serveDevice(ctx context.Context, env *environ, deck *sim.Deck, opt sim.DeckOptions) error {
	return errors.New("the virtual device needs a Unix pseudo-terminal; on Windows use 'undercool simulate --out FILE' or 'undercool demo'")
}
