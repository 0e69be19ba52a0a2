package fit

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Band returns the fitted curve and its pointwise confidence band at each
// concentration (molar): by the delta method,
//
//	Var f(x) ≈ g(x)ᵀ·Cov·g(x),  g = ∂f/∂θ,  band = f ± t(dof, (1+c)/2)·√Var
//
// (Bates & Watts 1988, §2.3.1 [common practice]). cov is row-major over the
// model's parameters with zero rows for fixed ones. lo and hi are NaN when
// the covariance is not finite or dof < 1.
func Band(m Model, theta, cov []float64, dof int, confidence float64, conc []float64) (y, lo, hi []float64) {
	cm := m.Spec()
	np := len(theta)
	g := make([]float64, np)
	t := math.NaN()
	if dof > 0 {
		t = distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(dof)}.Quantile((1 + confidence) / 2)
	}
	y, lo, hi = make([]float64, len(conc)), make([]float64, len(conc)), make([]float64, len(conc))
	for k, c := range conc {
		f := cm.value(theta, log10Conc(c), g)
		var v float64
		for i := 0; i < np; i++ {
			for j := 0; j < np; j++ {
				v += g[i] * cov[i*np+j] * g[j]
			}
		}
		y[k] = f
		half := t * math.Sqrt(v)
		lo[k], hi[k] = f-half, f+half
	}
	return y, lo, hi
}
