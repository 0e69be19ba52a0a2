package plot

import (
	"encoding/xml"
	"io"
	"math"
	"strings"
	"testing"

	"sluice/fit/plate"
)

// wellFormed parses the SVG as XML and counts elements by name.
func wellFormed(t *testing.T, s string) map[string]int {
	t.Helper()
	d := xml.NewDecoder(strings.NewReader(s))
	n := map[string]int{}
	for {
		tok, err := d.Token()
		if err == io.EOF {
			return n
		}
		if err != nil {
			t.Fatalf("not well-formed XML: %v\n%.300s", err, s)
		}
		if se, ok := tok.(xml.StartElement); ok {
			n[se.Name.Local]++
		}
	}
}

func TestCurveSVG(t *testing.T) {
	fig := &Curve{Title: "a <b> & c", YLabel: "response", Footnote: "For research use only.",
		PointConc: []float64{0, 1e-8, 1e-7, 1e-6}, PointResp: []float64{1, 10, 50, 90},
		LineConc: []float64{1e-8, 1e-7, 1e-6}, Line: []float64{10, 50, 90},
		BandLo: []float64{8, 45, math.NaN()}, BandHi: []float64{12, 55, math.NaN()},
		RightLabel: "ΔV", RightOffset: 10}
	var b strings.Builder
	if err := fig.Write(&b); err != nil {
		t.Fatal(err)
	}
	n := wellFormed(t, b.String())
	if n["circle"] != 4 || n["polyline"] != 1 || n["polygon"] != 1 {
		t.Errorf("elements %v", n)
	}
	if !strings.Contains(b.String(), "vehicle") || !strings.Contains(b.String(), "a &lt;b&gt; &amp; c") {
		t.Error("vehicle break or escaped title missing")
	}
	if strings.Contains(b.String(), ">-0<") {
		t.Error("a tick reads −0")
	}
}

func TestSchildSVG(t *testing.T) {
	fig := &Schild{Title: "S", Curves: []Series{{Label: "0", PointConc: []float64{1e-8, 1e-7}, PointResp: []float64{10, 60},
		LineConc: []float64{1e-8, 1e-7}, Line: []float64{10, 60}}},
		SchildX: []float64{-8, -7, -6}, SchildY: []float64{0, 1, 2}, HasLine: true, Slope: 1, Intercept: 8}
	var b strings.Builder
	fig.Write(&b)
	s := b.String()
	n := wellFormed(t, s)
	// Five data points and the pA2 mark.
	if n["circle"]-strings.Count(s, `class="pa2"`) != 5 || n["polyline"] != 1 {
		t.Errorf("elements %v", n)
	}
	// Intercept 8, slope 1: pA2 8 marked, the slope-1 line drawn, both
	// lines clipped to the panel.
	for _, want := range []string{`class="pa2"`, "pA2 8.00", `class="unit-slope"`, `class="regression" clip-path="url(#schild-panel)"`, "<clipPath"} {
		if !strings.Contains(s, want) {
			t.Errorf("no %q", want)
		}
	}
}

func TestTicks(t *testing.T) {
	ts := ticks(-0.3, 1.2)
	if len(ts) < 3 || ts[0] < -0.3 || ts[len(ts)-1] > 1.2 {
		t.Errorf("ticks %v", ts)
	}
	for _, v := range ts {
		if math.Signbit(v) && v == 0 {
			t.Errorf("−0 in %v", ts)
		}
	}
}

func TestHeatmapSVG(t *testing.T) {
	v := func(x float64) *float64 { return &x }
	fig := &Heatmap{Barcode: `P<1>&"`, Format: plate.Plate96, Verdict: "QC FAIL · Z′ 0.10", Reasons: []string{"Z′ 0.100 is below 0.50"},
		Footnote: "For research use only.", Wells: []HeatWell{
			{Row: 0, Col: 0, Name: "A01", Role: plate.MaxControl, Value: v(100)},
			{Row: 0, Col: 11, Name: "A12", Role: plate.MinControl, Value: v(0)},
			{Row: 7, Col: 5, Name: "H06", Role: plate.Empty},
			{Row: 7, Col: 6, Name: "H07", Role: plate.Excluded, Value: v(1e6)},
		}}
	var b strings.Builder
	if err := fig.Write(&b); err != nil {
		t.Fatal(err)
	}
	s := b.String()
	n := wellFormed(t, s)
	// The background, one cell per well and a swatch per role in the
	// legend, besides the colour bar.
	bar, cells, keys := strings.Count(s, `class="colourbar"`), strings.Count(s, `class="well `), strings.Count(s, `class="legend-key"`)
	if cells != 4 || keys != 5 || n["rect"]-bar != 1+cells+keys || bar < 10 || !strings.Contains(s, "P&lt;1&gt;&amp;&#34;") || !strings.Contains(s, "Z′ 0.100 is below") {
		t.Errorf("elements %v, %d cells, %d legend keys\n%s", n, cells, keys, s)
	}
	if !strings.Contains(s, `stroke="#d62728"`) || !strings.Contains(s, `stroke="#1f77b4"`) || !strings.Contains(s, "H06 empty no value") {
		t.Errorf("controls not outlined or empty well not labelled:\n%s", s)
	}
	// Empty and excluded wells are drawn apart from the scale and from
	// each other (dashed outline; grey and crossed).
	if !strings.Contains(s, `<g class="well empty"><rect`) || !strings.Contains(s, `stroke-dasharray`) || !strings.Contains(s, `<g class="well excluded"><rect`) ||
		!strings.Contains(s, "H07 excluded 1e+06") {
		t.Errorf("the empty and excluded wells are not drawn apart:\n%s", s)
	}
	// The excluded outlier stays off the colour scale: it runs 0 to 100.
	if !strings.Contains(s, `text-anchor="middle">100</text>`) {
		t.Errorf("the scale does not end at the highest kept value, 100:\n%s", s)
	}
	for _, want := range []string{"max control", "min control", "excluded", "empty"} {
		if !strings.Contains(s, ">"+want) {
			t.Errorf("the legend lacks %q", want)
		}
	}
}
