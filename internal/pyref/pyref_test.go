package pyref

import (
	"strings"
	"testing"
)

func TestInterpreterFromEnvironment(t *testing.T) {
	t.Setenv("UNDERCOOL_PYTHON", "/opt/some/python3")
	if got := Interpreter(); got != "/opt/some/python3" {
		t.Errorf("Interpreter() = %q with UNDERCOOL_PYTHON set", got)
	}
	t.Setenv("UNDERCOOL_PYTHON", "")
	if got := Interpreter(); got != "/usr/bin/python3" && got != "python3" {
		t.Errorf("Interpreter() = %q without UNDERCOOL_PYTHON", got)
	}
}

func TestModes(t *testing.T) {
	for _, c := range []struct {
		v             string
		required, off bool
	}{{"", false, false}, {"1", false, false}, {"required", true, false}, {"0", false, true}} {
		t.Setenv("UNDERCOOL_SCIPY", c.v)
		if Required() != c.required || Off() != c.off {
			t.Errorf("UNDERCOOL_SCIPY=%q: required %v, off %v", c.v, Required(), Off())
		}
	}
}

func TestImportsNamesWhatIsMissing(t *testing.T) {
	err := Imports("/nonexistent/python3", "scipy.signal")
	if err == nil || !strings.Contains(err.Error(), "/nonexistent/python3") || !strings.Contains(err.Error(), "scipy.signal") || !strings.Contains(err.Error(), "python3-scipy") {
		t.Errorf("Imports on a missing interpreter: %v", err)
	}
}
