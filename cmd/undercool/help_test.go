package main

import (
	"context"
	"sort"
	"strings"
	"testing"
)

// -h on every command prints its usage and exits 0 (asking for help is not
// an error), with at least one flag listed where the command has flags.
func TestHelpExitsZero(t *testing.T) {
	var names []string
	for n := range commands {
		if !strings.HasPrefix(n, "test-") { // commands the test binary adds for its own tests
			names = append(names, n)
		}
	}
	sort.Strings(names)
	for _, n := range names {
		for _, h := range []string{"-h", "--help"} {
			env, out, errb := simEnv()
			if code := runMain(context.Background(), env, []string{n, h}); code != 0 {
				t.Errorf("%s %s: exit %d, want 0: %s", n, h, code, errb)
			}
			if text := out.String() + errb.String(); !strings.Contains(strings.ToLower(text), "usage") {
				t.Errorf("%s %s printed no usage: %q", n, h, text)
			}
		}
	}
}
