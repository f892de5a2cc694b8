package main

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"
)

func simEnv() (*environ, *bytes.Buffer, *bytes.Buffer) {
	var out, errb bytes.Buffer
	return &environ{stdin: strings.NewReader(""), stdout: &out, stderr: &errb, getenv: func(string) string { return "" }}, &out, &errb
}

// readCurve reads the simulator's own curve file: metadata, header, rows.
func readCurve(t *testing.T, path string) (map[string]string, []string, [][]string) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	meta := map[string]string{}
	var header []string
	var rows [][]string
	for _, ln := range strings.Split(strings.TrimSuffix(string(b), "\n"), "\n") {
		switch {
		case strings.HasPrefix(ln, "# "):
			k, v, _ := strings.Cut(ln[2:], ": ")
			meta[k] = v
		case header == nil:
			header = strings.Split(ln, ",")
		default:
			rows = append(rows, strings.Split(ln, ","))
		}
	}
	return meta, header, rows
}

func TestSimulateWritesCurveAndTruth(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct {
		args  []string
		alloy string
		rate  float64
		liq   bool
	}{
		{[]string{"--alloy", "grey-iron", "--inoculation", "0.2", "--seed", "4"}, "grey-iron", 10, true},
		{[]string{"--alloy", "grey-iron", "--ce", "4.5", "--rate", "5"}, "grey-iron", 5, false}, // hypereutectic: no liquidus
		{[]string{"--alloy", "al-si7mg", "--modification", "1", "--rate", "20", "--hold-min", "10"}, "al-si7mg", 20, true},
		{[]string{"--alloy", "pure-zn", "--noise", "0"}, "pure-zn", 10, false},
	} {
		path := filepath.Join(dir, c.alloy+strconv.Itoa(len(c.args))+"-"+c.args[len(c.args)-1]+".csv")
		env, _, errb := simEnv()
		if code := runMain(context.Background(), env, append([]string{"simulate", "--out", path}, c.args...)); code != 0 {
			t.Fatalf("%v: exit %d: %s", c.args, code, errb)
		}
		meta, header, rows := readCurve(t, path)
		if meta["simulated"] != "true" || meta["alloy"] != c.alloy || meta["sample"] == "" || meta["operator"] == "" {
			t.Errorf("%v: metadata %v", c.args, meta)
		}
		if strings.Join(header, ",") != "time_s,temp_c" {
			t.Errorf("%v: header %v", c.args, header)
		}
		t1, _ := strconv.ParseFloat(rows[1][0], 64)
		if len(rows) < 1000 || t1 != 1/c.rate {
			t.Errorf("%v: %d rows, second at %g s; want ≥ 1000 at %g Hz", c.args, len(rows), t1, c.rate)
		}
		b, err := os.ReadFile(path + ".truth.json")
		if err != nil {
			t.Fatal(err)
		}
		var truth map[string]any
		if err := json.Unmarshal(b, &truth); err != nil {
			t.Fatal(err)
		}
		for _, k := range []string{"pour_peak_c", "liquidus_min_c", "liquidus_c", "eutectic_min_c", "eutectic_max_c", "recalescence_c", "solidus_c", "solidus_s"} {
			if _, ok := truth[k]; !ok {
				t.Errorf("%v: truth lacks %s", c.args, k)
			}
		}
		if (truth["liquidus_c"] != nil) != c.liq || truth["simulated"] != true || truth["eutectic_min_c"] == nil {
			t.Errorf("%v: truth liquidus %v eutectic %v", c.args, truth["liquidus_c"], truth["eutectic_min_c"])
		}
	}
}

func TestSimulateOpenThermocoupleColumn(t *testing.T) {
	path := filepath.Join(t.TempDir(), "open.csv")
	env, _, errb := simEnv()
	if code := runMain(context.Background(), env, []string{"simulate", "--alloy", "ductile-iron", "--fault", "open-thermocouple", "--out", path}); code != 0 {
		t.Fatalf("exit %d: %s", code, errb)
	}
	meta, header, rows := readCurve(t, path)
	last := rows[len(rows)-1]
	if strings.Join(header, ",") != "time_s,temp_c,fault" || last[2] != "open" || last[1] != "1372" || meta["sim_fault"] != "open-thermocouple" {
		t.Errorf("header %v, last row %v, meta %v", header, last, meta)
	}
}

func TestSimulateBadUsage(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"--alloy", "brass", "--out", filepath.Join(dir, "x")}, "brass"},
		{[]string{"--alloy", "grey-iron", "--inoculation", "2", "--out", filepath.Join(dir, "x")}, "--inoculation"},
		{[]string{"--alloy", "grey-iron", "--c", "3.4", "--ce", "4.1", "--out", filepath.Join(dir, "x")}, "--ce"},
		{[]string{"--alloy", "grey-iron", "--fault", "melted", "--out", filepath.Join(dir, "x")}, "melted"},
		{[]string{"--alloy", "grey-iron"}, "--out"},
		{[]string{"--out", filepath.Join(dir, "x")}, "--alloy"},
		{[]string{"--alloy", "grey-iron", "--out", filepath.Join(dir, "no", "such", "dir", "x.csv")}, "x.csv"},
		{[]string{"--serve", "--speed", "0"}, "--speed"},
	} {
		env, _, errb := simEnv()
		code := runMain(context.Background(), env, append([]string{"simulate"}, c.args...))
		if code == 0 || !strings.Contains(errb.String(), c.want) {
			t.Errorf("%v: exit %d, stderr %q; want failure naming %q", c.args, code, errb, c.want)
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "x")); err == nil {
		t.Error("a failed simulate left a file behind")
	}
}

// syncBuf is a bytes.Buffer safe for the serving goroutine and the test.
type syncBuf struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (s *syncBuf) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

func (s *syncBuf) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.String()
}

// The virtual device speaks the line protocol on a pseudo-terminal.
func TestSimulateServeOnPseudoTerminal(t *testing.T) {
	if runtime.GOOS == "windows" {
		t.Skip("pseudo-terminals are Unix only; the Windows build returns a clear error instead")
	}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var out, errb syncBuf
	env := &environ{stdin: strings.NewReader(""), stdout: &out, stderr: &errb, getenv: func(string) string { return "" }}
	done := make(chan int, 1)
	go func() { done <- runMain(ctx, env, []string{"simulate", "--serve", "--speed", "20", "--seed", "9"}) }()
	var path string
	for deadline := time.Now().Add(5 * time.Second); path == "" && time.Now().Before(deadline); time.Sleep(10 * time.Millisecond) {
		if first, _, ok := strings.Cut(out.String(), "\n"); ok {
			path = strings.TrimPrefix(first, "virtual device: ")
		}
	}
	if !strings.HasPrefix(path, "/") {
		t.Fatalf("no device path printed: %q %q", out.String(), errb.String())
	}
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	readings, info := 0, 0
	for readings < 60 && sc.Scan() {
		ln := sc.Text()
		switch {
		case strings.HasPrefix(ln, "! sample="):
			info++
			if !strings.Contains(ln, `alloy=`) || !strings.Contains(ln, `operator="`) {
				t.Errorf("info line %q", ln)
			}
		case strings.HasPrefix(ln, "ms="):
			if !strings.Contains(ln, " c=") && !strings.Contains(ln, " f=open") {
				t.Errorf("reading line %q", ln)
			}
			readings++
		case strings.HasPrefix(ln, "! dev="):
		default:
			t.Errorf("unexpected line %q", ln)
		}
	}
	if readings < 60 {
		t.Fatalf("read %d readings: %v", readings, sc.Err())
	}
	cancel()
	select {
	case code := <-done:
		if code != 0 {
			t.Errorf("serve exit %d: %s", code, errb.String())
		}
	case <-time.After(5 * time.Second):
		t.Fatal("serve did not stop on cancel")
	}
}

// simulate --out never writes over a file (a measured curve could be
// lost under a simulated one): refused with the name, the file unchanged.
func TestSimulateRefusesToOverwrite(t *testing.T) {
	path := filepath.Join(t.TempDir(), "cup.csv")
	if err := os.WriteFile(path, []byte("measured\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	env, _, errb := simEnv()
	code := runMain(context.Background(), env, []string{"simulate", "--alloy", "grey-iron", "--out", path})
	b, _ := os.ReadFile(path)
	if code != 1 || !strings.Contains(errb.String(), path+" exists") || string(b) != "measured\n" {
		t.Fatalf("exit %d, stderr %q, file %q; want 1, the file named, the file unchanged", code, errb, b)
	}
}
