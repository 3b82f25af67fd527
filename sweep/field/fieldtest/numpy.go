// Package fieldtest helps the tests that check field files (and the
// example solvers that write them with NumPy) against NumPy itself
// (docs/references.md §11), as net/http/httptest helps HTTP tests.
package fieldtest

import (
	"os"
	"os/exec"
	"testing"
)

// NumPyPython returns a python3 that imports NumPy. Without one it skips t, or
// fails it where CI=true: .ci/run installs python3-numpy, so there a
// missing NumPy is a broken setup whose skip would hide the check. what
// says, in the skip, which check does not run.
func NumPyPython(t testing.TB, what string) string {
	t.Helper()
	for _, py := range []string{"python3", "/usr/bin/python3"} {
		if exec.Command(py, "-c", "import numpy").Run() == nil {
			return py
		}
	}
	const why = "no python3 with numpy (apt-get install python3-numpy)"
	if os.Getenv("CI") == "true" {
		t.Fatal(why + "; with CI=true this fails: .ci/run installs it")
	}
	t.Skip(why + ": " + what)
	return ""
}
