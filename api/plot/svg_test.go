package plot

import (
	"encoding/xml"
	"io"
	"math"
	"strings"
	"testing"
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
	n := wellFormed(t, b.String())
	if n["circle"] != 5 || n["polyline"] != 1 {
		t.Errorf("elements %v", n)
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
