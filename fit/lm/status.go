package lm

import "errors"

// Status says how a solve ended.
type Status int

// The statuses. The four convergence statuses, GradientConvergence through
// ZeroResidual (see Converged), mean the estimate is a least-squares
// solution; unless Settings.EstimateOnly, they also mean the Jacobian has
// full rank there, so the covariance is usable (a rank-deficient one turns
// them into Singular).
const (
	NotTerminated Status = iota
	// GradientConvergence: the residual is orthogonal to the active
	// columns of the Jacobian within GradientTol, or no parameter is
	// active.
	GradientConvergence
	// StepConvergence: after a nearly undamped step the trust radius fell
	// below StepTol·‖Dx‖ (see Settings.StepTol).
	StepConvergence
	// FunctionConvergence: after a nearly undamped step the actual and the
	// predicted relative reduction of S were both below FuncTol.
	FunctionConvergence
	// ZeroResidual: the residuals vanished (S = 0 exactly).
	ZeroResidual
	// IterationLimit: MaxIterations or MaxEvaluations was reached first.
	IterationLimit
	// NoProgress: the trust radius or the reductions fell to rounding size
	// while the steps were still damped, before any convergence test
	// passed.
	NoProgress
	// Singular: the solve converged but the Jacobian is rank-deficient at
	// the estimate, so some parameter is not identified and has no standard
	// error. A solve that did not converge keeps its own status, with a NaN
	// covariance when the Jacobian is rank-deficient.
	Singular
	// NumericalFailure: the residuals or Jacobian are not finite at the start.
	NumericalFailure
)

var statusNames = [...]string{
	NotTerminated:       "not_terminated",
	GradientConvergence: "gradient_convergence",
	StepConvergence:     "step_convergence",
	FunctionConvergence: "function_convergence",
	ZeroResidual:        "zero_residual",
	IterationLimit:      "iteration_limit",
	NoProgress:          "no_progress",
	Singular:            "singular",
	NumericalFailure:    "numerical_failure",
}

// String returns the status as a stable snake_case word, the form to store.
func (s Status) String() string {
	if s < 0 || int(s) >= len(statusNames) {
		return "unknown"
	}
	return statusNames[s]
}

// Converged reports whether the status means a solution was found.
func (s Status) Converged() bool {
	return s == GradientConvergence || s == StepConvergence || s == FunctionConvergence || s == ZeroResidual
}

// Errors returned by Status.Err.
var (
	ErrIterationLimit   = errors.New("lm: iteration limit reached before convergence")
	ErrNoProgress       = errors.New("lm: no step reduces the residual sum of squares")
	ErrSingular         = errors.New("lm: Jacobian is rank-deficient at the estimate")
	ErrNumericalFailure = errors.New("lm: residuals or Jacobian not finite")
)

// Err returns nil for a converged status and a sentinel error otherwise.
func (s Status) Err() error {
	switch s {
	case GradientConvergence, StepConvergence, FunctionConvergence, ZeroResidual:
		return nil
	case IterationLimit:
		return ErrIterationLimit
	case NoProgress:
		return ErrNoProgress
	case Singular:
		return ErrSingular
	case NumericalFailure:
		return ErrNumericalFailure
	}
	return errors.New("lm: solve did not terminate")
}
