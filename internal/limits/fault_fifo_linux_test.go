//go:build linux

package limits

import (
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// TestFaultLoadFIFO: a named pipe given as a limits or calibration file is
// refused without opening it (opening a FIFO with no writer blocks).
func TestFaultLoadFIFO(t *testing.T) {
	fifo := filepath.Join(t.TempDir(), "limits.toml")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Skipf("cannot make a FIFO here: %v", err)
	}
	if _, err := Load(fifo); err == nil || !strings.Contains(err.Error(), fifo+": not a regular file") {
		t.Errorf("Load: %v", err)
	}
	if _, err := LoadCalibration(fifo); err == nil || !strings.Contains(err.Error(), "not a regular file") {
		t.Errorf("LoadCalibration: %v", err)
	}
}
