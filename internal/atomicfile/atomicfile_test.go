package atomicfile

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestWriteReplacesWhole(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "limits.toml")
	if err := os.WriteFile(path, []byte("old"), 0o600); err != nil {
		t.Fatal(err)
	}
	if err := WriteBytes(path, []byte("new contents"), 0o644); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(path)
	if err != nil || string(b) != "new contents" {
		t.Fatalf("read %q, %v", b, err)
	}
	if fi, _ := os.Stat(path); fi.Mode().Perm() != 0o644 {
		t.Errorf("mode %v, want 0644", fi.Mode().Perm())
	}
	assertOnly(t, dir, "limits.toml")
}

// A writer that fails leaves the old file as it was and no temporary file.
func TestWriteFailureKeepsOld(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "cup.csv")
	if err := os.WriteFile(path, []byte("time_s,temp_c\n0,25\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	boom := errors.New("disk gone")
	err := Write(path, 0o644, func(w io.Writer) error {
		io.WriteString(w, "time_s,temp_c\n0,")
		return boom
	})
	if !errors.Is(err, boom) {
		t.Fatalf("error %v, want it to wrap the writer's", err)
	}
	b, _ := os.ReadFile(path)
	if string(b) != "time_s,temp_c\n0,25\n" {
		t.Errorf("old file changed to %q", b)
	}
	assertOnly(t, dir, "cup.csv")
}

func TestWriteNamesPath(t *testing.T) {
	path := filepath.Join(t.TempDir(), "missing-dir", "x.csv")
	err := WriteBytes(path, nil, 0o644)
	if err == nil || !strings.Contains(err.Error(), path) {
		t.Fatalf("error %v, want it to name %s", err, path)
	}
}

func assertOnly(t *testing.T, dir string, names ...string) {
	t.Helper()
	es, _ := os.ReadDir(dir)
	if len(es) != len(names) {
		var got []string
		for _, e := range es {
			got = append(got, e.Name())
		}
		t.Fatalf("directory holds %v, want only %v", got, names)
	}
}
