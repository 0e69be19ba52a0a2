package plot

import (
	"regexp"
	"strings"
	"testing"
)

// The potency is marked and labelled, the band is named in a legend, a
// long subtitle wraps onto several lines, and an inactive curve says so.
func TestCurveMarks(t *testing.T) {
	fig := &Curve{Title: "demo-ag-1", YLabel: "response (% of reference max)",
		Subtitle:  strings.Repeat("flags: top_not_reached, ec50_outside_tested_range ", 4),
		PointConc: []float64{1e-8, 1e-7, 1e-6}, PointResp: []float64{90, 50, 10},
		LineConc: []float64{1e-8, 1e-7, 1e-6}, Line: []float64{90, 50, 10},
		BandLo: []float64{85, 45, 5}, BandHi: []float64{95, 55, 15},
		BandLabel: "95% Wald band (delta method)", Mark: 1e-7, MarkLabel: "IC50", Note: "inactive: no potency",
		HLine: -55, HLineLabel: "threshold -55.0 mV"}
	var b strings.Builder
	if err := fig.Write(&b); err != nil {
		t.Fatal(err)
	}
	s := b.String()
	wellFormed(t, s)
	for _, want := range []string{`class="mark"`, ">IC50<", `class="legend"`, "95% Wald band (delta method)", `class="note"`, "inactive: no potency", `class="hline"`, "threshold -55.0 mV"} {
		if !strings.Contains(s, want) {
			t.Errorf("no %q", want)
		}
	}
	if n := strings.Count(s, `fill="#444">flags`) + strings.Count(s, `fill="#444">`); n < 3 {
		t.Errorf("subtitle on %d lines, want it wrapped", n)
	}
}

// A flat curve's axis has round tick labels, never "4.00000004".
func TestFlatCurveTicks(t *testing.T) {
	fig := &Curve{Title: "flat", PointConc: []float64{1e-8, 1e-7, 1e-6}, PointResp: []float64{4.00000004, 4.00000004, 4.00000004},
		LineConc: []float64{1e-8, 1e-6}, Line: []float64{4.00000004, 4.00000004}}
	var b strings.Builder
	if err := fig.Write(&b); err != nil {
		t.Fatal(err)
	}
	labels := regexp.MustCompile(`text-anchor="end">([^<]*)<`).FindAllStringSubmatch(b.String(), -1)
	if len(labels) < 2 {
		t.Fatalf("%d y tick labels", len(labels))
	}
	for _, l := range labels {
		if len(l[1]) > 4 {
			t.Errorf("tick label %q is not rounded", l[1])
		}
	}
}
