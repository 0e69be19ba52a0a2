package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// `sluice potential` gives the API's numbers offline: the invented demo
// request (testdata/demo/potential-neuron.json) on the neuron preset, whose
// resting state is FACTS §7's chord example (−78.838 mV rest, tolerance
// 0.01 mV).
func TestPotentialCommand(t *testing.T) {
	svg := filepath.Join(t.TempDir(), "v.svg")
	code, out, stderr := runCLI(t, "", "potential", "../../testdata/demo/potential-neuron.json", "--format", "json", "--svg", svg)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var res struct {
		RestMV float64 `json:"rest_mv"`
		Points []struct {
			VMV float64 `json:"v_mv"`
		} `json:"points"`
		Cautions []string `json:"cautions"`
	}
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	if math.Abs(res.RestMV+78.838) > 0.01 || len(res.Points) != 8 || len(res.Cautions) < 2 {
		t.Errorf("%+v", res)
	}
	if b, err := os.ReadFile(svg); err != nil || !strings.Contains(string(b), "<svg") {
		t.Errorf("svg: %v", err)
	}
	code, table, _ := runCLI(t, "", "potential", "../../testdata/demo/potential-neuron.json")
	if code != 0 || !strings.Contains(table, "threshold crossed") || !strings.Contains(table, "research use only") {
		t.Errorf("table:\n%s", table)
	}
	code, _, stderr = runCLI(t, `{"hill":{"log_ec50":-5,"hill":1,"po_max":2},"agonist_conc":[1e-6],"channel":{"count":1,"conductance_ps":1,"reversal_mv":0},"cell":{"preset":"neuron"}}`, "potential", "-")
	if code != 2 || !strings.Contains(stderr, "/hill/po_max") {
		t.Errorf("bad request: exit %d, %s", code, stderr)
	}
}
