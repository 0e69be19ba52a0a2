package figure

import (
	"fmt"
	"strings"

	"sluice/api/plot"
	"sluice/api/service"
	"sluice/api/wire"
	"sluice/fit/plate"
)

// Heatmap is a plate's raw values by well with the QC verdict in the
// title and the first sentence of the caution under it.
func Heatmap(m *service.PlateMap) *plot.Heatmap {
	fig := &plot.Heatmap{Barcode: m.Plate.Barcode, Format: m.Format, Verdict: "QC pending",
		Footnote: wire.Caution[:strings.Index(wire.Caution, ". ")+1]}
	if qc := m.QC; qc != nil {
		fig.Verdict = fmt.Sprintf("QC %s · Z′ %.2f", map[bool]string{true: "pass", false: "FAIL"}[qc.Pass], qc.ZPrime)
		fig.Reasons = qc.Reasons
	}
	for _, r := range m.Wells {
		fig.Wells = append(fig.Wells, plot.HeatWell{Row: r.Row, Col: r.Col, Name: r.Well, Role: plate.Role(r.Role), Value: r.Value})
	}
	return fig
}
