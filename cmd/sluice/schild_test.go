package main

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// `sluice schild` on the invented demo dataset (testdata/demo/schild.csv,
// generated with pKB 7.6 and slope 1, noise 4 %) recovers them within their
// intervals; a file without the control curve is refused.
func TestSchildCommand(t *testing.T) {
	code, out, stderr := runCLI(t, "", "schild", "../../testdata/demo/schild.csv", "--unit", "nM", "--bootstrap", "300", "--format", "json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var r struct {
		Competitive bool `json:"competitive"`
		Global      struct {
			PKB struct {
				Estimate float64    `json:"estimate"`
				CI       [2]float64 `json:"ci"`
			} `json:"pkb"`
		} `json:"global"`
	}
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	if !r.Competitive || !(r.Global.PKB.CI[0] <= 7.6 && 7.6 <= r.Global.PKB.CI[1]) || math.Abs(r.Global.PKB.Estimate-7.6) > 0.1 {
		t.Errorf("%+v", r)
	}
	code, _, stderr = runCLI(t, "antagonist_conc,conc,response\n10,1,2\n10,2,3\n", "schild", "-", "--unit", "M")
	if code != 2 || !strings.Contains(stderr, "control") {
		t.Errorf("no control: exit %d %s", code, stderr)
	}
}
