package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"github.com/undercool-foundry/undercool/acquire"
)

// acqRun runs undercool with args and returns the exit status and output.
func acqRun(t testing.TB, ctx context.Context, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	db := acqDB(t)
	env := &environ{stdin: strings.NewReader(""), stdout: &out, stderr: &errb, getenv: func(k string) string {
		if k == "UNDERCOOL_DB" {
			return db
		}
		return ""
	}}
	code := runMain(ctx, env, args)
	return code, out.String(), errb.String()
}

// acqDB is the records database of a test's acqRun calls: one per test, in
// its temp dir, so `record` stores its samples there.
func acqDB(t testing.TB) string {
	t.Helper()
	dbs.mu.Lock()
	defer dbs.mu.Unlock()
	if p, ok := dbs.m[t]; ok {
		return p
	}
	p := filepath.Join(t.TempDir(), "undercool.db")
	dbs.m[t] = p
	t.Cleanup(func() { dbs.mu.Lock(); delete(dbs.m, t); dbs.mu.Unlock() })
	return p
}

var dbs = struct {
	mu sync.Mutex
	m  map[testing.TB]string
}{m: map[testing.TB]string{}}

func acqFakePorts(t *testing.T, ports []acquire.PortInfo, err error) {
	old := listPorts
	listPorts = func() ([]acquire.PortInfo, error) { return ports, err }
	t.Cleanup(func() { listPorts = old })
}

func TestPortsList(t *testing.T) {
	acqFakePorts(t, []acquire.PortInfo{
		{Name: "/dev/ttyUSB0", USB: true, VID: "0403", PID: "6001", Serial: "A10KZ3QX", Manufacturer: "FTDI", Product: "FT232R USB UART"},
		{Name: "/dev/ttyS0"},
		{Name: "/dev/ttyACM0", USB: true, VID: "2341", PID: "0043"},
	}, nil)
	code, out, _ := acqRun(t, context.Background(), "ports")
	want := "/dev/ttyACM0  USB  vid 2341  pid 0043\n" +
		"/dev/ttyS0\n" +
		"/dev/ttyUSB0  USB  vid 0403  pid 6001  serial A10KZ3QX  FTDI  \"FT232R USB UART\"\n"
	if code != 0 || out != want {
		t.Fatalf("exit %d, output:\n%s\nwant:\n%s", code, out, want)
	}
	code, out, _ = acqRun(t, context.Background(), "ports", "--json")
	lines := strings.Split(strings.TrimSpace(out), "\n")
	var first map[string]any
	if code != 0 || len(lines) != 3 || json.Unmarshal([]byte(lines[2]), &first) != nil ||
		first["name"] != "/dev/ttyUSB0" || first["serial"] != "A10KZ3QX" || first["product"] != "FT232R USB UART" || first["usb"] != true {
		t.Fatalf("json: exit %d %q", code, out)
	}
}

func TestPortsNone(t *testing.T) {
	acqFakePorts(t, nil, nil)
	code, out, _ := acqRun(t, context.Background(), "ports")
	if code != 0 || !strings.HasPrefix(out, "no serial ports found") {
		t.Fatalf("exit %d %q", code, out)
	}
	acqFakePorts(t, nil, errors.New("acquire: listing serial ports: sysfs unreadable"))
	code, _, errs := acqRun(t, context.Background(), "ports")
	if code != 1 || !strings.Contains(errs, "sysfs unreadable") {
		t.Fatalf("exit %d %q", code, errs)
	}
	if code, _, _ := acqRun(t, context.Background(), "ports", "extra"); code != 2 {
		t.Fatalf("extra argument: exit %d", code)
	}
}

// TestPortsReal lists this machine's ports through the real enumerator:
// whatever it finds, every line names a port, or the one line says there
// are none.
func TestPortsReal(t *testing.T) {
	code, out, errs := acqRun(t, context.Background(), "ports")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, line := range strings.Split(strings.TrimSpace(out), "\n") {
		if !strings.HasPrefix(line, "/dev/") && !strings.HasPrefix(line, "COM") && !strings.HasPrefix(line, "no serial ports found") {
			t.Errorf("line %q", line)
		}
	}
}
