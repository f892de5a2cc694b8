//go:build linux

package limits

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// TestFaultSaveReadOnlyDir saves limits into a directory on a tmpfs
// remounted read-only (we run as root: permissions would not stop the
// write), and into a full one: Save fails with an error naming the place,
// and the old limits file is intact, byte for byte, with no backup or
// temporary file left. Skipped where mounting is not permitted.
func TestFaultSaveReadOnlyDir(t *testing.T) {
	dir := t.TempDir()
	if err := syscall.Mount("tmpfs", dir, "tmpfs", 0, "size=256k"); err != nil {
		t.Skipf("cannot mount a tmpfs here (needs root or CAP_SYS_ADMIN): %v", err)
	}
	t.Cleanup(func() {
		if err := syscall.Unmount(dir, 0); err != nil {
			t.Errorf("unmounting %s: %v", dir, err)
		}
	})
	path := filepath.Join(dir, "cindermoth.toml")
	if err := os.WriteFile(path, Example(), 0o644); err != nil {
		t.Fatal(err)
	}
	b, err := Load(path)
	if err != nil {
		t.Fatal(err)
	}
	b.EditedBy, b.Version = "Tobin Quenchmoor", "cindermoth-3"
	listing := func() []string {
		ents, _ := os.ReadDir(dir)
		var names []string
		for _, e := range ents {
			names = append(names, e.Name())
		}
		return names
	}

	if err := syscall.Mount("", dir, "", syscall.MS_REMOUNT|syscall.MS_RDONLY, ""); err != nil {
		t.Fatalf("remount read-only: %v", err)
	}
	err = Save(path, b)
	if err == nil || !strings.Contains(err.Error(), dir) || !strings.Contains(err.Error(), "read-only file system") {
		t.Errorf("Save into a read-only directory: %v; want an error naming %s", err, dir)
	}
	t.Logf("read-only: %v", err)
	if got, _ := os.ReadFile(path); !bytes.Equal(got, Example()) {
		t.Error("the old limits file changed")
	}
	if err := syscall.Mount("", dir, "", syscall.MS_REMOUNT, ""); err != nil {
		t.Fatalf("remount read-write: %v", err)
	}

	// Full: a filler leaves less room than a backup and a new file need.
	var st syscall.Statfs_t
	if err := syscall.Statfs(dir, &st); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "filler"), make([]byte, int64(st.Bavail)*st.Bsize-4096), 0o644); err != nil {
		t.Fatal(err)
	}
	err = Save(path, b)
	if err == nil || !strings.Contains(err.Error(), dir) || !strings.Contains(err.Error(), "no space left on device") {
		t.Errorf("Save on a full disk: %v; want an error naming %s", err, dir)
	}
	t.Logf("full: %v", err)
	if got, _ := os.ReadFile(path); !bytes.Equal(got, Example()) {
		t.Error("the old limits file changed on the full disk")
	}
	if names := listing(); strings.Join(names, " ") != "cindermoth.toml filler" {
		t.Errorf("left in the directory: %q", names)
	}
	if _, err := Load(path); err != nil {
		t.Errorf("the old file no longer loads: %v", err)
	}
}
