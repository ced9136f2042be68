package testtool

import (
	"os"
	"os/exec"
	"strings"
	"testing"
)

// TestNeedMissingTool runs the probe below in a child process: without CI a
// missing tool skips the test, with CI=true it fails naming the tool and its
// package.
func TestNeedMissingTool(t *testing.T) {
	for _, ci := range []string{"", "true"} {
		cmd := exec.Command(os.Args[0], "-test.run", "^TestProbeMissing$", "-test.v")
		cmd.Env = append(os.Environ(), "TESTTOOL_PROBE=1", "CI="+ci)
		out, err := cmd.CombinedOutput()
		s := string(out)
		switch ci {
		case "":
			if err != nil || !strings.Contains(s, "--- SKIP: TestProbeMissing") || !strings.Contains(s, "no-such-tool-xyz") {
				t.Errorf("without CI: want a skip naming the tool, got %v:\n%s", err, s)
			}
		default:
			if err == nil || !strings.Contains(s, "--- FAIL: TestProbeMissing") || !strings.Contains(s, "no-such-tool-xyz not found (Debian package pkg-xyz)") {
				t.Errorf("CI=true: want a failure naming the tool, got %v:\n%s", err, s)
			}
		}
	}
}

// TestProbeMissing is the child's probe for TestNeedMissingTool; run on its
// own it does nothing (a skip would count against CI's zero skips).
func TestProbeMissing(t *testing.T) {
	if os.Getenv("TESTTOOL_PROBE") == "" {
		return
	}
	Need(t, "no-such-tool-xyz", "pkg-xyz")
}
