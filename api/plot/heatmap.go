package plot

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"sluice/fit/plate"
)

// Heatmap is a plate's raw values by well: a cell per measured well
// coloured on one scale from the plate's lowest to highest value, the
// controls outlined (max red, min blue), excluded wells grey and crossed,
// empty wells a dashed outline (neither on the scale), a key of these
// roles under the colour bar, and the QC verdict in the title.
type Heatmap struct {
	Barcode string
	Format  plate.Format
	Wells   []HeatWell
	// Verdict is the QC line of the title ("QC pass · Z′ 0.88"), Reasons
	// the reasons it failed, Footnote the caution under the figure.
	Verdict  string
	Reasons  []string
	Footnote string
}

// HeatWell is one well: its place, canonical name, role and raw value
// (nil when it has none).
type HeatWell struct {
	Row, Col int
	Name     string
	Role     plate.Role
	Value    *float64
}

// Write renders the heat map.
func (h *Heatmap) Write(w io.Writer) error {
	f := h.Format
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, r := range h.Wells {
		if r.Value != nil && r.Role != plate.Excluded {
			lo, hi = math.Min(lo, *r.Value), math.Max(hi, *r.Value)
		}
	}
	cell := 640.0 / float64(f.Cols)
	wd, ht := 60+cell*float64(f.Cols)+20, 70+cell*float64(f.Rows)+90
	var b strings.Builder
	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" width="%.0f" height="%.0f" viewBox="0 0 %.0f %.0f" font-family="sans-serif" font-size="11">`+"\n", wd, ht, wd, ht)
	fmt.Fprintf(&b, `<rect width="100%%" height="100%%" fill="white"/>`+"\n")
	fmt.Fprintf(&b, `<text x="60" y="24" font-size="15" font-weight="bold">Plate %s (%d wells) · %s</text>`+"\n", esc(h.Barcode), f.Wells, esc(h.Verdict))
	if len(h.Reasons) > 0 {
		fmt.Fprintf(&b, `<text x="60" y="42" fill="#a00">%s</text>`+"\n", esc(strings.Join(h.Reasons, "; ")))
	}
	for _, r := range h.Wells {
		x, y := 60+cell*float64(r.Col), 60+cell*float64(r.Row)
		fill := "#eeeeee"
		if r.Value != nil && hi > lo {
			fill = ramp((*r.Value - lo) / (hi - lo))
		}
		title := fmt.Sprintf(`<title>%s %s %s</title>`, esc(r.Name), esc(string(r.Role)), valueText(r.Value))
		switch r.Role {
		case plate.Empty:
			// Not measured: a dashed outline, never on the scale.
			fmt.Fprintf(&b, `<g class="well empty"><rect x="%.1f" y="%.1f" width="%.1f" height="%.1f" fill="white" stroke="#888" stroke-dasharray="3 2"/>%s</g>`+"\n",
				x+0.5, y+0.5, cell-2, cell-2, title)
			continue
		case plate.Excluded:
			// Measured but left out: grey and crossed, never on the scale.
			fmt.Fprintf(&b, `<g class="well excluded"><rect x="%.1f" y="%.1f" width="%.1f" height="%.1f" fill="#c8c8c8" stroke="#555"/><path d="M%.1f,%.1f l%.1f,%.1f M%.1f,%.1f l%.1f,%.1f" stroke="#333" stroke-width="1.5"/>%s</g>`+"\n",
				x, y, cell-1, cell-1, x+2, y+2, cell-5, cell-5, x+cell-3, y+2, -(cell - 5), cell-5, title)
			continue
		}
		stroke := "none"
		switch r.Role {
		case plate.MaxControl:
			stroke = "#d62728"
		case plate.MinControl:
			stroke = "#1f77b4"
		}
		fmt.Fprintf(&b, `<rect class="well %s" x="%.1f" y="%.1f" width="%.1f" height="%.1f" fill="%s" stroke="%s" stroke-width="1.5">%s</rect>`+"\n",
			esc(string(r.Role)), x, y, cell-1, cell-1, fill, stroke, title)
	}
	step := 1
	if f.Cols > 24 {
		step = 4
	}
	for col := 0; col < f.Cols; col += step {
		fmt.Fprintf(&b, `<text x="%.1f" y="56" text-anchor="middle">%d</text>`+"\n", 60+cell*(float64(col)+0.5), col+1)
	}
	for row := 0; row < f.Rows; row += step {
		name := f.Name(plate.Well{Row: row})
		fmt.Fprintf(&b, `<text x="52" y="%.1f" text-anchor="end">%s</text>`+"\n", 60+cell*(float64(row)+0.7), name[:len(name)-2])
	}
	// The colour bar: the scale of raw values, lowest to highest.
	const bars = 40
	barX, barY, barW := 60.0, ht-88, 240.0
	for i := 0; i < bars; i++ {
		fmt.Fprintf(&b, `<rect class="colourbar" x="%.1f" y="%.1f" width="%.1f" height="10" fill="%s"/>`+"\n", barX+barW*float64(i)/bars, barY, barW/bars+0.5, ramp((float64(i)+0.5)/bars))
	}
	fmt.Fprintf(&b, `<text x="%.1f" y="%.1f" text-anchor="middle">%.4g</text><text x="%.1f" y="%.1f" text-anchor="middle">%.4g</text>`+"\n", barX, barY+22, lo, barX+barW, barY+22, hi)
	fmt.Fprintf(&b, `<text x="%.1f" y="%.1f" fill="#444">raw value</text>`+"\n", barX+barW+14, barY+9)
	h.legend(&b, barX, barY+32)
	fmt.Fprintf(&b, `<text x="60" y="%.1f" font-size="9" fill="#444">%s</text>`+"\n", ht-28, esc(h.Footnote))
	b.WriteString("</svg>\n")
	_, err := io.WriteString(w, b.String())
	return err
}

// legend draws the key of well roles in a row from (x, y): a swatch
// drawn as the wells are, and the role's name.
func (h *Heatmap) legend(b *strings.Builder, x, y float64) {
	const sw = 12.0
	items := []struct {
		label string
		draw  func(x float64) string
	}{
		{"sample", func(x float64) string {
			return fmt.Sprintf(`<rect x="%.1f" y="%.1f" width="%g" height="%g" fill="%s"/>`, x, y, sw, sw, ramp(0.6))
		}},
		{"max control", func(x float64) string {
			return fmt.Sprintf(`<rect x="%.1f" y="%.1f" width="%g" height="%g" fill="%s" stroke="#d62728" stroke-width="1.5"/>`, x, y, sw, sw, ramp(0.9))
		}},
		{"min control", func(x float64) string {
			return fmt.Sprintf(`<rect x="%.1f" y="%.1f" width="%g" height="%g" fill="%s" stroke="#1f77b4" stroke-width="1.5"/>`, x, y, sw, sw, ramp(0.1))
		}},
		{"excluded (left out)", func(x float64) string {
			return fmt.Sprintf(`<rect x="%.1f" y="%.1f" width="%g" height="%g" fill="#c8c8c8" stroke="#555"/><path d="M%.1f,%.1f l%g,%g M%.1f,%.1f l%g,%g" stroke="#333" stroke-width="1.5"/>`,
				x, y, sw, sw, x+2, y+2, sw-4, sw-4, x+sw-2, y+2, -(sw - 4), sw-4)
		}},
		{"empty (unused)", func(x float64) string {
			return fmt.Sprintf(`<rect x="%.1f" y="%.1f" width="%g" height="%g" fill="white" stroke="#888" stroke-dasharray="3 2"/>`, x, y, sw, sw)
		}},
	}
	fmt.Fprintf(b, `<g class="legend"><text x="%.1f" y="%.1f" fill="#444">Wells:</text>`+"\n", x, y+10)
	x += 44
	for _, it := range items {
		fmt.Fprintf(b, `<g class="legend-key">%s<text x="%.1f" y="%.1f">%s</text></g>`+"\n", it.draw(x), x+sw+4, y+10, esc(it.label))
		x += sw + 16 + 5.6*float64(len([]rune(it.label)))
	}
	b.WriteString("</g>\n")
}

func valueText(v *float64) string {
	if v == nil {
		return "no value"
	}
	return strconv.FormatFloat(*v, 'g', 6, 64)
}

// ramp maps [0, 1] to a perceptually ordered dark-blue → yellow scale.
func ramp(t float64) string {
	t = math.Min(math.Max(t, 0), 1)
	r := 40 + t*(250-40)
	g := 30 + t*(230-30)
	b := 110 + t*(40-110)
	return fmt.Sprintf("#%02x%02x%02x", int(r), int(g), int(b))
}
