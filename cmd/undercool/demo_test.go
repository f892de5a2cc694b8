package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// Without a terminal the demo prints the SIMULATED deck's readings and a
// sample's result as lines, keeping its records in --data.
func TestDemoLines(t *testing.T) {
	dir := t.TempDir()
	var out, errb bytes.Buffer
	env := &environ{stdin: strings.NewReader(""), stdout: &out, stderr: &errb, getenv: func(string) string { return "" }}
	ctx, cancel := context.WithTimeout(context.Background(), 90*time.Second)
	defer cancel()
	code := runMain(ctx, env, []string{"demo", "--speed", "50", "--samples", "1", "--data", dir})
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	s := out.String()
	for _, want := range []string{"Molten metal", "sample started", "RESULT cup 1", "°C"} {
		if !strings.Contains(s, want) {
			t.Errorf("output lacks %q:\n%s", want, s)
		}
	}
	for _, f := range []string{"undercool.db", "undercool.log", "limits.toml"} {
		if _, err := os.Stat(filepath.Join(dir, f)); err != nil {
			t.Errorf("--data has no %s: %v", f, err)
		}
	}
}

func TestDashboardUsageErrors(t *testing.T) {
	for _, args := range [][]string{{"demo", "--speed", "0"}, {"demo", "--cups", "3"}, {"monitor"}, {"replay"}, {"replay", "a", "b"}} {
		var out, errb bytes.Buffer
		env := &environ{stdin: strings.NewReader(""), stdout: &out, stderr: &errb, getenv: func(string) string { return "" }}
		if code := runMain(context.Background(), env, args); code != 2 {
			t.Errorf("%v: exit %d, want 2 (%s)", args, code, errb.String())
		}
	}
}

func TestReplayMissingFileNamesIt(t *testing.T) {
	var out, errb bytes.Buffer
	env := &environ{stdin: strings.NewReader(""), stdout: &out, stderr: &errb, getenv: func(string) string { return "" }}
	path := filepath.Join(t.TempDir(), "no-such.csv")
	if code := runMain(context.Background(), env, []string{"replay", path}); code != 1 || !strings.Contains(errb.String(), "no-such.csv") {
		t.Errorf("exit %d, message %q", code, errb.String())
	}
}
