// Package atomicfile writes whole files so that a crash or a full disk
// leaves either the old file or the complete new one, never a torn one: the
// data goes to a temporary file beside the target, is fsynced, and is then
// renamed over it (rename within one directory is atomic on POSIX systems
// and on NTFS).
package atomicfile

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
)

// Write writes what write produces to path, replacing any file there. The
// temporary file ".NAME.tmp*" is removed when anything fails; perm is the
// new file's mode less what the process's umask takes away, as for any
// file a program creates (0644 under the usual umask 022).
func Write(path string, perm os.FileMode, write func(io.Writer) error) error {
	dir := filepath.Dir(path)
	f, err := createTemp(dir, "."+filepath.Base(path)+".tmp", perm)
	if err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	tmp := f.Name()
	bw := bufio.NewWriter(f)
	err = write(bw)
	if err == nil {
		err = bw.Flush()
	}
	if err == nil {
		err = f.Sync()
	}
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Rename(tmp, path)
	}
	if err != nil {
		os.Remove(tmp)
		return fmt.Errorf("writing %s: %w", path, err)
	}
	syncDir(dir)
	return nil
}

// WriteBytes is Write for data already in memory.
func WriteBytes(path string, data []byte, perm os.FileMode) error {
	return Write(path, perm, func(w io.Writer) error {
		_, err := w.Write(data)
		return err
	})
}

// syncDir makes the rename itself durable where the system allows it
// (directories cannot be opened for sync on Windows; that is not an error).
func syncDir(dir string) {
	if d, err := os.Open(dir); err == nil {
		d.Sync()
		d.Close()
	}
}

// createTemp creates a new file dir/prefixNNNN with mode perm (the umask
// applies, unlike os.CreateTemp's fixed 0600).
func createTemp(dir, prefix string, perm os.FileMode) (*os.File, error) {
	var err error
	for range 100 {
		name := filepath.Join(dir, prefix+strconv.FormatUint(rand.Uint64(), 36))
		var f *os.File
		f, err = os.OpenFile(name, os.O_RDWR|os.O_CREATE|os.O_EXCL, perm)
		if !errors.Is(err, fs.ErrExist) {
			return f, err
		}
	}
	return nil, err
}
