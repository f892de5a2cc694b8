//go:build unix

package curvefile

import (
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// TestReadFileNotRegular: a FIFO without a writer, a character device and
// a directory are refused by what they are, at once (the FIFO is never
// opened, so nothing waits for a writer); a symbolic link to a curve file
// is read.
func TestReadFileNotRegular(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "L-2417.csv")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Skipf("no FIFO here: %v", err)
	}
	good := filepath.Join(dir, "good.csv")
	if err := os.WriteFile(good, []byte("time_s,temp_c\n0,1300\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	link := filepath.Join(dir, "link.csv")
	if err := os.Symlink(good, link); err != nil {
		t.Fatal(err)
	}
	for _, tt := range []struct{ path, want string }{
		{fifo, fifo + ": a FIFO (named pipe): only a regular file is read as a curve file"},
		{"/dev/null", "/dev/null: a character device"},
		{dir, dir + ": a directory"},
	} {
		c, err := ReadFile(tt.path)
		if err == nil || c != nil || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("%s: %v, want %q", tt.path, err, tt.want)
		}
	}
	if c, err := ReadFile(link); err != nil || len(c.Time) != 1 {
		t.Errorf("symbolic link: %v", err)
	}
}
