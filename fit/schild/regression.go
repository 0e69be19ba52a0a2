package schild

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Line is an ordinary least-squares straight line y = intercept + slope·x.
type Line struct {
	Slope, Intercept     float64
	SESlope, SEIntercept float64
	Cov                  float64 // covariance of slope and intercept
	DOF                  int
	Sigma                float64
}

// fitLine fits y on x by ordinary least squares (n ≥ 2; SEs need n ≥ 3).
func fitLine(x, y []float64) (Line, error) {
	n := float64(len(x))
	if len(x) < 2 {
		return Line{}, errors.New("a line needs at least two points")
	}
	var mx, my float64
	for i := range x {
		mx += x[i]
		my += y[i]
	}
	mx /= n
	my /= n
	var sxx, sxy float64
	for i := range x {
		sxx += (x[i] - mx) * (x[i] - mx)
		sxy += (x[i] - mx) * (y[i] - my)
	}
	if sxx == 0 {
		return Line{}, errors.New("all antagonist concentrations are equal")
	}
	l := Line{Slope: sxy / sxx, DOF: len(x) - 2}
	l.Intercept = my - l.Slope*mx
	var rss float64
	for i := range x {
		r := y[i] - l.Intercept - l.Slope*x[i]
		rss += r * r
	}
	l.Sigma = math.NaN()
	l.SESlope, l.SEIntercept, l.Cov = math.NaN(), math.NaN(), math.NaN()
	if l.DOF > 0 {
		s2 := rss / float64(l.DOF)
		l.Sigma = math.Sqrt(s2)
		l.SESlope = math.Sqrt(s2 / sxx)
		l.SEIntercept = math.Sqrt(s2 * (1/n + mx*mx/sxx))
		l.Cov = -mx * s2 / sxx
	}
	return l, nil
}

// tQuantile is the two-sided t multiplier for the confidence level.
func tQuantile(dof int, confidence float64) float64 {
	if dof < 1 {
		return math.NaN()
	}
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(dof)}.Quantile((1 + confidence) / 2)
}

// Schild is the Schild regression of log(DR − 1) on log[B]:
//
//	log(DR − 1) = s·log[B] + c,   pA2 = c/s
//
// (FACTS §2: pA2 is −log[B] at DR = 2, the x-intercept). With s = 1 the
// intercept is pKB; PKB holds the fit with the slope fixed at 1, mean(y − x).
type Schild struct {
	Line
	PA2, SEPA2 float64 // SE by the delta method on c/s
	PKB, SEPKB float64 // slope fixed at 1
}

// SlopeCI and PA2CI are t intervals on the regression's n − 2 degrees of
// freedom (NaN with fewer than three points).
func (s *Schild) SlopeCI(confidence float64) Estimate {
	t := tQuantile(s.DOF, confidence)
	return Estimate{Estimate: s.Slope, SE: s.SESlope, Lo: s.Slope - t*s.SESlope, Hi: s.Slope + t*s.SESlope}
}

// PA2CI is the interval of pA2 from its delta-method SE.
func (s *Schild) PA2CI(confidence float64) Estimate {
	t := tQuantile(s.DOF, confidence)
	return Estimate{Estimate: s.PA2, SE: s.SEPA2, Lo: s.PA2 - t*s.SEPA2, Hi: s.PA2 + t*s.SEPA2}
}

// SchildRegression fits log(DR − 1) against log10 of the antagonist
// concentrations (molar). Dose ratios ≤ 1 have no logarithm and are an
// error.
func SchildRegression(antagonist, doseRatio []float64) (*Schild, error) {
	if len(antagonist) != len(doseRatio) {
		panic("schild: lengths differ")
	}
	x := make([]float64, len(antagonist))
	y := make([]float64, len(antagonist))
	for i := range x {
		if !(antagonist[i] > 0) {
			return nil, errors.New("Schild regression needs antagonist concentrations > 0")
		}
		if !(doseRatio[i] > 1) {
			return nil, errors.New("a dose ratio ≤ 1 (no shift) has no log(DR − 1)")
		}
		x[i] = math.Log10(antagonist[i])
		y[i] = math.Log10(doseRatio[i] - 1)
	}
	l, err := fitLine(x, y)
	if err != nil {
		return nil, err
	}
	s := &Schild{Line: l, PA2: l.Intercept / l.Slope}
	// Var(c/s) ≈ (1/s)²Var(c) + (c/s²)²Var(s) − 2(c/s³)Cov(c, s).
	c, sl := l.Intercept, l.Slope
	s.SEPA2 = math.Sqrt(l.SEIntercept*l.SEIntercept/(sl*sl) + c*c*l.SESlope*l.SESlope/(sl*sl*sl*sl) - 2*c*l.Cov/(sl*sl*sl))
	var m, ss float64
	for i := range x {
		m += y[i] - x[i]
	}
	m /= float64(len(x))
	for i := range x {
		d := y[i] - x[i] - m
		ss += d * d
	}
	s.PKB = m
	s.SEPKB = math.NaN()
	if len(x) > 1 {
		s.SEPKB = math.Sqrt(ss / float64(len(x)-1) / float64(len(x)))
	}
	return s, nil
}

// ChengPrusoff returns KB from the IC50 of an antagonist against a fixed
// agonist concentration A on a logistic agonist curve of EC50 and slope nH
// (Leff & Dougall 1993; FACTS §2, re-derived there):
//
//	KB = IC50 / ((2 + (A/EC50)^nH)^(1/nH) − 1)
//
// which is IC50/(1 + A/EC50) at nH = 1.
func ChengPrusoff(ic50, a, ec50, nH float64) float64 {
	return ic50 / (math.Pow(2+math.Pow(a/ec50, nH), 1/nH) - 1)
}
