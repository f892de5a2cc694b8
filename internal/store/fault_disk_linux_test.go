//go:build linux

package store

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// faultTmpfs mounts a tmpfs of the given size (e.g. "512k") in a temp dir
// and unmounts it when the test ends. Where mounting is not permitted (not
// root, no CAP_SYS_ADMIN) the test is skipped, saying why. We run as root,
// so file permissions cannot stand in for a full disk or a read-only
// directory.
func faultTmpfs(t *testing.T, size string) string {
	t.Helper()
	dir := t.TempDir()
	if err := syscall.Mount("tmpfs", dir, "tmpfs", 0, "size="+size); err != nil {
		t.Skipf("cannot mount a size-limited tmpfs here (needs root or CAP_SYS_ADMIN): %v", err)
	}
	t.Cleanup(func() {
		if err := syscall.Unmount(dir, 0); err != nil {
			t.Errorf("unmounting %s: %v", dir, err)
		}
	})
	return dir
}

// faultStoreWith opens dir/undercool.db and stores n constructed samples.
func faultStoreWith(t *testing.T, dir string, n int) (*DB, string) {
	t.Helper()
	path := filepath.Join(dir, "undercool.db")
	db, err := Open(context.Background(), path)
	if err != nil {
		t.Fatal(err)
	}
	for i := range n {
		if _, err := db.AddSample(context.Background(), Sample{Sample: fmt.Sprintf("L-2417 cup %d", i+1), Alloy: "grey-iron",
			Record: constructedRecord("grey-iron", 1146, "pass")}); err != nil {
			t.Fatal(err)
		}
	}
	return db, path
}

// TestFaultStoreDiskFull fills a real filesystem (a 1 MiB tmpfs with a
// filler file) under a database with rows in it: the batch that does not
// fit fails with a disk-full error naming the database, the earlier rows
// are intact (integrity_check ok, also after closing and reopening), and
// once space is freed the database takes new samples.
func TestFaultStoreDiskFull(t *testing.T) {
	ctx := context.Background()
	dir := faultTmpfs(t, "1m")
	db, path := faultStoreWith(t, dir, 3)
	defer func() { db.Close() }()
	var st syscall.Statfs_t
	if err := syscall.Statfs(dir, &st); err != nil {
		t.Fatal(err)
	}
	filler := filepath.Join(dir, "filler")
	if err := os.WriteFile(filler, make([]byte, int64(st.Bavail)*st.Bsize-8*4096), 0o644); err != nil {
		t.Fatalf("filling the tmpfs: %v", err)
	}
	batch := make([]Sample, 400)
	for i := range batch {
		batch[i] = Sample{Sample: fmt.Sprintf("L-%d", 3000+i), Note: strings.Repeat("filler note ", 80), Alloy: "grey-iron",
			Record: constructedRecord("grey-iron", 1140, "marginal")}
	}
	_, err := db.AddSamples(ctx, batch)
	if err == nil || !strings.Contains(err.Error(), path) || !strings.Contains(err.Error(), "disk is full") {
		t.Fatalf("AddSamples on a full disk: %v; want a disk-full error naming %s", err, path)
	}
	t.Logf("full disk: %v", err)
	if n := count(t, db, "samples"); n != 3 {
		t.Fatalf("%d samples after the failed batch, want the 3 stored before", n)
	}
	integrity(t, db)

	if err := os.Remove(filler); err != nil {
		t.Fatal(err)
	}
	db.Close()
	db, err = Open(ctx, path)
	if err != nil {
		t.Fatal(err)
	}
	integrity(t, db)
	if n := count(t, db, "samples"); n != 3 {
		t.Fatalf("%d samples after reopening, want 3", n)
	}
	if _, err := db.AddSamples(ctx, batch[:20]); err != nil {
		t.Fatalf("with space again: %v", err)
	}
}

// TestFaultStoreReadOnlyDir: a database on a filesystem remounted
// read-only (MS_REMOUNT|MS_RDONLY) and a new database in a read-only
// directory give a clear error naming the path at Open, before anything
// is written; the stored rows are intact once it is writable again.
func TestFaultStoreReadOnlyDir(t *testing.T) {
	ctx := context.Background()
	dir := faultTmpfs(t, "1m")
	db, path := faultStoreWith(t, dir, 1)
	db.Close()
	remount := func(flags uintptr) {
		t.Helper()
		if err := syscall.Mount("", dir, "", syscall.MS_REMOUNT|flags, ""); err != nil {
			t.Fatalf("remount: %v", err)
		}
	}
	remount(syscall.MS_RDONLY)
	for _, p := range []string{path, filepath.Join(dir, "new.db"), filepath.Join(dir, "sub", "new.db")} {
		db, err := Open(ctx, p)
		if err == nil {
			db.Close()
			t.Errorf("%s opened on a read-only filesystem", p)
			continue
		}
		if !strings.Contains(err.Error(), p) || !strings.Contains(err.Error(), "read-only file system") || !errors.Is(err, ErrNotWritable) {
			t.Errorf("Open(%s): %v; want a read-only error naming it", p, err)
		}
		t.Logf("read-only: %v", err)
	}
	// the records can still be read there
	ro, err := OpenReadOnly(ctx, path)
	if err != nil {
		t.Fatalf("OpenReadOnly on the read-only filesystem: %v", err)
	}
	es, err := ro.History(ctx, Filter{})
	if err != nil || len(es) != 1 {
		t.Errorf("history read-only: %d entries, %v", len(es), err)
	}
	ro.Close()
	remount(0)
	db, err = Open(ctx, path)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	integrity(t, db)
	if n := count(t, db, "samples"); n != 1 {
		t.Fatalf("%d samples, want 1", n)
	}
}
