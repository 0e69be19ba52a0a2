package plot

import (
	"fmt"
	"io"
	"math"
	"strings"
)

// Series is one curve of a multi-curve figure.
type Series struct {
	Label                string
	PointConc, PointResp []float64
	LineConc, Line       []float64
}

// Schild is two panels: the shifted agonist curves, and the Schild plot of
// log(DR − 1) against log[B] with its regression line.
type Schild struct {
	Title, Subtitle, Footnote string
	Curves                    []Series
	SchildX, SchildY          []float64
	HasLine                   bool
	Slope, Intercept          float64
}

var palette = []string{"#08519c", "#d94801", "#238b45", "#6a51a3", "#cb181d", "#525252", "#0570b0", "#88419d"}

// Write renders the figure.
func (p *Schild) Write(w io.Writer) error {
	const W, H = 980, 470
	var b strings.Builder
	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" width="%d" height="%d" viewBox="0 0 %d %d" font-family="sans-serif" font-size="12">`+"\n", W, H, W, H)
	fmt.Fprintf(&b, `<rect width="100%%" height="100%%" fill="white"/>`+"\n")
	fmt.Fprintf(&b, `<text x="60" y="22" font-size="15" font-weight="bold">%s</text><text x="60" y="40" fill="#444">%s</text>`+"\n", esc(p.Title), esc(p.Subtitle))
	// Left panel.
	x0, x1, y0, y1 := 60.0, 520.0, 380.0, 60.0
	xmin, xmax, ymin, ymax := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	for _, s := range p.Curves {
		for i, c := range s.PointConc {
			if c > 0 {
				xmin, xmax = math.Min(xmin, math.Log10(c)), math.Max(xmax, math.Log10(c))
			}
			ymin, ymax = math.Min(ymin, s.PointResp[i]), math.Max(ymax, s.PointResp[i])
		}
	}
	if math.IsInf(xmin, 0) {
		xmin, xmax, ymin, ymax = -9, -3, 0, 100
	}
	xmin, xmax = math.Floor(xmin-0.3), math.Ceil(xmax+0.3)
	pad := 0.05 * (ymax - ymin + 1e-9)
	ymin, ymax = ymin-pad, ymax+pad
	px := func(x float64) float64 { return x0 + (x-xmin)/(xmax-xmin)*(x1-x0) }
	py := func(y float64) float64 { return y0 - (y-ymin)/(ymax-ymin)*(y0-y1) }
	for k, s := range p.Curves {
		col := palette[k%len(palette)]
		var pts []string
		for i, c := range s.LineConc {
			pts = append(pts, fmt.Sprintf("%.1f,%.1f", px(math.Log10(c)), py(math.Min(math.Max(s.Line[i], ymin), ymax))))
		}
		if len(pts) > 1 {
			fmt.Fprintf(&b, `<polyline points="%s" fill="none" stroke="%s" stroke-width="2"/>`+"\n", strings.Join(pts, " "), col)
		}
		for i, c := range s.PointConc {
			if c > 0 {
				fmt.Fprintf(&b, `<circle cx="%.1f" cy="%.1f" r="3" fill="%s"/>`+"\n", px(math.Log10(c)), py(s.PointResp[i]), col)
			}
		}
		fmt.Fprintf(&b, `<text x="%.0f" y="%d" fill="%s">%s</text>`+"\n", x0+10, 72+14*k, col, esc(s.Label))
	}
	axes(&b, x0, x1, y0, y1, xmin, xmax, ymin, ymax, "log10 [agonist] (M)", "response")
	// Right panel.
	u0, u1 := 620.0, 940.0
	if len(p.SchildX) > 0 {
		smin, smax := p.SchildX[0]-0.5, p.SchildX[len(p.SchildX)-1]+0.5
		tmin, tmax := math.Inf(1), math.Inf(-1)
		for _, y := range p.SchildY {
			tmin, tmax = math.Min(tmin, y), math.Max(tmax, y)
		}
		tmin, tmax = math.Min(tmin, 0)-0.3, tmax+0.3
		qx := func(x float64) float64 { return u0 + (x-smin)/(smax-smin)*(u1-u0) }
		qy := func(y float64) float64 { return y0 - (y-tmin)/(tmax-tmin)*(y0-y1) }
		if p.HasLine {
			// Both lines are clipped to the panel. The dotted one has slope 1
			// through the regression's x intercept, log[B] = −pA2, which is
			// marked on the zero line.
			fmt.Fprintf(&b, `<clipPath id="schild-panel"><rect x="%.1f" y="%.1f" width="%.1f" height="%.1f"/></clipPath>`+"\n", u0, y1, u1-u0, y0-y1)
			fmt.Fprintf(&b, `<line class="regression" clip-path="url(#schild-panel)" x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="#08519c" stroke-width="2"/>`+"\n",
				qx(smin), qy(p.Intercept+p.Slope*smin), qx(smax), qy(p.Intercept+p.Slope*smax))
			if p.Slope != 0 {
				xi := -p.Intercept / p.Slope
				fmt.Fprintf(&b, `<line class="unit-slope" clip-path="url(#schild-panel)" x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="#636363" stroke-dasharray="2 3"/>`+"\n",
					qx(smin), qy(smin-xi), qx(smax), qy(smax-xi))
				if xi >= smin && xi <= smax {
					fmt.Fprintf(&b, `<circle class="pa2" cx="%.1f" cy="%.1f" r="4" fill="none" stroke="#d94801" stroke-width="2"/><text x="%.1f" y="%.1f" fill="#d94801">pA2 %.2f</text>`+"\n",
						qx(xi), qy(0), qx(xi)+6, qy(0)-8, -xi)
				}
				fmt.Fprintf(&b, `<text x="%.1f" y="%.1f" font-size="11" fill="#444">solid: regression, slope %.2f · dotted: slope 1</text>`+"\n", u0+6, y1+12, p.Slope)
			}
		}
		for i, x := range p.SchildX {
			fmt.Fprintf(&b, `<circle cx="%.1f" cy="%.1f" r="4" fill="#252525"/>`+"\n", qx(x), qy(p.SchildY[i]))
		}
		fmt.Fprintf(&b, `<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="#999" stroke-dasharray="4 3"/>`+"\n", u0, qy(0), u1, qy(0))
		axes(&b, u0, u1, y0, y1, smin, smax, tmin, tmax, "log10 [antagonist] (M)", "log(DR − 1)")
	}
	for i, l := range wrap(p.Footnote, 150) {
		fmt.Fprintf(&b, `<text x="10" y="%d" font-size="10" fill="#444">%s</text>`+"\n", 430+12*i, esc(l))
	}
	b.WriteString("</svg>\n")
	_, err := io.WriteString(w, b.String())
	return err
}

func axes(b *strings.Builder, x0, x1, y0, y1, xmin, xmax, ymin, ymax float64, xl, yl string) {
	px := func(x float64) float64 { return x0 + (x-xmin)/(xmax-xmin)*(x1-x0) }
	py := func(y float64) float64 { return y0 - (y-ymin)/(ymax-ymin)*(y0-y1) }
	fmt.Fprintf(b, `<path d="M%.1f,%.1f V%.1f H%.1f" fill="none" stroke="black"/>`+"\n", x0, y1, y0, x1)
	xt, yt := ticks(xmin, xmax), ticks(ymin, ymax)
	for _, t := range xt {
		fmt.Fprintf(b, `<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="black"/><text x="%.1f" y="%.1f" text-anchor="middle">%s</text>`+"\n", px(t), y0, px(t), y0+5, px(t), y0+18, tickLabel(t, xt))
	}
	for _, t := range yt {
		fmt.Fprintf(b, `<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="black"/><text x="%.1f" y="%.1f" text-anchor="end">%s</text>`+"\n", x0-5, py(t), x0, py(t), x0-8, py(t)+4, tickLabel(t, yt))
	}
	fmt.Fprintf(b, `<text x="%.1f" y="%.1f" text-anchor="middle">%s</text>`+"\n", (x0+x1)/2, y0+34, esc(xl))
	fmt.Fprintf(b, `<text transform="translate(%.1f,%.1f) rotate(-90)" text-anchor="middle">%s</text>`+"\n", x0-42, (y0+y1)/2, esc(yl))
}
