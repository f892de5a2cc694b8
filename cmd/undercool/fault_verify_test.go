package main

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/store"
)

// TestFaultVerifyTruncatedAndUnreadable: `undercool verify` after a stored
// curve file was truncated (a torn copy), emptied, and replaced by a
// directory: each is reported by path (CHANGED or UNREADABLE) and the exit
// status is 1; the stored records themselves are untouched.
func TestFaultVerifyTruncatedAndUnreadable(t *testing.T) {
	ctx := context.Background()
	dir := t.TempDir()
	dbPath := filepath.Join(dir, "records.db")
	db, err := store.Open(ctx, dbPath)
	if err != nil {
		t.Fatal(err)
	}
	var curves []string
	for _, name := range []string{"L-2417.csv", "L-2418.csv", "L-2419.csv"} {
		// constructed curve files of a few readings
		p := writeText(t, dir, name, "# ladle: "+strings.TrimSuffix(name, ".csv")+"\ntime_s,temp_c\n0,1290.5\n0.1,1290.25\n0.2,1290\n")
		sum, err := store.HashFile(p)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := db.AddSample(ctx, store.Sample{Sample: name, CurvePath: p, CurveSHA256: sum, Record: assess.Record{Verdict: assess.VerdictPass}}); err != nil {
			t.Fatal(err)
		}
		curves = append(curves, p)
	}
	db.Close()
	b, _ := os.ReadFile(curves[0])
	os.WriteFile(curves[0], b[:len(b)-7], 0o644) // torn copy
	os.WriteFile(curves[1], nil, 0o644)          // emptied
	os.Remove(curves[2])
	os.Mkdir(curves[2], 0o755) // a directory where the file was

	code, out, errs := recordsRun(t, "", "verify", "--db", dbPath)
	if code != 1 {
		t.Fatalf("exit %d, want 1\n%s%s", code, out, errs)
	}
	for _, want := range []string{"CHANGED     sample 1 \"L-2417.csv\": " + curves[0], "CHANGED     sample 2 \"L-2418.csv\": " + curves[1],
		"UNREADABLE  sample 3 \"L-2419.csv\": ", curves[2], "3 curve files checked: 0 as stored, 2 changed, 0 missing, 1 unreadable"} {
		if !strings.Contains(out, want) {
			t.Errorf("report lacks %q:\n%s", want, out)
		}
	}
	code, out, _ = recordsRun(t, "", "history", "--db", dbPath)
	if code != 0 || strings.Count(out, "L-24") < 3 {
		t.Errorf("history after verify: exit %d\n%s", code, out)
	}
}
