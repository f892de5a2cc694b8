package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"strings"
	"testing"
)

// filesRun runs the command line through runMain and returns the exit
// status, stdout and stderr.
func filesRun(t testing.TB, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	env := &environ{stdin: strings.NewReader(""), stdout: &out, stderr: &errb, getenv: func(string) string { return "" }}
	code := runMain(context.Background(), env, args)
	return code, out.String(), errb.String()
}

// TestTCJSON checks the calculator against NIST SRD 60 table values:
// type K E(1000 °C) = 41.276 mV, E(25 °C) = 1.000 mV, so 40.276 mV with the
// cold junction at 25 °C is 1000 °C (within 0.03 °C, the table's 0.001 mV
// rounding); type S E(1064 °C) = 10.332 mV (within 0.0005 mV).
func TestTCJSON(t *testing.T) {
	tests := []struct {
		args       []string
		typ        string
		tempC      float64
		emfMV      float64
		cj         float64
		tolT, tolE float64
	}{
		{[]string{"tc", "K", "--emf", "40.276", "--cj", "25", "--json"}, "K", 1000, 40.276, 25, 0.03, 0},
		{[]string{"tc", "--json", "--emf=40.276", "--cj=25", "k"}, "K", 1000, 40.276, 25, 0.03, 0}, // flags before TYPE
		{[]string{"tc", "K", "--temp", "1000", "--json"}, "K", 1000, 41.276, 0, 0, 0.0005},
		{[]string{"tc", "S", "--temp", "1064", "--json"}, "S", 1064, 10.332, 0, 0, 0.0005},
		{[]string{"tc", "K", "--temp", "1000", "--cj", "25", "--json"}, "K", 1000, 40.276, 25, 0, 0.001},
		{[]string{"tc", "K", "--emf", "-1.889", "--json"}, "K", -50, -1.889, 0, 0.03, 0}, // NIST SRD 60 type_k.tab: E(−50 °C) = −1.889 mV
	}
	for _, tt := range tests {
		code, out, errs := filesRun(t, tt.args...)
		if code != 0 {
			t.Errorf("%v: exit %d, %s", tt.args, code, errs)
			continue
		}
		var got map[string]any
		if err := json.Unmarshal([]byte(out), &got); err != nil {
			t.Fatalf("%v: %v: %q", tt.args, err, out)
		}
		for _, k := range []string{"type", "temp_c", "emf_mv", "cold_junction_c"} {
			if _, ok := got[k]; !ok {
				t.Errorf("%v: key %q missing in %s", tt.args, k, out)
			}
		}
		if got["type"] != tt.typ {
			t.Errorf("%v: type %v", tt.args, got["type"])
		}
		if v := got["temp_c"].(float64); math.Abs(v-tt.tempC) > tt.tolT {
			t.Errorf("%v: temp_c %v, want %v ± %v", tt.args, v, tt.tempC, tt.tolT)
		}
		if v := got["emf_mv"].(float64); math.Abs(v-tt.emfMV) > tt.tolE {
			t.Errorf("%v: emf_mv %v, want %v ± %v", tt.args, v, tt.emfMV, tt.tolE)
		}
		if v := got["cold_junction_c"].(float64); v != tt.cj {
			t.Errorf("%v: cold_junction_c %v", tt.args, v)
		}
	}
}

func TestTCText(t *testing.T) {
	code, out, _ := filesRun(t, "tc", "K", "--emf", "40.276", "--cj", "25")
	// NIST SRD 60 type K: 1000 °C within the table's rounding.
	if code != 0 || !strings.HasPrefix(out, "1000.0") || !strings.Contains(out, "type K") {
		t.Errorf("exit %d, %q", code, out)
	}
	code, out, _ = filesRun(t, "tc", "J", "--temp", "760")
	// NIST SRD 60 type_j.tab: E(760 °C) = 42.919 mV (within 0.0005 mV).
	var mv float64
	if _, err := fmt.Sscanf(out, "%f mV", &mv); code != 0 || err != nil || math.Abs(mv-42.919) > 0.0005 {
		t.Errorf("exit %d, %q", code, out)
	}
}

func TestTCErrors(t *testing.T) {
	tests := []struct {
		args []string
		code int
		want string
	}{
		{[]string{"tc", "K", "--temp", "1400"}, 1, "1372"},
		{[]string{"tc", "K", "--emf", "60", "--cj", "20"}, 1, "cold junction at 20 °C"},
		{[]string{"tc", "B", "--emf", "0"}, 1, "type B"},
		{[]string{"tc", "Q", "--emf", "1"}, 1, "unknown type"},
		{[]string{"tc", "K"}, 2, "usage"},
		{[]string{"tc", "K", "--emf", "1", "--temp", "20"}, 2, "usage"},
		{[]string{"tc", "--emf", "1"}, 2, "usage"},
		{[]string{"tc", "K", "J", "--emf", "1"}, 2, "usage"},
		{[]string{"tc", "K", "--emf", "x"}, 2, "invalid value"},
	}
	for _, tt := range tests {
		code, out, errs := filesRun(t, tt.args...)
		if code != tt.code || out != "" || !strings.Contains(errs, tt.want) {
			t.Errorf("%v: exit %d (want %d), stdout %q, stderr %q (want %q)", tt.args, code, tt.code, out, errs, tt.want)
		}
	}
}
