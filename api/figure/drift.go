package figure

import (
	"fmt"
	"math"
	"strings"

	"sluice/api/plot"
	"sluice/api/wire"
)

// Drift is an assay metric's control chart: a Levey–Jennings figure with
// an EWMA panel, its baseline and where that came from in the subtitle.
func Drift(ch *wire.DriftChart) *plot.Drift {
	fig := &plot.Drift{Title: "Assay " + ch.AssayID + " · " + ch.Metric, YLabel: ch.Metric, Mean: math.NaN(), SD: math.NaN(),
		Footnote: wire.Caution}
	sub := []string{"status " + ch.Status}
	if b := ch.Baseline; b != nil {
		fig.Mean, fig.SD = float64(b.Mean), float64(b.SD)
		src := b.Source
		if b.Runs > 0 {
			src = fmt.Sprintf("%s, first %d accepted plates", src, b.Runs)
		}
		sub = append(sub, fmt.Sprintf("baseline %.4g ± %.3g SD (%s)", fig.Mean, fig.SD, src))
	}
	fig.Subtitle = strings.Join(sub, " · ")
	for _, p := range ch.Points {
		day := p.MeasuredAt
		if len(day) > 10 {
			day = day[:10]
		}
		fig.Points = append(fig.Points, plot.DriftPoint{Label: p.Barcode + " " + day, Value: float64(p.Value), EWMA: float64(p.EWMA),
			EWMALo: float64(p.EWMALimits[0]), EWMAHi: float64(p.EWMALimits[1]), Rules: p.Violations})
	}
	return fig
}
