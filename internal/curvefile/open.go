package curvefile

import (
	"fmt"
	"io/fs"
	"math"
	"os"
)

// openRegular opens path for reading where it is a regular file (after
// symbolic links), and returns its size from the opened file's status
// (-1 where it does not fit an int). Anything else is refused from its
// file status, before it is opened: opening a FIFO waits for a writer, and
// opening a device can have effects of its own. The open itself does not
// wait (openFlags) and the opened file is checked again, in case path was
// replaced in between.
func openRegular(path string) (*os.File, int, error) {
	fi, err := os.Stat(path)
	if err != nil {
		return nil, 0, fmt.Errorf("curvefile: %w", err)
	}
	if err := regular(path, fi); err != nil {
		return nil, 0, err
	}
	f, err := os.OpenFile(path, os.O_RDONLY|openFlags, 0)
	if err != nil {
		return nil, 0, fmt.Errorf("curvefile: %w", err)
	}
	if fi, err = f.Stat(); err == nil {
		err = regular(path, fi)
	}
	if err != nil {
		f.Close()
		return nil, 0, err
	}
	size := -1
	if fi.Size() <= math.MaxInt {
		size = int(fi.Size())
	}
	return f, size, nil
}

// regular refuses what is not a regular file, saying what it is.
func regular(path string, fi fs.FileInfo) error {
	m := fi.Mode()
	what := ""
	switch {
	case m.IsRegular():
		return nil
	case m.IsDir():
		what = "a directory"
	case m&fs.ModeNamedPipe != 0:
		what = "a FIFO (named pipe)"
	case m&fs.ModeSocket != 0:
		what = "a socket"
	case m&fs.ModeCharDevice != 0:
		what = "a character device"
	case m&fs.ModeDevice != 0:
		what = "a device"
	default:
		what = "not a regular file (" + m.Type().String() + ")"
	}
	return fmt.Errorf("curvefile: %s: %s: only a regular file is read as a curve file", path, what)
}
