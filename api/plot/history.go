package plot

import (
	"fmt"
	"io"
	"math"
	"strings"
	"time"
)

// History is a compound's potency history: pEC50 of every run against
// its experiment date with its interval, the mean pEC50 of the usable
// runs as a line and, around it, the band of potencies within a factor MSR
// of the geometric mean (pEC50 mean ± log10 MSR). Runs left out of the
// summary are drawn hollow; every point's <title> (a tooltip) gives its
// value and, for an excluded run, the reason.
type History struct {
	Title, Subtitle, Footnote string
	Runs                      []HistoryRun
	// Mean is the mean pEC50 of the usable runs; NaN draws no line.
	Mean float64
	// MSR is the production MSR; NaN (fewer than 3 runs) draws no band.
	MSR float64
}

// HistoryRun is one run of a History. PEC50 NaN is not drawn (a run with
// no estimate); Lo/Hi NaN draw no interval.
type HistoryRun struct {
	ID        string
	At        time.Time
	PEC50     float64
	Lo, Hi    float64 // the pEC50 interval
	Excluded  string  // the reason the run is left out; "" when usable
	Qualifier string  // "=", ">" or "<"
}

// Write renders the figure.
func (h *History) Write(w io.Writer) error {
	var b strings.Builder
	tmin, tmax := math.Inf(1), math.Inf(-1)
	ymin, ymax := math.Inf(1), math.Inf(-1)
	for _, r := range h.Runs {
		if !finiteF(r.PEC50) {
			continue
		}
		t := float64(r.At.Unix())
		tmin, tmax = math.Min(tmin, t), math.Max(tmax, t)
		for _, v := range []float64{r.PEC50, r.Lo, r.Hi} {
			if finiteF(v) {
				ymin, ymax = math.Min(ymin, v), math.Max(ymax, v)
			}
		}
	}
	if finiteF(h.Mean) && finiteF(h.MSR) && h.MSR > 0 {
		d := math.Log10(h.MSR)
		ymin, ymax = math.Min(ymin, h.Mean-d), math.Max(ymax, h.Mean+d)
	}
	if math.IsInf(tmin, 0) {
		now := float64(time.Now().Unix())
		tmin, tmax = now-86400, now
		ymin, ymax = 4, 9
	}
	if tmax-tmin < 86400 {
		tmin, tmax = tmin-43200, tmax+43200
	}
	span := tmax - tmin
	tmin, tmax = tmin-0.04*span, tmax+0.04*span
	ymin, ymax = math.Floor(ymin*2)/2-0.25, math.Ceil(ymax*2)/2+0.25
	px := func(t float64) float64 { return left + (t-tmin)/(tmax-tmin)*(width-left-right) }
	py := func(y float64) float64 { return height - bott - (y-ymin)/(ymax-ymin)*(height-topMin-bott) }

	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" width="%d" height="%d" viewBox="0 0 %d %d" font-family="sans-serif" font-size="12">`+"\n", width, height, width, height)
	fmt.Fprintf(&b, `<rect width="100%%" height="100%%" fill="white"/>`+"\n")
	fmt.Fprintf(&b, `<text x="%d" y="22" font-size="15" font-weight="bold">%s</text>`+"\n", left, esc(h.Title))
	if h.Subtitle != "" {
		fmt.Fprintf(&b, `<text x="%d" y="40" fill="#444">%s</text>`+"\n", left, esc(h.Subtitle))
	}
	x0, x1 := px(tmin), px(tmax)
	if finiteF(h.Mean) {
		if finiteF(h.MSR) && h.MSR > 0 {
			d := math.Log10(h.MSR)
			fmt.Fprintf(&b, `<rect class="msr-band" x="%.1f" y="%.1f" width="%.1f" height="%.1f" fill="#1f77b4" fill-opacity="0.12"><title>within a factor MSR %.3g of the geometric mean</title></rect>`+"\n",
				x0, py(h.Mean+d), x1-x0, py(h.Mean-d)-py(h.Mean+d), h.MSR)
		}
		fmt.Fprintf(&b, `<line class="mean" x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="#1f77b4" stroke-width="1.5"><title>mean pEC50 %.3f</title></line>`+"\n",
			x0, py(h.Mean), x1, py(h.Mean), h.Mean)
	}
	// Axes and ticks.
	fmt.Fprintf(&b, `<line x1="%d" y1="%d" x2="%d" y2="%d" stroke="black"/>`+"\n", left, height-bott, width-right, height-bott)
	fmt.Fprintf(&b, `<line x1="%d" y1="%d" x2="%d" y2="%d" stroke="black"/>`+"\n", left, topMin, left, height-bott)
	for _, y := range ticks(ymin, ymax) {
		fmt.Fprintf(&b, `<line x1="%d" y1="%.1f" x2="%d" y2="%.1f" stroke="black"/><text x="%d" y="%.1f" text-anchor="end">%s</text>`+"\n",
			left-4, py(y), left, py(y), left-7, py(y)+4, trimNum(y))
	}
	for _, t := range dateTicks(tmin, tmax) {
		fmt.Fprintf(&b, `<line x1="%.1f" y1="%d" x2="%.1f" y2="%d" stroke="black"/><text x="%.1f" y="%d" text-anchor="middle">%s</text>`+"\n",
			px(float64(t.Unix())), height-bott, px(float64(t.Unix())), height-bott+4, px(float64(t.Unix())), height-bott+18, t.Format("2006-01-02"))
	}
	fmt.Fprintf(&b, `<text x="%d" y="%d" text-anchor="middle">experiment date (UTC)</text>`+"\n", (left+width-right)/2, height-bott+38)
	fmt.Fprintf(&b, `<text x="18" y="%d" text-anchor="middle" transform="rotate(-90 18 %d)">pEC50</text>`+"\n", (topMin+height-bott)/2, (topMin+height-bott)/2)
	// Runs: interval, then the point; hollow when excluded.
	for _, r := range h.Runs {
		if !finiteF(r.PEC50) {
			continue
		}
		x, y := px(float64(r.At.Unix())), py(r.PEC50)
		colour := "#d62728"
		if r.Excluded != "" {
			colour = "#7f7f7f"
		}
		if finiteF(r.Lo) && finiteF(r.Hi) {
			fmt.Fprintf(&b, `<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="%s"/>`+"\n", x, py(r.Lo), x, py(r.Hi), colour)
		}
		title := fmt.Sprintf("%s %s: pEC50 %s%.2f", r.At.UTC().Format("2006-01-02 15:04"), r.ID, qualPrefix(r.Qualifier), r.PEC50)
		fill, class := colour, "run"
		if r.Excluded != "" {
			fill, class = "white", "run excluded"
			title += " (excluded: " + r.Excluded + ")"
		}
		fmt.Fprintf(&b, `<circle class="%s" cx="%.1f" cy="%.1f" r="4.5" fill="%s" stroke="%s" stroke-width="1.5"><title>%s</title></circle>`+"\n",
			class, x, y, fill, colour, esc(title))
	}
	if h.Footnote != "" {
		for i, line := range wrap(h.Footnote, 105) {
			fmt.Fprintf(&b, `<text x="%d" y="%d" font-size="10" fill="#555">%s</text>`+"\n", left, height-bott+62+14*i, esc(line))
		}
	}
	b.WriteString("</svg>\n")
	_, err := io.WriteString(w, b.String())
	return err
}

// qualPrefix shows a bound: a ">" qualifier on log EC50 is a "<" on pEC50.
func qualPrefix(q string) string {
	switch q {
	case ">":
		return "< "
	case "<":
		return "> "
	}
	return ""
}

func finiteF(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

func trimNum(v float64) string {
	return strings.TrimRight(strings.TrimRight(fmt.Sprintf("%.2f", v), "0"), ".")
}

// dateTicks picks about six whole UTC days between two Unix times.
func dateTicks(tmin, tmax float64) []time.Time {
	days := (tmax - tmin) / 86400
	step := math.Max(1, math.Ceil(days/6))
	start := time.Unix(int64(tmin), 0).UTC().Truncate(24 * time.Hour).Add(24 * time.Hour)
	var out []time.Time
	for t := start; float64(t.Unix()) <= tmax; t = t.Add(time.Duration(step) * 24 * time.Hour) {
		out = append(out, t)
	}
	return out
}
