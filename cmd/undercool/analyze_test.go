package main

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/creack/pty"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// simulatedCup writes a simulated cup (internal/sim, the project's own
// physics model; not a measured curve) to dir/name and returns the path.
func simulatedCup(t testing.TB, dir, name, alloy string, seed uint64) string {
	t.Helper()
	p, err := sim.Preset(alloy, 0.6, seed)
	if err != nil {
		t.Fatal(err)
	}
	out := sim.Simulate(p)
	c := &curvefile.Curve{Meta: append([]curvefile.Meta{{Key: "alloy", Value: alloy}}, out.Meta...), Time: out.Time, Temp: out.Temp}
	var buf bytes.Buffer
	if err := curvefile.WriteCurve(&buf, c); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, name)
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

func writeText(t testing.TB, dir, name, text string) string {
	t.Helper()
	path := filepath.Join(dir, name)
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// flatCup is a constructed curve with no pour and no arrest: a cup left at
// room temperature, 60 s at 5 Hz.
func flatCup() string {
	var b strings.Builder
	b.WriteString("# alloy: grey-iron\n# note: constructed flat curve, no pour\ntime_s,temp_c\n")
	for i := range 300 {
		fmt.Fprintf(&b, "%.1f,%.2f\n", float64(i)*0.2, 24.5+0.01*float64(i%3))
	}
	return b.String()
}

func jsonLines(t *testing.T, out string) []map[string]any {
	t.Helper()
	var recs []map[string]any
	sc := bufio.NewScanner(strings.NewReader(out))
	sc.Buffer(nil, 1<<20)
	for sc.Scan() {
		var m map[string]any
		if err := json.Unmarshal(sc.Bytes(), &m); err != nil {
			t.Fatalf("not one JSON object a line: %v: %q", err, sc.Text())
		}
		recs = append(recs, m)
	}
	return recs
}

// recordKeys are the stable keys of the JSON result (README.md, "Analysing files").
var recordKeys = []string{"file", "alloy", "samples", "rate_hz",
	"pour_peak_c", "pour_peak_s", "liquidus_min_c", "liquidus_min_s", "liquidus_c", "liquidus_s",
	"eutectic_min_c", "eutectic_min_s", "eutectic_max_c", "eutectic_max_s", "recalescence_c",
	"solidus_c", "solidus_s", "problems", "verdict"}

func TestAnalyzeJSONKeys(t *testing.T) {
	dir := t.TempDir()
	cup := simulatedCup(t, dir, "L-2417-cup1.csv", "grey-iron", 17)
	flat := writeText(t, dir, "flat.csv", flatCup())
	code, out, errs := filesRun(t, "analyze", "--json", cup, flat)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if errs != "" {
		t.Errorf("stderr not empty when piped: %q", errs)
	}
	recs := jsonLines(t, out)
	if len(recs) != 2 {
		t.Fatalf("%d JSON lines, want 2:\n%s", len(recs), out)
	}
	byFile := map[string]map[string]any{}
	for _, r := range recs {
		for _, k := range recordKeys {
			if _, ok := r[k]; !ok {
				t.Errorf("%v: key %q missing", r["file"], k)
			}
		}
		byFile[r["file"].(string)] = r
	}
	c, f := byFile[cup], byFile[flat]
	if c == nil || f == nil {
		t.Fatalf("files not named in the JSON lines: %v", byFile)
	}
	if c["alloy"] != "grey-iron" || c["samples"].(float64) < 100 || c["rate_hz"].(float64) <= 0 {
		t.Errorf("simulated cup: alloy %v samples %v rate %v", c["alloy"], c["samples"], c["rate_hz"])
	}
	if _, ok := c["problems"].([]any); !ok {
		t.Errorf("problems is not a list: %v", c["problems"])
	}
	// The flat constructed curve has no pour and no arrest: every point is
	// null (never a guess), a problem is reported and the verdict is invalid.
	for _, k := range []string{"liquidus_c", "liquidus_s", "eutectic_min_c", "eutectic_max_c", "recalescence_c", "solidus_c", "solidus_s"} {
		if v, ok := f[k]; !ok || v != nil {
			t.Errorf("flat curve: %s = %v, want null", k, v)
		}
	}
	if p, _ := f["problems"].([]any); len(p) == 0 || f["verdict"] != "invalid" {
		t.Errorf("flat curve: problems %v verdict %v", f["problems"], f["verdict"])
	}
	for _, v := range []string{"pass", "marginal", "fail", "invalid", "unchecked"} {
		if c["verdict"] == v {
			return
		}
	}
	t.Errorf("verdict %v is not one of the documented values", c["verdict"])
}

func TestAnalyzeBadAndGood(t *testing.T) {
	dir := t.TempDir()
	good := simulatedCup(t, dir, "good.csv", "ductile-iron", 3)
	bad := writeText(t, dir, "bad.csv", "# alloy: grey-iron\ntime_s,temp_c\n0,1300\n0.1,13O0\n")
	missing := filepath.Join(dir, "missing.csv")
	code, out, errs := filesRun(t, "analyze", "--json", bad, good, missing)
	if code != 1 {
		t.Errorf("exit %d, want 1", code)
	}
	recs := jsonLines(t, out)
	if len(recs) != 1 || recs[0]["file"] != good {
		t.Errorf("want exactly the good file's record, got %v", recs)
	}
	if !strings.Contains(errs, bad+`:4: column "temp_c": "13O0" is not a finite number`) {
		t.Errorf("stderr does not name the bad file and line: %q", errs)
	}
	if !strings.Contains(errs, "missing.csv") {
		t.Errorf("stderr does not name the missing file: %q", errs)
	}

	// Table mode: same exit status, a row for every file.
	code, out, _ = filesRun(t, "analyze", bad, good)
	if code != 1 {
		t.Errorf("table: exit %d, want 1", code)
	}
	if !strings.Contains(out, "unreadable") || !strings.Contains(out, "good.csv") {
		t.Errorf("table:\n%s", out)
	}
}

func TestAnalyzeTable(t *testing.T) {
	dir := t.TempDir()
	a := simulatedCup(t, dir, "L-2417-cup1.csv", "grey-iron", 5)
	b := writeText(t, dir, "flat.csv", flatCup())
	code, out, errs := filesRun(t, "analyze", a, b)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	lines := strings.Split(out, "\n")
	head := strings.Fields(lines[0])
	want := []string{"file", "alloy", "samples", "liquidus", "eut.min", "eut.max", "recal.", "solidus", "verdict"}
	if strings.Join(head, " ") != strings.Join(want, " ") {
		t.Errorf("header %q, want %q", head, want)
	}
	rows := 0
	for _, l := range lines[2:] {
		if l == "" {
			break // the notes follow the table
		}
		if strings.HasPrefix(l, a) || strings.HasPrefix(l, b) {
			rows++
			if f := strings.Fields(l); len(f) != len(want) {
				t.Errorf("row %q has %d cells, want %d", l, len(f), len(want))
			}
		}
	}
	if rows != 2 {
		t.Errorf("%d rows, want 2:\n%s", rows, out)
	}
	// The flat curve's problems are listed after the table; missing points show as "-".
	if !strings.Contains(out, "\n"+b+" (grey-iron): invalid\n  problem:") {
		t.Errorf("no problem notes for the flat curve:\n%s", out)
	}
	if !strings.Contains(out, "  -  ") {
		t.Errorf("missing points not shown as '-':\n%s", out)
	}
}

func TestAnalyzeAlloyOverride(t *testing.T) {
	dir := t.TempDir()
	f := writeText(t, dir, "flat.csv", flatCup()) // '# alloy: grey-iron'
	code, out, errs := filesRun(t, "analyze", f, "--json", "--alloy", "al-si7mg")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	recs := jsonLines(t, out)
	if len(recs) != 1 || recs[0]["alloy"] != "al-si7mg" {
		t.Errorf("alloy not overridden: %v", recs)
	}
}

func TestAnalyzeLimitsAndUsage(t *testing.T) {
	dir := t.TempDir()
	f := writeText(t, dir, "flat.csv", flatCup())
	lim := filepath.Join(dir, "shop-limits.toml")
	if code, _, errs := filesRun(t, "limits", "init", lim); code != 0 {
		t.Fatalf("limits init: %s", errs)
	}
	if code, out, errs := filesRun(t, "analyze", "--json", "--limits", lim, f); code != 0 || len(jsonLines(t, out)) != 1 {
		t.Errorf("with --limits: exit %d %s", code, errs)
	}
	if code, _, errs := filesRun(t, "analyze", "--limits", filepath.Join(dir, "nope.toml"), f); code != 1 || !strings.Contains(errs, "nope.toml") {
		t.Errorf("missing limits file: exit %d %q", code, errs)
	}
	if code, _, _ := filesRun(t, "analyze", "--json"); code != 2 {
		t.Errorf("no files: exit %d, want 2", code)
	}
}

// cupCopies writes n copies of one simulated cup into a temp dir and
// returns their paths and the size of one file in bytes.
func cupCopies(t testing.TB, alloy string, n int) ([]string, int) {
	t.Helper()
	dir := t.TempDir()
	base := simulatedCup(t, dir, "cup-0.csv", alloy, 2)
	data, err := os.ReadFile(base)
	if err != nil {
		t.Fatal(err)
	}
	files := []string{base}
	for i := 1; i < n; i++ {
		files = append(files, writeText(t, dir, fmt.Sprintf("cup-%d.csv", i), string(data)))
	}
	return files, len(data)
}

// TestAnalyzeMany streams many files through the worker pool: every file
// gets exactly one line naming it.
func TestAnalyzeMany(t *testing.T) {
	files, _ := cupCopies(t, "grey-iron", 24)
	code, out, errs := filesRun(t, append([]string{"analyze", "--json"}, files...)...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	seen := map[string]int{}
	var first map[string]any
	for _, r := range jsonLines(t, out) {
		seen[r["file"].(string)]++
		if first == nil {
			first = r
		}
	}
	for _, f := range files {
		if seen[f] != 1 {
			t.Errorf("%s: %d lines", f, seen[f])
		}
	}
	// The same curve gives the same points whichever worker read it.
	for _, r := range jsonLines(t, out) {
		if fmt.Sprint(r["eutectic_min_c"], r["solidus_c"]) != fmt.Sprint(first["eutectic_min_c"], first["solidus_c"]) {
			t.Errorf("%s differs from %s", r["file"], first["file"])
		}
	}
}

// BenchmarkAnalyzeFiles runs `analyze --json` over 1000 small simulated
// cups (internal/sim, 10 Hz) and reports files/s and MB/s.
func BenchmarkAnalyzeFiles(b *testing.B) {
	files, size := cupCopies(b, "al-si7mg", 1000)
	args := append([]string{"analyze", "--json"}, files...)
	env := &environ{stdin: strings.NewReader(""), stdout: io.Discard, stderr: io.Discard, getenv: func(string) string { return "" }}
	for b.Loop() {
		if code := runMain(b.Context(), env, args); code != 0 {
			b.Fatalf("exit %d", code)
		}
	}
	perOp := b.Elapsed().Seconds() / float64(b.N)
	b.ReportMetric(float64(len(files))/perOp, "files/s")
	b.ReportMetric(float64(len(files)*size)/perOp/1e6, "MB/s")
}

// TestAnalyzeExampleDialects analyses one simulated cup written in three
// dialects (testdata/files, see its README): the characteristic points
// agree (raw EMF within 0.01 °C: the mV carry 6 decimals; the 0.01 °C
// semicolon export within 0.1 °C).
func TestAnalyzeExampleDialects(t *testing.T) {
	dir := "../../testdata/files/"
	own, semi, emf := dir+"grey-iron-own-format.csv", dir+"grey-iron-semicolon-decimal-comma.csv", dir+"grey-iron-emf-type-k.csv"
	code, out, errs := filesRun(t, "analyze", "--json", own, semi, emf)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	by := map[string]map[string]any{}
	for _, r := range jsonLines(t, out) {
		by[r["file"].(string)] = r
	}
	found := 0
	for _, k := range []string{"pour_peak_c", "liquidus_c", "eutectic_min_c", "eutectic_max_c", "recalescence_c", "solidus_c"} {
		ref, ok := by[own][k].(float64)
		if !ok {
			continue // not found in this cup: the others must agree on null too
		}
		found++
		for f, tol := range map[string]float64{emf: 0.01, semi: 0.1} {
			v, ok := by[f][k].(float64)
			if !ok || math.Abs(v-ref) > tol {
				t.Errorf("%s: %s = %v, own format %v (± %v)", f, k, by[f][k], ref, tol)
			}
		}
	}
	if found < 4 {
		t.Errorf("only %d points found in the simulated grey-iron cup: %s", found, out)
	}
	code, out, errs = filesRun(t, "analyze", "--json", "--alloy", "al-si7mg", dir+"al-si7mg-tab-no-metadata.txt", dir+"al-si7mg-headerless.csv")
	recs := jsonLines(t, out)
	if code != 0 || len(recs) != 2 || recs[0]["alloy"] != "al-si7mg" || fmt.Sprint(recs[0]["eutectic_min_c"]) != fmt.Sprint(recs[1]["eutectic_min_c"]) {
		t.Errorf("Al-Si dialects: exit %d %s\n%s", code, errs, out)
	}
}

// TestAnalyzeProgressOnTerminal gives analyze a pseudo-terminal as stderr:
// a progress line is drawn there and cleared, and stdout has only results.
func TestAnalyzeProgressOnTerminal(t *testing.T) {
	ptm, pts, err := pty.Open()
	if err != nil {
		t.Skipf("no pseudo-terminal here: %v", err)
	}
	defer ptm.Close()
	dir := t.TempDir()
	a := writeText(t, dir, "a.csv", flatCup())
	b := writeText(t, dir, "b.csv", flatCup())
	// The terminal's side is read as it comes, and the slave is closed
	// only once the last line cleared: on Linux a master read returns EIO
	// once the slave is closed, even with output still in the buffer
	// (closing at once lost the end now and then under load).
	var mu sync.Mutex
	var seen []byte
	arrived := make(chan struct{}, 1)
	go func() {
		buf := make([]byte, 4096)
		for {
			n, err := ptm.Read(buf)
			mu.Lock()
			seen = append(seen, buf[:n]...)
			mu.Unlock()
			select {
			case arrived <- struct{}{}:
			default:
			}
			if err != nil {
				return
			}
		}
	}()
	var out bytes.Buffer
	env := &environ{stdin: strings.NewReader(""), stdout: &out, stderr: pts, getenv: func(string) string { return "" }}
	code := runMain(t.Context(), env, []string{"analyze", "--json", a, b})
	tty := func() string { mu.Lock(); defer mu.Unlock(); return string(seen) }
	deadline := time.After(10 * time.Second)
	for done := false; !done; {
		if s := tty(); strings.Contains(s, "analysed 2 of 2 files") && strings.HasSuffix(s, "\r\x1b[K") {
			break
		}
		select {
		case <-arrived:
		case <-deadline:
			done = true
		}
	}
	pts.Close()
	if code != 0 {
		t.Fatalf("exit %d: %s", code, tty())
	}
	if s := tty(); !strings.Contains(s, "analysed 2 of 2 files") || !strings.HasSuffix(s, "\r\x1b[K") {
		t.Errorf("terminal got %q", s)
	}
	if len(jsonLines(t, out.String())) != 2 {
		t.Errorf("stdout %q", out.String())
	}
}

// "-" reads the curve from standard input, named "-" in the result and in
// its errors; --store refuses it (there is no file to keep and verify).
func TestAnalyzeStdin(t *testing.T) {
	curve, err := os.ReadFile(filepath.Join("..", "..", "testdata", "files", "grey-iron-own-format.csv"))
	if err != nil {
		t.Fatal(err)
	}
	var out, errb bytes.Buffer
	env := &environ{stdin: bytes.NewReader(curve), stdout: &out, stderr: &errb, getenv: func(string) string { return "" }}
	if code := runMain(context.Background(), env, []string{"analyze", "--json", "-"}); code != 0 {
		t.Fatalf("exit %d, stderr:\n%s", code, errb.String())
	}
	var rec map[string]any
	if err := json.Unmarshal(out.Bytes(), &rec); err != nil {
		t.Fatalf("%v in %q", err, out.String())
	}
	if rec["file"] != "-" || rec["alloy"] != "grey-iron" || rec["eutectic_min_c"] == nil {
		t.Errorf("record from stdin: file %v alloy %v eutectic_min_c %v", rec["file"], rec["alloy"], rec["eutectic_min_c"])
	}

	out.Reset()
	errb.Reset()
	env.stdin = strings.NewReader("time_s,temp_c\n0,25\n0.1,hot\n")
	if code := runMain(context.Background(), env, []string{"analyze", "-"}); code != 1 || !strings.Contains(errb.String(), "-:3:") {
		t.Errorf("bad stdin: exit %d, stderr %q (want exit 1 naming -:3)", code, errb.String())
	}
	errb.Reset()
	if code := runMain(context.Background(), env, []string{"analyze", "--store", "-"}); code != 1 || !strings.Contains(errb.String(), "standard input") {
		t.Errorf("--store with stdin: exit %d, stderr %q", code, errb.String())
	}
}
