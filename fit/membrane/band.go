package membrane

import (
	"context"
	"fmt"
	"math"
	"slices"

	"sluice/fit/boot"
)

// Band returns the percentile interval, at the given confidence, of the
// steady potential V at each concentration over draws of the open-fraction
// curve (e.g. one per bootstrap parameter draw): for each draw, V(c) is
// found as Predict finds it, continuing from rest in ascending order of
// concentration, and lo[i], hi[i] are the percentiles (boot.Percentile) of
// the finite values at concs[i].
//
// With Mg²⁺ each root continues from the draw's previous one
// (mgEquation.nearest), giving the same numbers, bit for bit, as a full
// scan at every concentration, at a small fraction of the cost; whether a
// draw is multistable is not asked.
//
// The draws run on workers goroutines (0 means GOMAXPROCS) in chunks of
// boot.Chunk draws, and ctx is checked before each chunk: when it is done,
// Band returns an error wrapping ctx.Err() within one chunk per worker. A
// panic in a draw is returned as an error wrapping a *boot.PanicError.
func Band(ctx context.Context, rest []Conductance, ch Channel, draws []func(float64) float64, concs []float64, confidence float64, workers int) (lo, hi []float64, err error) {
	order := ascending(concs)
	vr := ChordVoltage(rest...)
	eq := newMgEquation(rest, ch)
	gmax := ch.MaxConductance()
	vs := make([]float64, len(draws)*len(concs)) // draw-major
	err = boot.Run(ctx, len(draws), workers, func() func(int) {
		return func(d int) {
			row := vs[d*len(concs) : (d+1)*len(concs)]
			prev := vr
			for _, i := range order {
				v := steady(&eq, gmax*draws[d](concs[i]), prev)
				row[i], prev = v, v
			}
		}
	})
	if err != nil {
		return nil, nil, fmt.Errorf("potential band: %w", err)
	}
	lo, hi = make([]float64, len(concs)), make([]float64, len(concs))
	col := make([]float64, 0, len(draws))
	for i := range concs {
		col = col[:0]
		for d := range draws {
			if v := vs[d*len(concs)+i]; !math.IsNaN(v) && !math.IsInf(v, 0) {
				col = append(col, v)
			}
		}
		slices.Sort(col)
		lo[i], hi[i] = boot.Percentile(col, confidence)
	}
	return lo, hi, nil
}
