package service

import (
	"context"
	"fmt"
	"math"
	"slices"
	"strings"

	"sluice/api/plot"
	"sluice/api/wire"
	"sluice/fit/membrane"
)

// potentialGridPoints is the number of log-spaced concentrations the
// potential figure draws its line and band through, besides the requested
// ones: across the 550-pixel-wide panel no segment is longer than about
// 5 px, so the line reads as a curve, not as a polygon of the requested
// points.
const potentialGridPoints = 121

// potentialGrid returns the figure's concentrations, molar: potentialGridPoints
// log-spaced from the lowest to the highest positive requested
// concentration (a decade either side of a single one), with the requested
// ones merged in, so that the line passes through every dot; ascending,
// without repeats. It is nil when no concentration is positive.
func potentialGrid(concs []float64) []float64 {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, c := range concs {
		if c > 0 {
			lo, hi = math.Min(lo, c), math.Max(hi, c)
		}
	}
	if math.IsInf(lo, 0) {
		return nil
	}
	a, b := math.Log10(lo), math.Log10(hi)
	if lo == hi {
		a, b = a-1, b+1
	}
	grid := make([]float64, 0, potentialGridPoints+len(concs))
	for k := range potentialGridPoints {
		grid = append(grid, math.Pow(10, a+(b-a)*float64(k)/(potentialGridPoints-1)))
	}
	// The ends are the requested extremes exactly, not 10^log10(c).
	if lo < hi {
		grid[0], grid[len(grid)-1] = lo, hi
	}
	for _, c := range concs {
		if c > 0 {
			grid = append(grid, c)
		}
	}
	slices.Sort(grid)
	return slices.Compact(grid)
}

// potentialFigure is the figure of a prediction: V against log
// concentration on the dense grid of potentialGrid (the model evaluated
// there by membrane.Predict, and its bootstrap band by membrane.Band when
// the curve has draws), the requested concentrations as dots (the vehicle
// left of the axis break), ΔV on the right-hand axis, the threshold as a
// labelled dashed line with the concentration that reaches it marked, and
// a title naming the agonist and the channel.
func potentialFigure(ctx context.Context, req *wire.PotentialRequest, m *potentialModel, out *wire.PotentialResponse, workers int) (*plot.Curve, error) {
	fig := &plot.Curve{Title: m.agonist + " on " + m.channel, YLabel: "V (mV)",
		RightLabel: "ΔV from rest (mV)", RightOffset: out.RestMV, XLabel: "log10 [agonist] (M)"}
	parts := []string{"predicted steady membrane potential",
		fmt.Sprintf("rest %.1f mV", out.RestMV), fmt.Sprintf("channel reversal %.1f mV", out.ChannelReversalMV)}
	if m.ch.MgOut > 0 {
		parts = append(parts, fmt.Sprintf("Mg²⁺ %g mM", m.ch.MgOut))
	}
	if m.curveID != "" {
		parts = append(parts, "fit "+m.curveID)
	}
	if len(out.Flags) > 0 {
		parts = append(parts, "flags: "+strings.Join(out.Flags, ", "))
	}
	fig.Subtitle = strings.Join(parts, " · ")
	// The notes behind the flags stay in the JSON: the footnote has room
	// for the two cautions only.
	fig.Footnote = strings.Join(out.Cautions[:2], " ")
	for _, p := range out.Points {
		fig.PointConc = append(fig.PointConc, p.AgonistConc)
		fig.PointResp = append(fig.PointResp, p.VMV)
	}
	if grid := potentialGrid(m.concs); grid != nil {
		pred, err := membrane.Predict(ctx, m.rest, m.ch, m.po, grid)
		if err != nil {
			return nil, err
		}
		fig.LineConc = grid
		for _, p := range pred.Points {
			fig.Line = append(fig.Line, p.V)
		}
		if len(m.draws) > 0 {
			if fig.BandLo, fig.BandHi, err = membrane.Band(ctx, m.rest, m.ch, m.draws, grid, m.conf, workers); err != nil {
				return nil, err
			}
			fig.BandLabel = fmt.Sprintf("%.0f%% bootstrap band", 100*m.conf)
		}
	}
	if out.Multistable {
		fig.Note = "more than one steady state: the branch reached from rest is drawn"
	}
	if t := req.ThresholdMV; t != nil {
		fig.HLine, fig.HLineLabel = *t, fmt.Sprintf("threshold %.1f mV", *t)
		if c := out.ThresholdCrossed; c != nil && *c > 0 {
			fig.Mark, fig.MarkLabel = *c, "threshold at "+molarText(*c)
		}
	}
	return fig, nil
}
