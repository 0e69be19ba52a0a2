package plot

import (
	"bytes"
	"math"
	"regexp"
	"strings"
	"testing"
)

// The chart is well-formed SVG with the mean and six SD lines labelled,
// one dot per point, a ring per violating point coloured by its worst
// rule, the violations listed, and an EWMA panel.
func TestDriftSVG(t *testing.T) {
	fig := &Drift{Title: "min_control_mean <A>", YLabel: "min control", Mean: 10, SD: 1, Footnote: "For research use only."}
	for i, v := range []float64{10, 11, 9, 13.5, 10, 12.2, 12.4} {
		p := DriftPoint{Label: "P" + string(rune('0'+i)), Value: v, EWMA: 10 + 0.1*float64(i), EWMALo: 9, EWMAHi: 11}
		switch i {
		case 3:
			p.Rules = []string{"1-2s", "1-3s"}
		case 6:
			p.Rules = []string{"1-2s", "2-2s"}
		}
		fig.Points = append(fig.Points, p)
	}
	var buf bytes.Buffer
	if err := fig.Write(&buf); err != nil {
		t.Fatal(err)
	}
	s := buf.String()
	n := wellFormed(t, s)
	if n["circle"] != 7+2+4 { // points, rings, legend
		t.Errorf("%d circles", n["circle"])
	}
	for _, want := range []string{"mean 10", "+1 SD", "-1 SD", "+2 SD", "-2 SD", "+3 SD", "-3 SD", "EWMA", "Violations (2)",
		"P3: 1-2s, 1-3s", "P6: 1-2s, 2-2s", "&lt;A&gt;", `stroke="` + colourRandom + `" stroke-width`, `stroke="` + colourSystematic + `" stroke-width`} {
		if !strings.Contains(s, want) {
			t.Errorf("chart lacks %q", want)
		}
	}
	// Without a baseline: no lines, no EWMA, still well-formed.
	buf.Reset()
	if err := (&Drift{Title: "t", Mean: math.NaN(), SD: math.NaN(), Points: []DriftPoint{{Value: 1, EWMA: math.NaN(), EWMALo: math.NaN(), EWMAHi: math.NaN()}}}).Write(&buf); err != nil {
		t.Fatal(err)
	}
	wellFormed(t, buf.String())
	if strings.Contains(buf.String(), "SD<") || !strings.Contains(buf.String(), "no baseline yet") {
		t.Error("a chart without a baseline draws SD lines")
	}
}

// Drift axis ticks print with the decimals their step needs: a range
// whose ticks fall on 0.6 prints "0.6", never "0.60000000001".
func TestDriftTickLabels(t *testing.T) {
	d := &Drift{Title: "t", YLabel: "z_prime", Mean: 0.62, SD: 0.03, Points: []DriftPoint{
		{Label: "a", Value: 0.55, EWMA: 0.58, EWMALo: 0.5, EWMAHi: 0.7}, {Label: "b", Value: 0.69, EWMA: 0.6, EWMALo: 0.5, EWMAHi: 0.7}}}
	var b strings.Builder
	if err := d.Write(&b); err != nil {
		t.Fatal(err)
	}
	long := regexp.MustCompile(`>-?\d+\.\d{4,}<`)
	if m := long.FindString(b.String()); m != "" {
		t.Errorf("a tick label with spurious digits: %s", m)
	}
}
