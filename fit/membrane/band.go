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
//
// Memory stays bounded whatever the size: the concentrations are taken in
// ascending blocks that hold at most bandBlockValues potentials, each draw
// carrying its last potential from one block to the next.
func Band(ctx context.Context, rest []Conductance, ch Channel, draws []func(float64) float64, concs []float64, confidence float64, workers int) (lo, hi []float64, err error) {
	return band(ctx, rest, ch, draws, concs, confidence, workers, bandBlockValues)
}

// bandBlockValues bounds the potentials Band holds at once (32 MiB).
const bandBlockValues = 1 << 22

func band(ctx context.Context, rest []Conductance, ch Channel, draws []func(float64) float64, concs []float64, confidence float64, workers, blockValues int) (lo, hi []float64, err error) {
	order := ascending(concs)
	eq := newMgEquation(rest, ch)
	gmax := ch.MaxConductance()
	prev := make([]float64, len(draws)) // each draw's last potential
	vr := ChordVoltage(rest...)
	for d := range prev {
		prev[d] = vr
	}
	k := max(1, min(len(concs), blockValues/max(1, len(draws)))) // concentrations per block
	vs := make([]float64, len(draws)*k)                          // draw-major
	col := make([]float64, 0, len(draws))
	lo, hi = make([]float64, len(concs)), make([]float64, len(concs))
	for first := 0; first < len(order); first += k {
		block := order[first:min(first+k, len(order))]
		nb := len(block)
		err := boot.Run(ctx, len(draws), workers, func() func(int) {
			return func(d int) {
				row := vs[d*nb : (d+1)*nb]
				v := prev[d]
				for j, i := range block {
					v = steady(&eq, gmax*draws[d](concs[i]), v)
					row[j] = v
				}
				prev[d] = v
			}
		})
		if err != nil {
			return nil, nil, fmt.Errorf("potential band: %w", err)
		}
		for j, i := range block {
			col = col[:0]
			for d := range draws {
				if v := vs[d*nb+j]; !math.IsNaN(v) && !math.IsInf(v, 0) {
					col = append(col, v)
				}
			}
			slices.Sort(col)
			lo[i], hi[i] = boot.Percentile(col, confidence)
		}
	}
	return lo, hi, nil
}
