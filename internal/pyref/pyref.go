// Package pyref locates the Python interpreter that runs the project's
// reference scripts (.ci/*.py, which use Debian's python3-scipy and numpy)
// for the cross-checks in the tests, and says whether they must run.
//
// UNDERCOOL_PYTHON names the interpreter; UNDERCOOL_SCIPY=required makes
// a missing interpreter or module a failure instead of a skip (.ci/run sets
// it), UNDERCOOL_SCIPY=0 turns the cross-checks off.
package pyref

import (
	"fmt"
	"os"
	"os/exec"
)

// Interpreter is UNDERCOOL_PYTHON, else Debian's /usr/bin/python3 where it
// exists, else python3 on the PATH.
func Interpreter() string {
	if py := os.Getenv("UNDERCOOL_PYTHON"); py != "" {
		return py
	}
	if _, err := os.Stat("/usr/bin/python3"); err == nil {
		return "/usr/bin/python3"
	}
	return "python3"
}

// Required reports UNDERCOOL_SCIPY=required: a cross-check that cannot run
// fails.
func Required() bool { return os.Getenv("UNDERCOOL_SCIPY") == "required" }

// Off reports UNDERCOOL_SCIPY=0: the cross-checks are not run.
func Off() bool { return os.Getenv("UNDERCOOL_SCIPY") == "0" }

// Imports checks that py can import the modules (a comma-separated Python
// import list, e.g. "numpy, scipy.signal"); the error names both and the
// Debian package to install.
func Imports(py, modules string) error {
	if err := exec.Command(py, "-c", "import "+modules).Run(); err != nil {
		return fmt.Errorf("%s cannot import %s (%v); install python3-scipy", py, modules, err)
	}
	return nil
}
