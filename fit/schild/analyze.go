package schild

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"

	"sluice/fit"
	"sluice/fit/boot"
	"sluice/fit/lm"
)

// Curve is one agonist curve at one antagonist concentration (molar; 0 for
// the control).
type Curve struct {
	AntagonistConc float64
	Points         []fit.Point
}

// Settings control an analysis. Zero fields mean their defaults.
type Settings struct {
	// Confidence of every interval; zero means 0.95.
	Confidence float64
	// Resamples for the bootstrap of the global fit (resampling residuals
	// within each curve); zero means none. At most 100 000.
	Resamples int
	Seed      uint64
	// Workers is the number of goroutines of the bootstrap; zero means
	// GOMAXPROCS.
	Workers int
	// Progress, when not nil, counts the bootstrap's refitted resamples
	// (see fit.Progress); the caller reads it from its own goroutine.
	Progress *fit.Progress
	// MaxDepression: a curve whose fitted window (top − bottom) is more
	// than this fraction smaller than the control's window is
	// insurmountable. The window, not the top, because on a baseline the
	// top hides a loss of the response the agonist can raise (on a
	// baseline of 40, a top of 115 against 140 is a 25 % loss of window but
	// an 18 % fall of the top). Zero means 0.2 (common practice; FACTS §2
	// asks for "a set tolerance"); in (0, 1).
	MaxDepression float64
	// MaxSlopeRatio: a curve whose Hill slope differs from the control's by
	// more than this factor is non-parallel. Zero means 1.5 (common
	// practice).
	MaxSlopeRatio float64
}

// Flags.
const (
	FlagInsurmountable   = "insurmountable"
	FlagNonParallel      = "non_parallel"
	FlagSlopeNotUnity    = "schild_slope_not_unity"
	FlagNoShift          = "dose_ratio_not_above_one"
	FlagCurveFailed      = "curve_fit_failed"
	FlagFewConcentration = "too_few_antagonist_concentrations"
)

// Estimate is a value with its interval; NaN fields are unknown.
type Estimate struct {
	Estimate, SE, Lo, Hi float64
}

// DoseRatio is EC50ᵢ/EC50₀ for one antagonist concentration.
type DoseRatio struct {
	AntagonistConc float64
	DoseRatio      Estimate // interval from log DR ± t·√(SEᵢ² + SE₀²)
}

// Global is the global fit's answer.
type Global struct {
	PA2, Slope Estimate // s free: −log K is the pA2
	PKB        Estimate // s = 1: −log K is the pKB
	// SlopeUnityP is the extra-sum-of-squares F test of s = 1 against s
	// free (FACTS §1, §2).
	SlopeUnityP float64
	// PKBReported is false when s = 1 is rejected at 0.05: then pKB is not
	// an equilibrium constant and is withheld.
	PKBReported bool
	Shared      map[string]float64 // bottom, top, hill, log_ec50_0 of the s-free fit
	Free, Unity GlobalFit
	Resamples   int
	Failed      int
}

// CPEstimate is the IC50-based estimate for insurmountable antagonism: the
// inhibition of the response to agonist concentration A (the control's
// EC80), read off the fitted curves and fitted against log[B], and its
// functional Cheng–Prusoff correction. The correction assumes competition
// with the agonist; for an agonist-independent block (a channel blocker)
// the IC50 itself is the better estimate of affinity.
type CPEstimate struct {
	AgonistConc float64
	IC50        float64
	KB, PKB     float64
}

// Result is a Schild analysis.
type Result struct {
	Curves      []*fit.Result // individual Hill fits, in input order
	Control     int           // index of the control curve
	DoseRatios  []DoseRatio
	Regression  *Schild
	Global      *Global
	Competitive bool
	Flags       []string
	// Withheld says why pA2 and pKB are not reported ("" when they are).
	Withheld     string
	ChengPrusoff *CPEstimate
	Confidence   float64
}

// Analyze runs the whole analysis: individual fits, dose ratios, Schild
// regression, the two global fits and their F test, the bootstrap, and the
// checks that decide whether the antagonism is competitive.
//
// ctx is checked before each individual fit and, in the bootstrap, before
// each chunk of boot.Chunk resamples: when it is done, Analyze returns an
// error wrapping ctx.Err() within one chunk per worker, and no result. A
// panic in a bootstrap refit is returned as an error wrapping a
// *boot.PanicError.
func Analyze(ctx context.Context, curves []Curve, s *Settings) (*Result, error) {
	var set Settings
	if s != nil {
		set = *s
	}
	if set.Confidence == 0 {
		set.Confidence = 0.95
	}
	if !(set.Confidence > 0 && set.Confidence < 1) {
		return nil, fmt.Errorf("%w: confidence %g is outside (0, 1)", fit.ErrInvalidInput, set.Confidence)
	}
	if set.MaxDepression == 0 {
		set.MaxDepression = 0.2
	}
	if !(set.MaxDepression > 0 && set.MaxDepression < 1) {
		return nil, fmt.Errorf("%w: max depression %g is outside (0, 1)", fit.ErrInvalidInput, set.MaxDepression)
	}
	if set.MaxSlopeRatio == 0 {
		set.MaxSlopeRatio = 1.5
	}
	if set.Resamples < 0 || set.Resamples > fit.MaxResamples {
		return nil, fmt.Errorf("%w: resamples %d is outside [0, %d]", fit.ErrInvalidInput, set.Resamples, fit.MaxResamples)
	}
	control := -1
	seen := map[float64]bool{}
	for i, c := range curves {
		if c.AntagonistConc < 0 || math.IsNaN(c.AntagonistConc) || math.IsInf(c.AntagonistConc, 0) {
			return nil, &CurveError{i, fmt.Errorf("%w: antagonist concentration must be ≥ 0", fit.ErrInvalidInput)}
		}
		if seen[c.AntagonistConc] {
			return nil, &CurveError{i, fmt.Errorf("%w: two curves at antagonist %g M", fit.ErrInvalidInput, c.AntagonistConc)}
		}
		seen[c.AntagonistConc] = true
		if c.AntagonistConc == 0 {
			control = i
		}
	}
	if control < 0 {
		return nil, fmt.Errorf("%w: no control curve (antagonist_conc 0)", fit.ErrInvalidInput)
	}
	if len(curves) < 2 {
		return nil, fmt.Errorf("%w: need the control and at least one antagonist concentration", fit.ErrInvalidInput)
	}
	res := &Result{Control: control, Competitive: true, Confidence: set.Confidence}
	fs := &fit.Settings{Model: fit.Hill, Confidence: set.Confidence}
	for i, c := range curves {
		if err := ctx.Err(); err != nil {
			return nil, fmt.Errorf("schild analysis: %w", err)
		}
		r, err := fit.Fit(fit.Curve{ID: fmt.Sprint(c.AntagonistConc), Points: c.Points}, fs)
		if err != nil {
			return nil, &CurveError{i, err}
		}
		if r.Converged() && r.HillSlope().Estimate < 0 {
			return nil, &CurveError{i, fmt.Errorf("%w: the curve falls with agonist concentration; Schild analysis needs agonist curves", fit.ErrInvalidInput)}
		}
		res.Curves = append(res.Curves, r)
	}
	ctl := res.Curves[control]
	if !ctl.HasPotency() {
		res.addFlag(FlagCurveFailed)
		res.Competitive = false
		res.Withheld = "the control curve did not fit, or shows no response"
		return res, nil
	}
	// Dose ratios, shape checks.
	cWindow, cHill, cL := window(ctl), ctl.HillSlope().Estimate, ctl.LogEC50()
	var abs, drs []float64
	for i, r := range res.Curves {
		if i == control {
			continue
		}
		if !r.HasPotency() {
			res.addFlag(FlagCurveFailed)
			continue
		}
		L := r.LogEC50()
		d := L.Estimate - cL.Estimate
		se := math.Hypot(L.SE, cL.SE)
		t := tQuantile(min(r.DOF, ctl.DOF), set.Confidence)
		dr := DoseRatio{AntagonistConc: curves[i].AntagonistConc, DoseRatio: Estimate{Estimate: math.Pow(10, d),
			SE: math.Ln10 * math.Pow(10, d) * se, Lo: math.Pow(10, d-t*se), Hi: math.Pow(10, d+t*se)}}
		res.DoseRatios = append(res.DoseRatios, dr)
		if window(r) < (1-set.MaxDepression)*cWindow {
			res.addFlag(FlagInsurmountable)
		}
		if h := r.HillSlope().Estimate; h > cHill*set.MaxSlopeRatio || h < cHill/set.MaxSlopeRatio {
			res.addFlag(FlagNonParallel)
		}
		if dr.DoseRatio.Estimate <= 1 {
			res.addFlag(FlagNoShift)
			continue
		}
		abs = append(abs, curves[i].AntagonistConc)
		drs = append(drs, dr.DoseRatio.Estimate)
	}
	sort.Slice(res.DoseRatios, func(a, b int) bool { return res.DoseRatios[a].AntagonistConc < res.DoseRatios[b].AntagonistConc })
	if len(abs) >= 2 {
		if reg, err := SchildRegression(abs, drs); err == nil {
			res.Regression = reg
		}
	} else {
		res.addFlag(FlagFewConcentration)
	}
	if res.has(FlagInsurmountable) || res.has(FlagNonParallel) {
		res.Competitive = false
		res.Withheld = "the maximum is depressed or the shift is not parallel: the antagonism is not simply competitive, so pA2 and pKB from a Schild analysis would mislead"
		res.ChengPrusoff = chengPrusoff(res, curves)
		return res, nil
	}
	g, err := globalFits(ctx, res, curves, &set)
	if err != nil {
		return nil, err
	}
	res.Global = g
	if g != nil && !g.PKBReported {
		res.addFlag(FlagSlopeNotUnity)
		res.Competitive = false
	}
	return res, nil
}

// window is a rising curve's fitted response range, top − bottom.
func window(r *fit.Result) float64 { return r.Top().Estimate - r.Bottom().Estimate }

// CurveError says which curve of an analysis is unusable.
type CurveError struct {
	Index int
	Err   error
}

func (e *CurveError) Error() string { return fmt.Sprintf("curve %d: %v", e.Index, e.Err) }
func (e *CurveError) Unwrap() error { return e.Err }

func (r *Result) addFlag(f string) {
	if !r.has(f) {
		r.Flags = append(r.Flags, f)
	}
}

func (r *Result) has(f string) bool { return slices.Contains(r.Flags, f) }

// globalFits fits the model with s free and with s = 1 from starting values
// taken from the individual fits and the Schild regression, tests s = 1,
// and bootstraps both.
func globalFits(ctx context.Context, res *Result, curves []Curve, set *Settings) (*Global, error) {
	d := newGlobalData(curves)
	ctl := res.Curves[res.Control]
	var sumB, sumT, sumH float64
	var k int
	for _, r := range res.Curves {
		if r.Converged() {
			sumB += r.Bottom().Estimate
			sumT += r.Top().Estimate
			sumH += r.HillSlope().Estimate
			k++
		}
	}
	start := make([]float64, gParams)
	start[gBottom], start[gTop], start[gHill] = sumB/float64(k), sumT/float64(k), sumH/float64(k)
	start[gLogEC0] = ctl.LogEC50().Estimate
	start[gPK], start[gSlope] = 8, 1
	if reg := res.Regression; reg != nil && reg.Slope > 0.2 && reg.Slope < 5 {
		start[gPK], start[gSlope] = reg.PA2, reg.Slope
	} else if len(res.DoseRatios) > 0 {
		dr := res.DoseRatios[len(res.DoseRatios)-1]
		if dr.DoseRatio.Estimate > 1 {
			start[gPK] = math.Log10(dr.DoseRatio.Estimate-1) - math.Log10(dr.AntagonistConc)
		}
	}
	lower := []float64{math.Inf(-1), math.Inf(-1), 0.01, start[gLogEC0] - 6, 0, 0.05}
	upper := []float64{math.Inf(1), math.Inf(1), 10, start[gLogEC0] + 6, 16, 10}
	start[gPK] = math.Min(math.Max(start[gPK], 0.5), 15.5)
	free := newGlobalSolver(d, false, lower, upper, false)
	unity := newGlobalSolver(d, true, lower, upper, false)
	g := &Global{}
	if st := free.solve(d.ybar, start, nil); !st.Converged() {
		return nil, errors.New("the global fit with the slope free did not converge: " + st.String())
	}
	g.Free = summarise(free, d)
	if st := unity.solve(d.ybar, g.Free.Params, nil); !st.Converged() {
		return nil, errors.New("the global fit with the slope fixed at 1 did not converge: " + st.String())
	}
	g.Unity = summarise(unity, d)
	ft := fit.FTest(g.Unity.RSS, g.Unity.DOF, g.Free.RSS, g.Free.DOF)
	g.SlopeUnityP = ft.P
	g.PKBReported = !(ft.P < 0.05)
	t := func(dof int) float64 { return tQuantile(dof, set.Confidence) }
	wald := func(f GlobalFit, j int) Estimate {
		q := t(f.DOF)
		return Estimate{Estimate: f.Params[j], SE: f.SE[j], Lo: f.Params[j] - q*f.SE[j], Hi: f.Params[j] + q*f.SE[j]}
	}
	g.PA2, g.Slope, g.PKB = wald(g.Free, gPK), wald(g.Free, gSlope), wald(g.Unity, gPK)
	g.Shared = map[string]float64{}
	for j := gBottom; j <= gLogEC0; j++ {
		g.Shared[globalNames[j]] = g.Free.Params[j]
	}
	if set.Resamples > 0 {
		if err := bootGlobal(ctx, g, d, free, unity, lower, upper, set); err != nil {
			return nil, fmt.Errorf("schild bootstrap: %w", err)
		}
	}
	return g, nil
}

func summarise(s *globalSolver, d *globalData) GlobalFit {
	f := GlobalFit{Params: append([]float64(nil), s.res.X...), Status: s.res.Status}
	f.RSS = s.res.RSS + d.pureSS
	k := 0
	for j := 0; j < gParams; j++ {
		if !s.prob.Fixed[j] && !s.res.AtBound[j] {
			k++
		}
	}
	f.DOF = d.n - k
	f.SE = make([]float64, gParams)
	for j := range f.SE {
		f.SE[j] = math.NaN()
		if !s.prob.Fixed[j] && !s.res.AtBound[j] {
			f.SE[j] = math.Sqrt(f.RSS / float64(f.DOF) * s.res.Unscaled[j*gParams+j])
		}
	}
	return f
}

// bootGlobal resamples the s-free fit's residuals within each curve,
// refits both models, and replaces the Wald intervals of pA2, s and pKB by
// percentile intervals. On an error (ctx done, a refit panicked) g is left
// unchanged.
func bootGlobal(ctx context.Context, g *Global, d *globalData, free, unity *globalSolver, lower, upper []float64, set *Settings) error {
	// Point residuals of the s-free fit, centred and scaled within each
	// curve by √(nᵢ/(nᵢ − p/ncurves)) (an even share of the parameters).
	fitted := make([]float64, len(d.levels))
	r := make([]float64, len(d.levels))
	free.model.y = d.ybar
	free.model.Eval(g.Free.Params, r, nil)
	for l := range fitted {
		fitted[l] = d.ybar[l] - r[l]
	}
	ncurves := d.levels[len(d.levels)-1].curve + 1
	byCurve := make([][]float64, ncurves)
	for i, y := range d.py {
		l := d.pl[i]
		byCurve[d.levels[l].curve] = append(byCurve[d.levels[l].curve], y-fitted[l])
	}
	for c, rs := range byCurve {
		var m float64
		for _, v := range rs {
			m += v
		}
		m /= float64(len(rs))
		n := float64(len(rs))
		sc := math.Sqrt(n / math.Max(n-float64(gParams)/float64(ncurves), 1))
		for i := range rs {
			byCurve[c][i] = (rs[i] - m) * sc
		}
	}
	B := set.Resamples
	draws := make([][3]float64, B)
	ok := make([]bool, B)
	refit := &lm.Settings{EstimateOnly: true, FuncTol: 1e-10}
	err := boot.Run(ctx, B, set.Workers, func() func(int) {
		fs := newGlobalSolver(d, false, lower, upper, true)
		us := newGlobalSolver(d, true, lower, upper, true)
		st := boot.NewStream()
		y := make([]float64, len(d.levels))
		return func(b int) {
			defer set.Progress.AddResample()
			st.Reset(set.Seed, b)
			for l := range d.levels {
				rs := byCurve[d.levels[l].curve]
				var sum float64
				for i := d.starts[l]; i < d.starts[l+1]; i++ {
					sum += fitted[l] + rs[st.Uint64N(uint64(len(rs)))]
				}
				y[l] = sum / d.levels[l].w
			}
			if !fs.solve(y, g.Free.Params, refit).Converged() || !us.solve(y, g.Unity.Params, refit).Converged() {
				return
			}
			draws[b] = [3]float64{fs.res.X[gPK], fs.res.X[gSlope], us.res.X[gPK]}
			ok[b] = true
		}
	})
	if err != nil {
		return err
	}
	g.Resamples = B
	cols := [3][]float64{}
	for b := range draws {
		if !ok[b] {
			g.Failed++
			continue
		}
		for j := range cols {
			cols[j] = append(cols[j], draws[b][j])
		}
	}
	if len(cols[0]) == 0 {
		return nil
	}
	for j, e := range []*Estimate{&g.PA2, &g.Slope, &g.PKB} {
		slices.Sort(cols[j])
		e.Lo, e.Hi = boot.Percentile(cols[j], set.Confidence)
	}
	return nil
}

// chengPrusoff reads the inhibition of the control's EC80 response off the
// fitted curves, fits it against log[B] (Hill, bottom 0, top 100), and turns
// the IC50 into KB by the functional Cheng–Prusoff correction.
func chengPrusoff(res *Result, curves []Curve) *CPEstimate {
	ctl := res.Curves[res.Control]
	th0, bottom0 := ctl.Estimates(), ctl.Bottom().Estimate
	a := math.Pow(10, ctl.LogECF(80))
	base := fit.Hill.Value(th0, a) - bottom0
	var inh fit.Curve
	for i, r := range res.Curves {
		if i == res.Control || !r.HasPotency() {
			continue
		}
		f := fit.Hill.Value(r.Estimates(), a) - bottom0
		inh.Points = append(inh.Points, fit.Point{Conc: curves[i].AntagonistConc, Response: 100 * (1 - f/base)})
	}
	if len(inh.Points) < 3 {
		return nil
	}
	r, err := fit.Fit(inh, &fit.Settings{Model: fit.Hill, Fixed: map[string]float64{"bottom": 0, "top": 100}})
	if err != nil || !r.HasPotency() {
		return nil
	}
	ic50 := math.Pow(10, r.LogEC50().Estimate)
	kb := ChengPrusoff(ic50, a, math.Pow(10, ctl.LogEC50().Estimate), ctl.HillSlope().Estimate)
	return &CPEstimate{AgonistConc: a, IC50: ic50, KB: kb, PKB: -math.Log10(kb)}
}
