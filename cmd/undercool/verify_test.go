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

func TestVerifyCommand(t *testing.T) {
	dir := t.TempDir()
	dbPath := filepath.Join(dir, "records.db")
	db, err := store.Open(context.Background(), dbPath)
	if err != nil {
		t.Fatal(err)
	}
	var curves []string
	for _, name := range []string{"L-2417.csv", "L-2418.csv"} {
		p := filepath.Join(dir, name)
		// constructed three-reading curve files
		os.WriteFile(p, []byte("# ladle: "+name+"\ntime_s,temp_c\n0,1290.5\n0.1,1290.25\n"), 0o644)
		sum, err := store.HashFile(p)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := db.AddSample(context.Background(), store.Sample{Sample: name, CurvePath: p, CurveSHA256: sum,
			Record: assess.Record{Verdict: assess.VerdictPass}}); err != nil {
			t.Fatal(err)
		}
		curves = append(curves, p)
	}
	db.Close()

	code, out, errs := recordsRun(t, "", "verify", "--db", dbPath)
	if code != 0 || !strings.Contains(out, "2 curve files checked: 2 as stored, 0 changed, 0 missing") {
		t.Fatalf("untouched: status %d\n%s%s", code, out, errs)
	}
	// one reading edited by a tenth of a degree, one file deleted
	os.WriteFile(curves[0], []byte("# ladle: L-2417.csv\ntime_s,temp_c\n0,1290.6\n0.1,1290.25\n"), 0o644)
	os.Remove(curves[1])
	code, out, _ = recordsRun(t, dbPath, "verify")
	if code != 1 {
		t.Fatalf("tampered: status %d, want 1\n%s", code, out)
	}
	if !strings.Contains(out, "CHANGED") || !strings.Contains(out, curves[0]) || !strings.Contains(out, "MISSING") ||
		!strings.Contains(out, curves[1]) || !strings.Contains(out, "0 as stored, 1 changed, 1 missing") {
		t.Fatalf("report:\n%s", out)
	}
}
