package plot

import (
	"regexp"
	"strconv"
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

// Points a refit left out are drawn hollow where they were measured, apart
// from the filled points, widen the axes to hold them, and are named in
// the legend; a figure without any has neither.
func TestCurveExcludedPoints(t *testing.T) {
	fig := &Curve{Title: "refit", PointConc: []float64{0, 1e-8, 1e-7, 1e-6}, PointResp: []float64{1, 10, 50, 90},
		ExcludedConc: []float64{1e-7}, ExcludedResp: []float64{140},
		LineConc: []float64{1e-8, 1e-7, 1e-6}, Line: []float64{10, 50, 90}}
	var b strings.Builder
	if err := fig.Write(&b); err != nil {
		t.Fatal(err)
	}
	s := b.String()
	n := wellFormed(t, s)
	if got := strings.Count(s, `<circle class="excluded"`); got != 1 {
		t.Errorf("%d hollow points, want 1", got)
	}
	if got := strings.Count(s, `fill="#252525"/>`); got != 4 {
		t.Errorf("%d filled points, want 4", got)
	}
	if n["circle"] != 6 || !strings.Contains(s, "left out by a refit") {
		t.Errorf("circles %d (4 points, 1 hollow, 1 legend), legend present %v", n["circle"], strings.Contains(s, "left out by a refit"))
	}
	// The y axis reaches the outlier at 140: its circle lies inside the
	// panel (below the top margin) and above the tick at 100.
	cy := regexp.MustCompile(`class="excluded" cx="[^"]*" cy="([^"]*)"`).FindStringSubmatch(s)
	tick := regexp.MustCompile(`<line x1="[^"]*" y1="([^"]*)"[^>]*/><text[^>]*text-anchor="end">100<`).FindStringSubmatch(s)
	if cy == nil || tick == nil {
		t.Fatalf("no hollow point (%v) or no tick at 100 (%v)", cy, tick)
	}
	y, _ := strconv.ParseFloat(cy[1], 64)
	y100, _ := strconv.ParseFloat(tick[1], 64)
	if !(y >= topMin && y < y100) {
		t.Errorf("the left-out point at 140 is drawn at y=%g, want inside the panel (≥ %d) above the tick at 100 (%g)", y, topMin, y100)
	}
	fig.ExcludedConc, fig.ExcludedResp = nil, nil
	b.Reset()
	if err := fig.Write(&b); err != nil {
		t.Fatal(err)
	}
	if strings.Contains(b.String(), "excluded") || strings.Contains(b.String(), "left out") {
		t.Error("a figure without left-out points draws or names them")
	}
}
