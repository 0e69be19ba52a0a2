package figure

import (
	"fmt"
	"math"
	"time"

	"sluice/api/plot"
	"sluice/api/wire"
)

// History is a compound's potency history in one assay: pEC50 of every
// run against experiment date with its interval, the mean line and the
// ±MSR band, excluded runs drawn apart.
func History(h *wire.PotencyHistory) (*plot.History, error) {
	fig := &plot.History{Title: "Potency of " + h.CompoundID + " in " + h.AssayID, Footnote: wire.Caution,
		Mean: float64(h.Summary.PEC50Mean), MSR: float64(h.Summary.MSR)}
	fig.Subtitle = fmt.Sprintf("%d usable of %d runs", h.Summary.N, len(h.Runs))
	if h.Summary.N > 0 {
		fig.Subtitle += fmt.Sprintf(" · mean pEC50 %.2f", float64(h.Summary.PEC50Mean))
	}
	if m := float64(h.Summary.MSR); !math.IsNaN(m) {
		fig.Subtitle += fmt.Sprintf(" · MSR %.2f over the last %d", m, h.Summary.MSRRuns)
	}
	for _, r := range h.Runs {
		at, err := time.Parse(time.RFC3339Nano, r.MeasuredAt)
		if err != nil {
			return nil, fmt.Errorf("run %s: measured_at: %w", r.ID, err)
		}
		fig.Runs = append(fig.Runs, plot.HistoryRun{ID: r.ID, At: at, PEC50: float64(r.PEC50), Lo: -float64(r.LogEC50CI[1]),
			Hi: -float64(r.LogEC50CI[0]), Excluded: r.Excluded, Qualifier: r.Qualifier})
	}
	return fig, nil
}
