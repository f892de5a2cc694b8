package limits

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestFaultLoadMissingOrCorrupt: a limits file that is missing, empty,
// binary, UTF-16, truncated in the middle of a table, or that holds NaN or
// infinite bands, is refused with an error naming the file (and the line
// and key where there is one); nothing falls back silently to other limits.
func TestFaultLoadMissingOrCorrupt(t *testing.T) {
	dir := t.TempDir()
	trunc := goodFile[:strings.Index(goodFile, "[alloy.grey-iron.metric")+len("[alloy.grey-iron.met")]
	for _, c := range []struct {
		name, text string
		line       int
		key, msg   string
	}{
		{"empty", "", 0, "version", "is required"},
		{"binary", "\x00\x01\xff\xfe\x89PNG\r\n\x1a\n", 1, "", "NULL bytes"},
		{"UTF-16 with BOM", "\xff\xfev\x00e\x00r\x00s\x00i\x00o\x00n\x00", 1, "", "UTF-16"},
		{"invalid UTF-8", "version = \"t\xe9\"\n", 1, "", "UTF-8"},
		{"truncated", trunc, 6, "", "expected"},
		{"NaN band", goodFile + "pass_max = nan\n", 9, "alloy.grey-iron.metric.eutectic_min_c.pass_max", "must be a finite number"},
		{"infinite band", strings.Replace(goodFile, "1138.0", "-inf", 1), 8, "alloy.grey-iron.metric.eutectic_min_c.marginal_min", "must be a finite number"},
	} {
		t.Run(c.name, func(t *testing.T) {
			path := filepath.Join(dir, strings.ReplaceAll(c.name, " ", "-")+".toml")
			if err := os.WriteFile(path, []byte(c.text), 0o644); err != nil {
				t.Fatal(err)
			}
			b, err := Load(path)
			var le *Error
			if err == nil || b != nil || !errors.As(err, &le) {
				t.Fatalf("Load: %v %v; want a *limits.Error", b, err)
			}
			if !strings.HasPrefix(err.Error(), path) || le.Line != c.line || (c.key != "" && le.Key != c.key) || !strings.Contains(err.Error(), c.msg) {
				t.Errorf("error %q (line %d, key %q); want %s, line %d, key %q, %q", err, le.Line, le.Key, path, c.line, c.key, c.msg)
			}
		})
	}
	missing := filepath.Join(dir, "no-such-limits.toml")
	if _, err := Load(missing); err == nil || !strings.Contains(err.Error(), missing) || !errors.Is(err, os.ErrNotExist) {
		t.Errorf("missing file: %v", err)
	}
	// A calibration_file that is missing is named too.
	withCal := filepath.Join(dir, "with-cal.toml")
	os.WriteFile(withCal, []byte(strings.Replace(goodFile, `version = "t1"`, "version = \"t1\"\ncalibration_file = \"gone.toml\"", 1)), 0o644)
	if _, err := Load(withCal); err == nil || !strings.Contains(err.Error(), filepath.Join(dir, "gone.toml")) {
		t.Errorf("missing calibration file: %v", err)
	}
}
