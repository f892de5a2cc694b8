//go:build !(linux || darwin || freebsd || openbsd || netbsd || dragonfly)

package acquire

import (
	"errors"
	"os"
)

// errLocked says another process holds the raw log's lock (never, here:
// this system has no advisory locks, so do not run two recorders on one
// output directory).
var errLocked = errors.New("locked by another recorder")

// keepOpenWhileCompleting: an open file cannot be removed here.
const keepOpenWhileCompleting = false

func lockFile(*os.File) (unlock func(), err error) { return func() {}, nil }

// syncDir does nothing: directories cannot be fsynced here; the rename
// itself is what the system makes durable.
func syncDir(string) error { return nil }
