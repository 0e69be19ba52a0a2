package lm

// Settings are the solver's tunables. A nil *Settings, and any zero field,
// means the documented default.
type Settings struct {
	// MaxIterations bounds the number of accepted steps. Zero means the
	// default, 1000; it must not be negative. The default is what the
	// NIST StRD problems need from their first starts (Bennett5 takes 789
	// steps, MGH17 more than 200): nist_test.go runs them at the default.
	MaxIterations int
	// MaxEvaluations bounds the number of evaluations; each one computes the
	// residuals and the Jacobian together. Zero or negative means
	// 10·MaxIterations.
	MaxEvaluations int
	// GradientTol stops the solve when the largest cosine between the
	// residual vector and a column of the Jacobian,
	// |Jⱼᵀr|/(‖Jⱼ‖·‖r‖), over the active columns (free and not held at a
	// bound), is at most this (MINPACK's gtol). Zero or negative means
	// 1e-12; range (0, 1).
	GradientTol float64
	// StepTol stops the solve when, after a nearly undamped trial step
	// (λ ≤ 1; accepted or not), the trust radius has fallen to
	// Δ ≤ StepTol·‖Dx‖: every step the solve may still take is that small
	// relative to x (MINPACK's xtol test, plus the λ condition). Zero or
	// negative means 1e-10; range (0, 1).
	StepTol float64
	// FuncTol stops the solve when, after a nearly undamped trial step
	// (λ ≤ 1; accepted or not), both the actual and the predicted relative
	// reduction of S are at most this and their ratio is at most 2
	// (MINPACK's ftol test, plus the λ condition). Zero or negative means
	// 1e-15; range (0, 1).
	FuncTol float64
	// InitialTrust sets the first trust radius, InitialTrust·‖Dx₀‖
	// (MINPACK's factor; InitialTrust itself when x₀ = 0), cut to the first
	// step's length. Zero or negative means 1; range [0.1, 100], not
	// enforced. MINPACK suggests 100, but with
	// Jacobian scaling a radius that large lets the first steps throw a
	// parameter whose column is small far out onto an asymptote (NIST BoxBOD
	// from start 1 lands on b2 ≈ 111 and stays there); 1 solves all 27 NIST
	// problems from both starts.
	InitialTrust float64
	// EstimateOnly skips the covariance (Result.Unscaled and Cov are NaN and
	// a rank-deficient Jacobian is not detected), for callers that need only
	// the estimate, such as bootstrap refits.
	EstimateOnly bool
}

// Defaults.
const (
	DefaultMaxIterations = 1000
	DefaultGradientTol   = 1e-12
	DefaultStepTol       = 1e-10
	DefaultFuncTol       = 1e-15
	DefaultInitialTrust  = 1
)

// resolved returns s with every zero field replaced by its default.
func (s *Settings) resolved() Settings {
	var r Settings
	if s != nil {
		r = *s
	}
	if r.MaxIterations < 0 {
		panic("lm: negative MaxIterations")
	}
	if r.MaxIterations == 0 {
		r.MaxIterations = DefaultMaxIterations
	}
	if r.MaxEvaluations <= 0 {
		r.MaxEvaluations = 10 * r.MaxIterations
	}
	if r.GradientTol <= 0 {
		r.GradientTol = DefaultGradientTol
	}
	if r.StepTol <= 0 {
		r.StepTol = DefaultStepTol
	}
	if r.FuncTol <= 0 {
		r.FuncTol = DefaultFuncTol
	}
	if r.InitialTrust <= 0 {
		r.InitialTrust = DefaultInitialTrust
	}
	return r
}
