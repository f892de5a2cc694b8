//go:build linux || darwin || freebsd || openbsd || netbsd || dragonfly

package acquire

import (
	"errors"
	"fmt"
	"os"
	"syscall"
)

// errLocked says another process holds the raw log's lock.
var errLocked = errors.New("locked by another recorder")

// keepOpenWhileCompleting: a file may be removed while open here, so the
// raw log stays locked until it is completed.
const keepOpenWhileCompleting = true

// lockFile takes an exclusive advisory lock (flock) on f without waiting.
func lockFile(f *os.File) (unlock func(), err error) {
	fd := int(f.Fd())
	if err := syscall.Flock(fd, syscall.LOCK_EX|syscall.LOCK_NB); err != nil {
		if errors.Is(err, syscall.EWOULDBLOCK) {
			return nil, errLocked
		}
		return nil, err
	}
	return func() { syscall.Flock(fd, syscall.LOCK_UN) }, nil
}

// syncDir fsyncs a directory so that a new or renamed name in it lasts.
func syncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return fmt.Errorf("acquire: %w", err)
	}
	defer d.Close()
	if err := d.Sync(); err != nil && !errors.Is(err, syscall.EINVAL) {
		return fmt.Errorf("acquire: fsync %s: %w", dir, err)
	}
	return nil
}
