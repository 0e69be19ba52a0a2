// Package plot draws Sluice's figures as standalone SVG.
package plot

import (
	"fmt"
	"html"
	"io"
	"math"
	"slices"
	"strconv"
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
	// ExcludedConc and ExcludedResp are points a refit left out, drawn
	// hollow where they were measured (same units as the points) and named
	// in the legend; they take no part in the line.
	ExcludedConc, ExcludedResp []float64
	// Line and its band, on a grid of molar concentrations > 0; BandLo and
	// BandHi may be nil or NaN where there is no band.
	LineConc, Line, BandLo, BandHi []float64
	// BandLabel names the band in the legend ("95% Wald band"); empty
	// draws no legend entry.
	BandLabel string
	// Mark is a potency to mark on the x axis, molar (0 or NaN: none),
	// labelled MarkLabel ("EC50", "IC50"); Note is a line written inside
	// the panel (e.g. "inactive: no potency").
	Mark      float64
	MarkLabel string
	Note      string
	// HLine, when HLineLabel is set, is a horizontal reference line on the
	// left axis's scale (e.g. a firing threshold), kept inside the y range.
	HLine      float64
	HLineLabel string
	Footnote   string
}

const (
	width, height    = 680, 480
	left, right      = 70, 60
	topMin, bott     = 50, 130
	subtitleWrap     = 95 // bytes per subtitle line
	subtitleLineStep = 15
)

// Write renders the figure.
func (p *Curve) Write(w io.Writer) error {
	var b strings.Builder
	// x range over the positive concentrations.
	xmin, xmax := math.Inf(1), math.Inf(-1)
	hasVehicle := false
	for _, c := range slices.Concat(p.PointConc, p.ExcludedConc, p.LineConc) {
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
	for _, s := range [][]float64{p.PointResp, p.ExcludedResp, p.Line, p.BandLo, p.BandHi} {
		for _, v := range s {
			if !math.IsNaN(v) && !math.IsInf(v, 0) {
				ymin, ymax = math.Min(ymin, v), math.Max(ymax, v)
			}
		}
	}
	if math.IsInf(ymin, 0) {
		ymin, ymax = 0, 1
	}
	if p.HLineLabel != "" && !math.IsNaN(p.HLine) && !math.IsInf(p.HLine, 0) {
		ymin, ymax = math.Min(ymin, p.HLine), math.Max(ymax, p.HLine)
	}
	// A flat curve: open the range to ±5 % of its level (at least ±0.5)
	// so that the ticks are round numbers, not 4.00000004.
	if span := ymax - ymin; span < 1e-6*math.Max(math.Abs(ymin), math.Abs(ymax)) || span == 0 {
		h := math.Max(0.05*math.Abs(ymax), 0.5)
		mid := (ymin + ymax) / 2
		ymin, ymax = mid-h, mid+h
	}
	sub := wrap(p.Subtitle, subtitleWrap)
	top := float64(topMin)
	if len(sub) > 1 {
		top += subtitleLineStep * float64(len(sub)-1)
	}
	pad := 0.05 * math.Max(ymax-ymin, 1e-9)
	ymin, ymax = ymin-pad, ymax+pad
	px := func(x float64) float64 { return left + (x-xmin)/(xmax-xmin)*(width-left-right) }
	py := func(y float64) float64 { return height - bott - (y-ymin)/(ymax-ymin)*(height-top-bott) }

	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" width="%d" height="%d" viewBox="0 0 %d %d" font-family="sans-serif" font-size="12">`+"\n", width, height, width, height)
	fmt.Fprintf(&b, `<rect width="100%%" height="100%%" fill="white"/>`+"\n")
	fmt.Fprintf(&b, `<text x="%d" y="22" font-size="15" font-weight="bold">%s</text>`+"\n", left, esc(p.Title))
	for i, l := range sub {
		fmt.Fprintf(&b, `<text x="%d" y="%d" fill="#444">%s</text>`+"\n", left, 40+subtitleLineStep*i, esc(l))
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
	for i, c := range p.ExcludedConc {
		x := vehicleX
		if c > 0 {
			x = math.Log10(c)
		}
		fmt.Fprintf(&b, `<circle class="excluded" cx="%.1f" cy="%.1f" r="4" fill="white" stroke="#252525" stroke-width="1.5"/>`+"\n",
			px(x), py(p.ExcludedResp[i]))
	}
	// Axes, ticks, labels.
	x0, x1, y0, y1 := float64(left), float64(width-right), float64(height-bott), top
	if p.Mark > 0 && !math.IsNaN(p.Mark) && p.MarkLabel != "" {
		if lx := math.Log10(p.Mark); lx >= xmin && lx <= xmax {
			x := px(lx)
			fmt.Fprintf(&b, `<line class="mark" x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="#d94801" stroke-dasharray="5,3"/>`+"\n", x, y1, x, y0)
			fmt.Fprintf(&b, `<text class="mark" x="%.1f" y="%.1f" fill="#d94801">%s</text>`+"\n", x+4, y1+14, esc(p.MarkLabel))
		}
	}
	if p.HLineLabel != "" && !math.IsNaN(p.HLine) && !math.IsInf(p.HLine, 0) {
		y := py(p.HLine)
		fmt.Fprintf(&b, `<line class="hline" x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="#a50f15" stroke-dasharray="6,4"/><text x="%.1f" y="%.1f" fill="#a50f15" font-size="11">%s</text>`+"\n",
			x0, y, x1, y, x0+6, y-4, esc(p.HLineLabel))
	}
	if p.Note != "" {
		fmt.Fprintf(&b, `<text class="note" x="%.1f" y="%.1f" font-size="14" fill="#a50f15">%s</text>`+"\n", x0+12, y1+20, esc(p.Note))
	}
	if p.BandLabel != "" {
		lx, ly := x1-170, y0-14
		fmt.Fprintf(&b, `<rect class="legend" x="%.1f" y="%.1f" width="18" height="10" fill="#9ecae1" fill-opacity="0.5"/><text x="%.1f" y="%.1f" font-size="11">%s</text>`+"\n",
			lx, ly-9, lx+24, ly, esc(p.BandLabel))
	}
	if len(p.ExcludedConc) > 0 {
		lx, ly := x1-170, y0-30
		fmt.Fprintf(&b, `<circle class="legend" cx="%.1f" cy="%.1f" r="4" fill="white" stroke="#252525" stroke-width="1.5"/><text x="%.1f" y="%.1f" font-size="11">left out by a refit</text>`+"\n",
			lx+9, ly-4, lx+24, ly)
	}
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
	yt := ticks(ymin, ymax)
	for _, t := range yt {
		fmt.Fprintf(&b, `<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="black"/><text x="%.1f" y="%.1f" text-anchor="end">%s</text>`+"\n",
			x0-5, py(t), x0, py(t), x0-8, py(t)+4, tickLabel(t, yt))
	}
	xl := p.XLabel
	if xl == "" {
		xl = "log10 [agonist] (M)"
	}
	fmt.Fprintf(&b, `<text x="%.1f" y="%.1f" text-anchor="middle">%s</text>`+"\n", (x0+x1)/2, y0+38, esc(xl))
	if p.RightLabel != "" {
		fmt.Fprintf(&b, `<path d="M%.1f,%.1f V%.1f" stroke="black"/>`+"\n", x1, y1, y0)
		rt := ticks(ymin-p.RightOffset, ymax-p.RightOffset)
		for _, t := range rt {
			y := py(t + p.RightOffset)
			fmt.Fprintf(&b, `<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="black"/><text x="%.1f" y="%.1f">%s</text>`+"\n",
				x1, y, x1+5, y, x1+8, y+4, tickLabel(t, rt))
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

// tickLabel prints a tick with as many decimals as the step between ticks
// needs, no more (ticks steps are 1, 2 or 5 × 10^k): steps of 0.2 give
// one decimal, steps of 20 none.
func tickLabel(t float64, all []float64) string {
	dec := 0
	if len(all) > 1 {
		if step := all[1] - all[0]; step > 0 && step < 1 {
			dec = int(math.Ceil(-math.Log10(step) - 1e-9))
		}
	}
	return strconv.FormatFloat(t, 'f', dec, 64)
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
