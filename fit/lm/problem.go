package lm

import "fmt"

// Residuals evaluates a least-squares problem at x.
type Residuals interface {
	// Eval writes the residuals rᵢ(x) into r (length M). When jac is not nil it
	// also writes the Jacobian ∂rᵢ/∂xⱼ into jac in column-major order,
	// jac[j*M+i], for every parameter j, fixed or not.
	Eval(x, r, jac []float64)
}

// Problem is a nonlinear least-squares problem of M residuals in N parameters.
type Problem struct {
	// M is the number of residuals and N the number of parameters; 0 < N ≤ M.
	M, N int
	// Func evaluates the residuals and their Jacobian.
	Func Residuals
	// Weights, when not nil, holds wᵢ ≥ 0 for each residual (length M); nil
	// means every weight is 1.
	Weights []float64
	// Fixed, when not nil, marks parameters held at their starting value
	// (length N).
	Fixed []bool
	// Lower and Upper, when not nil, bound each parameter (length N); use
	// ±Inf for no bound. Starting values outside the box are moved onto it.
	Lower, Upper []float64
}

// validate panics on a malformed problem: these are programmer errors.
func (p *Problem) validate(x0 []float64) {
	if p.N <= 0 || p.M < 0 || p.Func == nil {
		panic(fmt.Sprintf("lm: bad problem: M=%d N=%d Func=%v", p.M, p.N, p.Func != nil))
	}
	if len(x0) != p.N {
		panic(fmt.Sprintf("lm: len(x0)=%d, want N=%d", len(x0), p.N))
	}
	check := func(name string, n int) {
		if n != 0 && n != p.N && name != "Weights" {
			panic(fmt.Sprintf("lm: len(%s)=%d, want %d", name, n, p.N))
		}
	}
	check("Fixed", len(p.Fixed))
	check("Lower", len(p.Lower))
	check("Upper", len(p.Upper))
	if p.Weights != nil && len(p.Weights) != p.M {
		panic(fmt.Sprintf("lm: len(Weights)=%d, want M=%d", len(p.Weights), p.M))
	}
}

func (p *Problem) fixed(j int) bool { return p.Fixed != nil && p.Fixed[j] }

func (p *Problem) lower(j int) float64 {
	if p.Lower == nil {
		return negInf
	}
	return p.Lower[j]
}

func (p *Problem) upper(j int) float64 {
	if p.Upper == nil {
		return posInf
	}
	return p.Upper[j]
}
