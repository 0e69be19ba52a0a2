package wire

import (
	"math"

	"sluice/fit/plate"
)

// PlateQC is a plate's quality on the wire and as stored. Figures that are
// not finite are null (Num). Signal/background μmax/μmin has no bound when
// the min controls' mean is 0, as it is for background-subtracted data:
// then signal_background is null and signal_background_unbounded is true.
// A null signal_background with signal_background_unbounded false means
// the ratio is undefined (both means 0).
type PlateQC struct {
	ZPrime                    Num            `json:"z_prime"`
	SignalWindow              Num            `json:"signal_window"`
	SignalBackground          Num            `json:"signal_background"`
	SignalBackgroundUnbounded bool           `json:"signal_background_unbounded"`
	CV                        map[string]Num `json:"cv"`
	EdgeShift                 Num            `json:"edge_shift"`
	WorstRow                  Num            `json:"worst_row_shift"`
	WorstCol                  Num            `json:"worst_column_shift"`
	Pass                      bool           `json:"pass"`
	Reasons                   []string       `json:"reasons"`
}

// FromQC is the wire form of a plate's QC.
func FromQC(q *plate.QC) PlateQC {
	out := PlateQC{ZPrime: Num(q.ZPrime), SignalWindow: Num(q.SignalWindow), SignalBackground: Num(q.SignalBackground),
		SignalBackgroundUnbounded: math.IsInf(q.SignalBackground, 0), CV: make(map[string]Num, len(q.CV)),
		EdgeShift: Num(q.EdgeShift), WorstRow: Num(q.WorstRow), WorstCol: Num(q.WorstCol), Pass: q.Pass, Reasons: q.Reasons}
	for k, v := range q.CV {
		out.CV[k] = Num(v)
	}
	if out.Reasons == nil {
		out.Reasons = []string{}
	}
	return out
}
