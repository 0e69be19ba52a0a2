package schild

import (
	"errors"
	"math"

	"sluice/fit"
	"sluice/fit/lm"
)

// Operational returns the response of the operational model of agonism
// (Black & Leff 1983; slope form of Black, Leff, Shankley & Wood 1985, Br J
// Pharmacol 84:561; FACTS §3):
//
//	E = Em·τⁿAⁿ / ((KA + A)ⁿ + τⁿAⁿ)
func Operational(em, ka, tau, n, a float64) float64 {
	if a == 0 {
		return 0
	}
	tn := math.Pow(tau*a, n)
	return em * tn / (math.Pow(ka+a, n) + tn)
}

// OperationalEC50 and OperationalEmax are the model's derived potency and
// efficacy (FACTS §3, derived there):
//
//	EC50 = KA/((2 + τⁿ)^(1/n) − 1),  Emax = Em·τⁿ/(1 + τⁿ)
func OperationalEC50(ka, tau, n float64) float64 {
	return ka / (math.Pow(2+math.Pow(tau, n), 1/n) - 1)
}

// OperationalEmax is Em·τⁿ/(1 + τⁿ).
func OperationalEmax(em, tau, n float64) float64 {
	tn := math.Pow(tau, n)
	return em * tn / (1 + tn)
}

// OperationalFit is τ, KA and the slope of a partial agonist.
type OperationalFit struct {
	Em            float64 // the system maximum, from the full agonist
	LogTau, LogKA Estimate
	Slope         Estimate
	Tau, KA       Estimate // back-transformed; SE empty
	RSS           float64
	DOF           int
}

// FitOperational fits a partial agonist's curve by the operational model
// with Em fixed at the full-agonist reference's fitted top (KA and τ cannot
// be separated from one full-agonist curve; FACTS §3). Parameters are
// log10 τ, log10 KA (molar) and n. The Jacobian is by central differences
// (relative step 1e-6), adequate for this three-parameter fit.
func FitOperational(points []fit.Point, em, confidence float64) (*OperationalFit, error) {
	if len(points) < 4 {
		return nil, errors.New("the operational fit needs at least 4 points")
	}
	if !(em > 0) {
		return nil, errors.New("the reference maximum must be > 0")
	}
	if confidence == 0 {
		confidence = 0.95
	}
	// Start: the partial agonist's own Hill fit gives Emax and EC50.
	h, err := fit.Fit(fit.Curve{Points: points}, &fit.Settings{Model: fit.Hill, Fixed: map[string]float64{"bottom": 0}})
	if err != nil {
		return nil, err
	}
	if !h.Converged() {
		return nil, errors.New("the partial agonist's curve did not fit")
	}
	emax := math.Min(h.Top().Estimate, 0.95*em)
	n0 := math.Max(0.3, h.HillSlope().Estimate)
	tau := math.Pow(emax/(em-emax), 1/n0) // Emax = Em·τⁿ/(1 + τⁿ)
	ec50 := math.Pow(10, h.LogEC50().Estimate)
	ka := ec50 * (math.Pow(2+math.Pow(tau, n0), 1/n0) - 1)
	p := &opProblem{pts: points, em: em}
	var lower, upper, start [opParams]float64
	lower[opLogTau], upper[opLogTau], start[opLogTau] = -4, 4, math.Log10(tau)
	lower[opLogKA], upper[opLogKA], start[opLogKA] = -15, 2, math.Log10(ka)
	lower[opSlope], upper[opSlope], start[opSlope] = 0.1, 10, n0
	res, err := lm.Solve(&lm.Problem{M: len(points), N: opParams, Func: p,
		Lower: lower[:], Upper: upper[:]}, start[:], nil)
	if err != nil {
		return nil, err
	}
	t := tQuantile(res.DOF, confidence)
	est := func(j int) Estimate {
		se := res.SE(j)
		return Estimate{Estimate: res.X[j], SE: se, Lo: res.X[j] - t*se, Hi: res.X[j] + t*se}
	}
	o := &OperationalFit{Em: em, LogTau: est(opLogTau), LogKA: est(opLogKA), Slope: est(opSlope), RSS: res.RSS, DOF: res.DOF}
	back := func(e Estimate) Estimate {
		return Estimate{Estimate: math.Pow(10, e.Estimate), SE: math.NaN(), Lo: math.Pow(10, e.Lo), Hi: math.Pow(10, e.Hi)}
	}
	o.Tau, o.KA = back(o.LogTau), back(o.LogKA)
	return o, nil
}

// The operational fit's parameters, in order.
const (
	opLogTau = iota // log10 τ
	opLogKA         // log10(KA/M)
	opSlope         // n
	opParams
)

type opProblem struct {
	pts []fit.Point
	em  float64
}

func (p *opProblem) value(x []float64, a float64) float64 {
	return Operational(p.em, math.Pow(10, x[opLogKA]), math.Pow(10, x[opLogTau]), x[opSlope], a)
}

func (p *opProblem) Eval(x, r, jac []float64) {
	m := len(p.pts)
	for i, pt := range p.pts {
		r[i] = pt.Response - p.value(x, pt.Conc)
	}
	if jac == nil {
		return
	}
	var xp, xm [opParams]float64
	for j := 0; j < opParams; j++ {
		copy(xp[:], x)
		copy(xm[:], x)
		h := 1e-6 * math.Max(1, math.Abs(x[j]))
		xp[j] += h
		xm[j] -= h
		for i, pt := range p.pts {
			jac[j*m+i] = -(p.value(xp[:], pt.Conc) - p.value(xm[:], pt.Conc)) / (2 * h)
		}
	}
}
