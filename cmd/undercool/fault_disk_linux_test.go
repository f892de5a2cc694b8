//go:build linux

package main

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// faultReadOnlyTmpfs mounts a small tmpfs in a temp dir, lets fill put
// files in it, remounts it read-only (MS_REMOUNT|MS_RDONLY) and unmounts
// it when the test ends. We run as root, so permissions would not stop a
// write. Skipped, saying why, where mounting is not permitted.
func faultReadOnlyTmpfs(t *testing.T, fill func(dir string)) string {
	t.Helper()
	dir := t.TempDir()
	if err := syscall.Mount("tmpfs", dir, "tmpfs", 0, "size=1m"); err != nil {
		t.Skipf("cannot mount a tmpfs here (needs root or CAP_SYS_ADMIN): %v", err)
	}
	t.Cleanup(func() {
		if err := syscall.Unmount(dir, 0); err != nil {
			t.Errorf("unmounting %s: %v", dir, err)
		}
	})
	fill(dir)
	if err := syscall.Mount("", dir, "", syscall.MS_REMOUNT|syscall.MS_RDONLY, ""); err != nil {
		t.Fatalf("remount read-only: %v", err)
	}
	return dir
}

// TestFaultRecordOutReadOnly: `undercool record --out` into a read-only
// directory fails at the start, before any pour (the device here sends
// nothing, and --wait-s is far longer than the test waits), with exit 1
// and an error naming the directory (before the acquire fix that came with
// this test, record waited for the pour and only then failed, losing the
// cup).
func TestFaultRecordOutReadOnly(t *testing.T) {
	dir := faultReadOnlyTmpfs(t, func(string) {})
	_, name := acqPTY(t)
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
	defer cancel()
	start := time.Now()
	for _, args := range [][]string{
		{"record", "--port", name, "--out", filepath.Join(dir, "L-2417-cup1.csv"), "--wait-s", "30"},
		{"record", "--port", name, "--dir", filepath.Join(dir, "deck"), "--wait-s", "30"},
	} {
		code, stdout, stderr := acqRun(t, ctx, args...)
		if code != 1 || stdout != "" || !strings.Contains(stderr, dir) || !strings.Contains(stderr, "read-only file system") {
			t.Errorf("%v: exit %d, stdout %q, stderr:\n%s", args, code, stdout, stderr)
		}
	}
	if ctx.Err() != nil {
		t.Fatalf("record did not fail at the start (%v)", time.Since(start))
	}
}

// TestFaultAnalyzeStoreReadOnly: `undercool analyze --store` with the
// records database in a read-only directory stops with exit 1 and an error
// naming the database, before analysing; the database is unchanged, and
// history, export, verify and report still read it (read-only, with a
// note).
func TestFaultAnalyzeStoreReadOnly(t *testing.T) {
	src := t.TempDir()
	cup := simulatedCup(t, src, "L-2417-cup1.csv", "grey-iron", 17)
	var db string
	faultReadOnlyTmpfs(t, func(dir string) {
		db = filepath.Join(dir, "undercool.db")
		if code, _, errs := recordsRun(t, "", "analyze", "--store", "--db", db, cup); code != 0 {
			t.Fatalf("storing the first analysis: %s", errs)
		}
	})
	before, _ := os.ReadFile(db)
	code, out, errs := recordsRun(t, "", "analyze", "--json", "--store", "--db", db, cup)
	if code != 1 || out != "" || !strings.Contains(errs, db) || !strings.Contains(errs, "read-only file system") {
		t.Errorf("exit %d, stdout %q, stderr %q", code, out, errs)
	}
	if after, _ := os.ReadFile(db); string(after) != string(before) {
		t.Error("the database changed")
	}
	// The records can still be read there: history, export and verify
	// open the database read-only and say so; nothing changes.
	page := filepath.Join(src, "L-2417-cup1.svg")
	for _, args := range [][]string{{"history", "--db", db}, {"export", "--db", db}, {"verify", "--db", db}, {"report", "1", "--db", db, "--out", page}} {
		code, out, errs := recordsRun(t, "", args...)
		if code != 0 || !strings.Contains(errs, "read read-only") || !strings.Contains(errs, db) {
			t.Errorf("%v: exit %d, stderr %q", args, code, errs)
		}
		if (args[0] == "history" || args[0] == "export") && !strings.Contains(out, "grey-iron") {
			t.Errorf("%v: the stored sample is not listed:\n%s", args, out)
		}
	}
	if st, err := os.Stat(page); err != nil || st.Size() == 0 {
		t.Errorf("no report page from the read-only records: %v", err)
	}
	if after, _ := os.ReadFile(db); string(after) != string(before) {
		t.Error("the database changed while read")
	}
}
