package plot

import (
	"fmt"
	"io"
	"math"
	"strings"
)

// DriftPoint is one point of a control chart.
type DriftPoint struct {
	Label string // the plate's barcode and date, for the violation list
	Value float64
	// EWMA and its limits, in the value's units; NaN without a baseline.
	EWMA, EWMALo, EWMAHi float64
	// Rules are the rules the point violates ("1-2s", "1-3s", …).
	Rules []string
}

// Drift is a Levey–Jennings chart (values in time order against the
// baseline mean and ±1, 2, 3 SD lines, points coloured by the worst rule
// they violate, violations ringed and listed) with an EWMA panel beneath.
type Drift struct {
	Title, Subtitle string
	YLabel          string
	// Mean and SD are the baseline; NaN for none (then no lines, no EWMA).
	Mean, SD float64
	Points   []DriftPoint
	Footnote string
}

// Colours by what a point's worst rule points to (fit/drift's Rule.Kind).
const (
	colourInControl  = "#1f4e9c"
	colourWarning    = "#e08a00"
	colourRandom     = "#c0392b"
	colourSystematic = "#7d3c98"
)

// pointColour is the colour of the worst rule violated: random error
// (1-3s, R-4s) over systematic (2-2s, 4-1s, 10-x, ewma, cusum) over the
// 1-2s warning.
func pointColour(rules []string) string {
	c := colourInControl
	for _, r := range rules {
		switch r {
		case "1-3s", "R-4s":
			return colourRandom
		case "1-2s":
			if c == colourInControl {
				c = colourWarning
			}
		default:
			c = colourSystematic
		}
	}
	return c
}

// maxListed bounds the violation list beneath the chart.
const maxListed = 12

// Write renders the chart.
func (d *Drift) Write(w io.Writer) error {
	const (
		W, x0, x1         = 800.0, 80.0, 690.0
		ljTop, ljBottom   = 60.0, 300.0
		ewTop, ewBottom   = 350.0, 470.0
		listTop, lineStep = 545.0, 16.0
	)
	var listed []string
	for _, p := range d.Points {
		if len(p.Rules) > 0 { // the latest maxListed are shown
			listed = append(listed, p.Label+": "+strings.Join(p.Rules, ", "))
		}
	}
	shown := min(len(listed), maxListed)
	more := len(listed) - shown
	foot := wrap(d.Footnote, 120)
	H := listTop + lineStep*float64(shown+2) + 14*float64(len(foot)) + 20
	var b strings.Builder
	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" width="%.0f" height="%.0f" viewBox="0 0 %.0f %.0f" font-family="sans-serif" font-size="12">`+"\n", W, H, W, H)
	b.WriteString(`<rect width="100%" height="100%" fill="white"/>` + "\n")
	fmt.Fprintf(&b, `<text x="%.0f" y="22" font-size="15" font-weight="bold">%s</text>`+"\n", x0, esc(d.Title))
	if d.Subtitle != "" {
		fmt.Fprintf(&b, `<text x="%.0f" y="40" fill="#444">%s</text>`+"\n", x0, esc(d.Subtitle))
	}
	n := len(d.Points)
	hasBase := !math.IsNaN(d.Mean) && !math.IsNaN(d.SD) && d.SD > 0
	px := func(i int) float64 {
		if n <= 1 {
			return (x0 + x1) / 2
		}
		return x0 + 10 + float64(i)/float64(n-1)*(x1-x0-20)
	}

	// Levey–Jennings panel: the y range holds every point and ±3.5 SD.
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, p := range d.Points {
		lo, hi = math.Min(lo, p.Value), math.Max(hi, p.Value)
	}
	if hasBase {
		lo, hi = math.Min(lo, d.Mean-3.5*d.SD), math.Max(hi, d.Mean+3.5*d.SD)
	}
	if math.IsInf(lo, 0) || !(hi > lo) {
		lo, hi = lo-1, hi+1
		if math.IsInf(lo, 0) {
			lo, hi = 0, 1
		}
	}
	yAxis(&b, x0, x1, ljBottom, ljTop, lo, hi, d.YLabel)
	py := func(v float64) float64 { return ljBottom - (v-lo)/(hi-lo)*(ljBottom-ljTop) }
	if hasBase {
		for _, k := range []int{-3, -2, -1, 0, 1, 2, 3} {
			y := py(d.Mean + float64(k)*d.SD)
			stroke, dash, label := "#999", ` stroke-dasharray="4 3"`, fmt.Sprintf("%+d SD", k)
			switch {
			case k == 0:
				stroke, dash, label = "#333", "", fmt.Sprintf("mean %.4g", d.Mean)
			case k == 2 || k == -2:
				stroke = colourWarning
			case k == 3 || k == -3:
				stroke = colourRandom
			}
			fmt.Fprintf(&b, `<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="%s"%s/><text x="%.1f" y="%.1f" fill="%s">%s</text>`+"\n",
				x0, y, x1, y, stroke, dash, x1+4, y+4, stroke, esc(label))
		}
	}
	if n > 1 {
		var path []string
		for i, p := range d.Points {
			path = append(path, fmt.Sprintf("%.1f,%.1f", px(i), py(p.Value)))
		}
		fmt.Fprintf(&b, `<polyline points="%s" fill="none" stroke="#bbb"/>`+"\n", strings.Join(path, " "))
	}
	for i, p := range d.Points {
		c := pointColour(p.Rules)
		fmt.Fprintf(&b, `<circle cx="%.1f" cy="%.1f" r="3" fill="%s"><title>%s</title></circle>`+"\n", px(i), py(p.Value), c,
			esc(p.Label+" "+strings.Join(p.Rules, ", ")))
		if len(p.Rules) > 0 {
			fmt.Fprintf(&b, `<circle cx="%.1f" cy="%.1f" r="6.5" fill="none" stroke="%s" stroke-width="1.5"/>`+"\n", px(i), py(p.Value), c)
		}
	}

	// EWMA panel.
	fmt.Fprintf(&b, `<text x="%.0f" y="%.0f" font-weight="bold">EWMA</text>`+"\n", x0, ewTop-10)
	elo, ehi := math.Inf(1), math.Inf(-1)
	for _, p := range d.Points {
		for _, v := range []float64{p.EWMA, p.EWMALo, p.EWMAHi} {
			if !math.IsNaN(v) && !math.IsInf(v, 0) {
				elo, ehi = math.Min(elo, v), math.Max(ehi, v)
			}
		}
	}
	if hasBase && !math.IsInf(elo, 0) && ehi > elo {
		pad := 0.05 * (ehi - elo)
		elo, ehi = elo-pad, ehi+pad
		yAxis(&b, x0, x1, ewBottom, ewTop, elo, ehi, "EWMA")
		fmt.Fprintf(&b, `<text x="%.1f" y="%.1f" text-anchor="middle">plates in experiment-time order</text>`+"\n", (x0+x1)/2, ewBottom+20)
		ey := func(v float64) float64 { return ewBottom - (v-elo)/(ehi-elo)*(ewBottom-ewTop) }
		line := func(get func(p DriftPoint) float64, stroke, dash string) {
			var path []string
			for i, p := range d.Points {
				path = append(path, fmt.Sprintf("%.1f,%.1f", px(i), ey(get(p))))
			}
			fmt.Fprintf(&b, `<polyline points="%s" fill="none" stroke="%s"%s/>`+"\n", strings.Join(path, " "), stroke, dash)
		}
		fmt.Fprintf(&b, `<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="#333"/>`+"\n", x0, ey(d.Mean), x1, ey(d.Mean))
		line(func(p DriftPoint) float64 { return p.EWMAHi }, colourRandom, ` stroke-dasharray="4 3"`)
		line(func(p DriftPoint) float64 { return p.EWMALo }, colourRandom, ` stroke-dasharray="4 3"`)
		line(func(p DriftPoint) float64 { return p.EWMA }, colourInControl, "")
		fmt.Fprintf(&b, `<text x="%.1f" y="%.1f" fill="%s">limits</text>`+"\n", x1+4, ey(d.Points[n-1].EWMAHi)+4, colourRandom)
		for i, p := range d.Points {
			if p.EWMA > p.EWMAHi || p.EWMA < p.EWMALo {
				fmt.Fprintf(&b, `<circle cx="%.1f" cy="%.1f" r="3" fill="%s"/>`+"\n", px(i), ey(p.EWMA), colourSystematic)
			}
		}
	} else {
		fmt.Fprintf(&b, `<text x="%.0f" y="%.0f" fill="#666">no baseline yet: nothing is judged</text>`+"\n", x0, (ewTop+ewBottom)/2)
	}

	// Legend and the violation list.
	y := listTop - 24
	legend := []struct{ c, t string }{{colourInControl, "in control"}, {colourWarning, "1-2s warning"},
		{colourSystematic, "systematic: 2-2s, 4-1s, 10-x, EWMA, CUSUM"}, {colourRandom, "random: 1-3s, R-4s"}}
	x := x0
	for _, l := range legend {
		fmt.Fprintf(&b, `<circle cx="%.1f" cy="%.1f" r="4" fill="%s"/><text x="%.1f" y="%.1f">%s</text>`+"\n", x, y-4, l.c, x+8, y, esc(l.t))
		x += 30 + 6.5*float64(len(l.t))
	}
	y = listTop
	title := fmt.Sprintf("Violations (%d)", len(listed))
	if len(listed) == 0 {
		title = "No violations"
	}
	fmt.Fprintf(&b, `<text x="%.0f" y="%.1f" font-weight="bold">%s</text>`+"\n", x0, y, title)
	for _, l := range listed[len(listed)-shown:] {
		y += lineStep
		fmt.Fprintf(&b, `<text x="%.0f" y="%.1f">%s</text>`+"\n", x0, y, esc(l))
	}
	if more > 0 {
		y += lineStep
		fmt.Fprintf(&b, `<text x="%.0f" y="%.1f" fill="#666">and %d earlier violations</text>`+"\n", x0, y, more)
	}
	y += lineStep
	for _, l := range foot {
		y += 14
		fmt.Fprintf(&b, `<text x="%.0f" y="%.1f" fill="#666" font-size="10">%s</text>`+"\n", x0, y, esc(l))
	}
	b.WriteString("</svg>\n")
	_, err := io.WriteString(w, b.String())
	return err
}

// yAxis draws a value axis with about five round ticks and a baseline
// along the bottom (the x axis is the points' order, unlabelled).
func yAxis(b *strings.Builder, x0, x1, y0, y1, lo, hi float64, label string) {
	py := func(v float64) float64 { return y0 - (v-lo)/(hi-lo)*(y0-y1) }
	fmt.Fprintf(b, `<path d="M%.1f,%.1f V%.1f H%.1f" fill="none" stroke="black"/>`+"\n", x0, y1, y0, x1)
	ts := ticks(lo, hi)
	for _, t := range ts {
		fmt.Fprintf(b, `<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="black"/><text x="%.1f" y="%.1f" text-anchor="end">%s</text>`+"\n",
			x0-5, py(t), x0, py(t), x0-8, py(t)+4, tickLabel(t, ts))
	}
	fmt.Fprintf(b, `<text transform="translate(%.1f,%.1f) rotate(-90)" text-anchor="middle">%s</text>`+"\n", x0-55, (y0+y1)/2, esc(label))
}
