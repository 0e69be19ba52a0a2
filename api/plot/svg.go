// Package plot draws Sluice's figures as standalone SVG.
package plot

import (
	"fmt"
	"html"
	"io"
	"math"
	"strings"
)

// Curve is a concentration–response figure on a log10 concentration axis.
type Curve struct {
	Title, Subtitle string
	// XLabel defaults to the agonist axis; YLabel is the left axis. When
	// RightLabel is set, the right axis repeats the left one shifted by
	// RightOffset (e.g. ΔV = V − V_rest).
	XLabel, YLabel string
	RightLabel     string
	RightOffset    float64
	// Points are the data, concentrations in molar; 0 is the vehicle,
	// drawn at a nominal position left of an axis break.
	PointConc, PointResp []float64
	// Line and its band, on a grid of molar concentrations > 0; BandLo and
	// BandHi may be nil or NaN where there is no band.
	LineConc, Line, BandLo, BandHi []float64
	Footnote                       string
}

const (
	width, height          = 680, 480
	left, right, top, bott = 70, 60, 50, 130
)

// Write renders the figure.
func (p *Curve) Write(w io.Writer) error {
	var b strings.Builder
	// x range over the positive concentrations.
	xmin, xmax := math.Inf(1), math.Inf(-1)
	hasVehicle := false
	for _, c := range append(append([]float64{}, p.PointConc...), p.LineConc...) {
		if c > 0 {
			xmin, xmax = math.Min(xmin, math.Log10(c)), math.Max(xmax, math.Log10(c))
		} else if c == 0 {
			hasVehicle = true
		}
	}
	if math.IsInf(xmin, 0) {
		xmin, xmax = -9, -3
	}
	vehicleX := xmin - 1.2
	if hasVehicle {
		xmin = vehicleX - 0.4
	}
	xmin, xmax = math.Floor(xmin), math.Ceil(xmax)
	ymin, ymax := math.Inf(1), math.Inf(-1)
	for _, s := range [][]float64{p.PointResp, p.Line, p.BandLo, p.BandHi} {
		for _, v := range s {
			if !math.IsNaN(v) && !math.IsInf(v, 0) {
				ymin, ymax = math.Min(ymin, v), math.Max(ymax, v)
			}
		}
	}
	if math.IsInf(ymin, 0) {
		ymin, ymax = 0, 1
	}
	pad := 0.05 * math.Max(ymax-ymin, 1e-9)
	ymin, ymax = ymin-pad, ymax+pad
	px := func(x float64) float64 { return left + (x-xmin)/(xmax-xmin)*(width-left-right) }
	py := func(y float64) float64 { return height - bott - (y-ymin)/(ymax-ymin)*(height-top-bott) }

	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" width="%d" height="%d" viewBox="0 0 %d %d" font-family="sans-serif" font-size="12">`+"\n", width, height, width, height)
	fmt.Fprintf(&b, `<rect width="100%%" height="100%%" fill="white"/>`+"\n")
	fmt.Fprintf(&b, `<text x="%d" y="22" font-size="15" font-weight="bold">%s</text>`+"\n", left, esc(p.Title))
	if p.Subtitle != "" {
		fmt.Fprintf(&b, `<text x="%d" y="40" fill="#444">%s</text>`+"\n", left, esc(p.Subtitle))
	}
	// Band, then line, then points.
	if len(p.BandLo) == len(p.LineConc) && len(p.BandHi) == len(p.LineConc) {
		var up, down []string
		for i, c := range p.LineConc {
			if c <= 0 || math.IsNaN(p.BandLo[i]) || math.IsNaN(p.BandHi[i]) {
				continue
			}
			x := px(math.Log10(c))
			up = append(up, fmt.Sprintf("%.1f,%.1f", x, py(clamp(p.BandHi[i], ymin, ymax))))
			down = append([]string{fmt.Sprintf("%.1f,%.1f", x, py(clamp(p.BandLo[i], ymin, ymax)))}, down...)
		}
		if len(up) > 1 {
			fmt.Fprintf(&b, `<polygon points="%s %s" fill="#9ecae1" fill-opacity="0.5" stroke="none"/>`+"\n", strings.Join(up, " "), strings.Join(down, " "))
		}
	}
	var line []string
	for i, c := range p.LineConc {
		if c > 0 && !math.IsNaN(p.Line[i]) {
			line = append(line, fmt.Sprintf("%.1f,%.1f", px(math.Log10(c)), py(p.Line[i])))
		}
	}
	if len(line) > 1 {
		fmt.Fprintf(&b, `<polyline points="%s" fill="none" stroke="#08519c" stroke-width="2"/>`+"\n", strings.Join(line, " "))
	}
	for i, c := range p.PointConc {
		x := vehicleX
		if c > 0 {
			x = math.Log10(c)
		}
		fmt.Fprintf(&b, `<circle cx="%.1f" cy="%.1f" r="3.5" fill="#252525"/>`+"\n", px(x), py(p.PointResp[i]))
	}
	// Axes, ticks, labels.
	x0, x1, y0, y1 := float64(left), float64(width-right), float64(height-bott), float64(top)
	fmt.Fprintf(&b, `<path d="M%.1f,%.1f V%.1f H%.1f" fill="none" stroke="black"/>`+"\n", x0, y1, y0, x1)
	for d := math.Ceil(xmin); d <= xmax; d++ {
		if hasVehicle && d < vehicleX+0.6 {
			continue
		}
		fmt.Fprintf(&b, `<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="black"/><text x="%.1f" y="%.1f" text-anchor="middle">%g</text>`+"\n",
			px(d), y0, px(d), y0+5, px(d), y0+19, d)
	}
	if hasVehicle {
		bx := px(vehicleX + 0.6)
		fmt.Fprintf(&b, `<path d="M%.1f,%.1f l4,-8 M%.1f,%.1f l4,-8" stroke="black"/>`+"\n", bx-4, y0+4, bx, y0+4)
		fmt.Fprintf(&b, `<text x="%.1f" y="%.1f" text-anchor="middle">vehicle</text>`+"\n", px(vehicleX), y0+19)
	}
	for _, t := range ticks(ymin, ymax) {
		fmt.Fprintf(&b, `<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="black"/><text x="%.1f" y="%.1f" text-anchor="end">%g</text>`+"\n",
			x0-5, py(t), x0, py(t), x0-8, py(t)+4, t)
	}
	xl := p.XLabel
	if xl == "" {
		xl = "log10 [agonist] (M)"
	}
	fmt.Fprintf(&b, `<text x="%.1f" y="%.1f" text-anchor="middle">%s</text>`+"\n", (x0+x1)/2, y0+38, esc(xl))
	if p.RightLabel != "" {
		fmt.Fprintf(&b, `<path d="M%.1f,%.1f V%.1f" stroke="black"/>`+"\n", x1, y1, y0)
		for _, t := range ticks(ymin-p.RightOffset, ymax-p.RightOffset) {
			y := py(t + p.RightOffset)
			fmt.Fprintf(&b, `<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="black"/><text x="%.1f" y="%.1f">%g</text>`+"\n",
				x1, y, x1+5, y, x1+8, y+4, t)
		}
		fmt.Fprintf(&b, `<text transform="translate(%d,%.1f) rotate(90)" text-anchor="middle">%s</text>`+"\n", width-8, (y0+y1)/2, esc(p.RightLabel))
	}
	fmt.Fprintf(&b, `<text transform="translate(18,%.1f) rotate(-90)" text-anchor="middle">%s</text>`+"\n", (y0+y1)/2, esc(p.YLabel))
	for i, l := range wrap(p.Footnote, 125) {
		fmt.Fprintf(&b, `<text x="10" y="%.1f" font-size="10" fill="#444">%s</text>`+"\n", y0+58+12*float64(i), esc(l))
	}
	b.WriteString("</svg>\n")
	_, err := io.WriteString(w, b.String())
	return err
}

func clamp(v, lo, hi float64) float64 { return math.Min(math.Max(v, lo), hi) }

func esc(s string) string { return html.EscapeString(s) }

// ticks returns about five round values in [lo, hi].
func ticks(lo, hi float64) []float64 {
	span := hi - lo
	step := math.Pow(10, math.Floor(math.Log10(span/5)))
	for _, m := range []float64{1, 2, 5, 10} {
		if span/(step*m) <= 6 {
			step *= m
			break
		}
	}
	var out []float64
	for v := math.Ceil(lo/step) * step; v <= hi; v += step {
		out = append(out, math.Round(v/step)*step+0) // +0 turns −0 into 0
	}
	return out
}

// wrap breaks text into lines of at most n bytes at spaces.
func wrap(s string, n int) []string {
	var lines []string
	var cur string
	for _, w := range strings.Fields(s) {
		if len(cur)+len(w)+1 > n && cur != "" {
			lines = append(lines, cur)
			cur = ""
		}
		if cur != "" {
			cur += " "
		}
		cur += w
	}
	if cur != "" {
		lines = append(lines, cur)
	}
	return lines
}
