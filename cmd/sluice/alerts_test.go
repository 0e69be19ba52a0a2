package main

import (
	"os"
	"os/exec"
	"testing"
)

// The alert rules pass their unit tests (deploy/prometheus/alerts_test.yml)
// under promtool, which Debian's prometheus package ships. Without
// promtool the test is skipped locally and fails in CI (CI=true).
func TestAlertRules(t *testing.T) {
	promtool, err := exec.LookPath("promtool")
	if err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatal("promtool is not installed (apt-get install prometheus); CI must run the alert tests")
		}
		t.Skip("promtool is not installed (apt-get install prometheus): alert rules not tested")
	}
	cmd := exec.Command(promtool, "test", "rules", "alerts_test.yml")
	cmd.Dir = "../../deploy/prometheus"
	out, err := cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("promtool test rules: %v\n%s", err, out)
	}
	t.Logf("%s", out)
}
