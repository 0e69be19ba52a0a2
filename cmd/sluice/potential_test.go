package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"regexp"
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
			AgonistConc float64 `json:"agonist_conc"`
			VMV         float64 `json:"v_mv"`
		} `json:"points"`
		Cautions []string `json:"cautions"`
	}
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	// The file is in µM: 0.1 µM is 1e-7 M.
	if math.Abs(res.RestMV+78.838) > 0.01 || len(res.Points) != 8 || len(res.Cautions) < 2 || math.Abs(res.Points[1].AgonistConc-1e-7) > 1e-22 {
		t.Errorf("%+v", res)
	}
	// The figure as the API draws it: a smooth line, titled by the channel.
	b, err := os.ReadFile(svg)
	if err != nil {
		t.Fatal(err)
	}
	line := regexp.MustCompile(`<polyline points="([^"]*)"`).FindSubmatch(b)
	if !strings.Contains(string(b), " on LGX-7</text>") || line == nil || len(strings.Fields(string(line[1]))) < 100 || !strings.Contains(string(b), `class="hline"`) {
		t.Errorf("svg: title, a line of ≥ 100 vertices, the threshold:\n%.600s", b)
	}
	code, table, _ := runCLI(t, "", "potential", "../../testdata/demo/potential-neuron.json")
	if code != 0 || !strings.Contains(table, "threshold crossed") || !strings.Contains(table, "research use only") {
		t.Errorf("table:\n%s", table)
	}
	code, _, stderr = runCLI(t, `{"conc_unit":"M","hill":{"log_ec50":-5,"hill":1,"po_max":2},"agonist_conc":[1e-6],"channel":{"count":1,"conductance_ps":1,"reversal_mv":0},"cell":{"preset":"neuron"}}`, "potential", "-")
	if code != 2 || !strings.Contains(stderr, "/hill/po_max") {
		t.Errorf("bad request: exit %d, %s", code, stderr)
	}
}

// The agonist's unit is required, in the request (conc_unit) or with
// --unit, as POST /v1/potential requires it: without one the command
// refuses, naming both; --unit supplies it; a --unit that contradicts the
// request is refused. The answer is molar whatever the unit.
func TestPotentialCommandUnit(t *testing.T) {
	const noUnit = `{"hill":{"log_ec50":-5,"hill":1.5,"po_max":0.8},"agonist_conc":[0,3,30],"channel":{"count":200,"conductance_ps":50,"reversal_mv":0},"cell":{"preset":"neuron"}}`
	code, out, stderr := runCLI(t, noUnit, "potential", "-")
	if code != 2 || out != "" || !strings.Contains(stderr, "/conc_unit") || !strings.Contains(stderr, "conc_unit is required") || !strings.Contains(stderr, "--unit") {
		t.Errorf("no unit: exit %d, stdout %q, stderr %s", code, out, stderr)
	}
	code, _, stderr = runCLI(t, noUnit, "potential", "-", "--unit", "furlong")
	if code != 2 || !strings.Contains(stderr, `unknown concentration unit "furlong"`) {
		t.Errorf("unknown unit: exit %d, %s", code, stderr)
	}
	code, out, stderr = runCLI(t, noUnit, "potential", "-", "--unit", "uM", "--format", "json")
	var res struct {
		ConcUnit string `json:"conc_unit"`
		Points   []struct {
			AgonistConc float64 `json:"agonist_conc"`
			VMV         float64 `json:"v_mv"`
		} `json:"points"`
		Flags []string `json:"flags"`
	}
	if err := json.Unmarshal([]byte(out), &res); code != 0 || err != nil {
		t.Fatalf("--unit uM: exit %d, %v, %s", code, err, stderr)
	}
	// FACTS §7 "Agonist applied": 30 µM gives V −51.303 mV on this cell
	// (the neuron preset's rest is the FACTS example's, −78.838 mV).
	if res.ConcUnit != "M" || len(res.Points) != 3 || math.Abs(res.Points[2].AgonistConc-3e-5) > 1e-20 ||
		math.Abs(res.Points[2].VMV+51.303) > 0.01 || len(res.Flags) != 0 {
		t.Errorf("--unit uM: %+v", res)
	}
	withUnit := strings.Replace(noUnit, `{"hill"`, `{"conc_unit":"nM","hill"`, 1)
	code, _, stderr = runCLI(t, withUnit, "potential", "-", "--unit", "uM")
	if code != 2 || !strings.Contains(stderr, "disagrees") {
		t.Errorf("--unit against conc_unit: exit %d, %s", code, stderr)
	}
	if code, _, stderr = runCLI(t, withUnit, "potential", "-", "--unit", "nM"); code != 0 {
		t.Errorf("--unit agreeing with conc_unit: exit %d, %s", code, stderr)
	}
	// Micromolar numbers sent as molar: answered, flagged, with a note.
	code, table, _ := runCLI(t, noUnit, "potential", "-", "--unit", "M")
	if code != 0 || !strings.Contains(table, "note: concentrations reach 30 M, above the plausible 0.1 M") {
		t.Errorf("µM as molar: exit %d\n%s", code, table)
	}
}
