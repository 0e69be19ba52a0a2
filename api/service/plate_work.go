package service

import (
	"sluice/fit"
	"sluice/fit/cost"
	"sluice/fit/plate"
)

// plateWork estimates a plate's CPU work before it is queued: the fit of
// every curve the plate's wells make (plate.Curves), with its bootstrap,
// by the cost model (fit.Cost summed over the curves with the model's free
// parameters; see package fit/cost). QC, normalisation and Schild
// analyses are cheap next to it and not counted.
func plateWork(specs []plate.CurveSpec, fs *fit.Settings, bs *fit.BootSettings) cost.Work {
	free := 4
	if m, err := fit.ParseModel(string(fs.Model)); err == nil {
		free = len(m.Params())
		for _, p := range m.Params() {
			if _, ok := fs.Fixed[p]; ok {
				free--
			}
		}
	}
	curves := make([]fit.Curve, len(specs))
	for i, cs := range specs {
		curves[i] = cs.Curve
	}
	return fit.CostOf(curves, free, bs)
}

// smallPlate tells whether a plate of work w goes to the queue's
// small-job lane (Budget.SmallPlate).
func (b Budget) smallPlate(w cost.Work) bool {
	return b.SmallPlate >= 0 && w <= b.SmallPlate
}
