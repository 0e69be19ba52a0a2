// Package lm solves nonlinear least-squares problems
//
//	minimise  S(x) = Σᵢ wᵢ·rᵢ(x)²
//
// by the Levenberg–Marquardt method with Marquardt's parameter scaling,
// fixed parameters and box bounds.
//
// Each iteration factors the weighted Jacobian J = QR by Householder
// reflections and finds the damped step δ from the small least-squares problem
//
//	min ‖ [R; √λ·D] δ + [Qᵀr; 0] ‖
//
// as in Moré (1978), "The Levenberg–Marquardt algorithm: implementation and
// theory", in Numerical Analysis (G. A. Watson, ed.), Springer LNM 630,
// pp. 105–116, so that JᵀJ is never
// formed and the conditioning of the step is that of J, not of JᵀJ. D holds the
// running maximum of the Jacobian's column norms (Moré 1978, eq. 6.3).
// The damping λ is chosen so that the scaled step stays inside a trust
// region ‖Dδ‖ ≤ Δ, and Δ grows or shrinks with the ratio of actual to
// predicted reduction (Moré 1978, §5–§6). The update follows MINPACK's lmder
// with two differences, both in Solve: the predicted reduction is that of
// the step actually taken (which may stop at a bound), and the shrink factor
// uses it in place of lmder's directional derivative.
//
// Bounds are kept by an active set. A parameter on a bound whose descent
// direction −Jᵀr points out of the box is held for that iteration; one
// whose computed step points out of the box is pinned there until the next
// accepted step, and the step is recomputed without it. The step is then
// shortened as a whole to stop at the first bound it would cross, keeping
// its direction; it is never clipped component by component.
//
// The covariance of the estimate is NIST's
//
//	Cov = σ²·(JᵀWJ)⁻¹,  σ² = S/(M − p),
//
// with p the number of parameters that are neither fixed nor at a bound,
// computed from the QR factors of the column-scaled Jacobian. A solution whose
// scaled Jacobian is numerically rank-deficient is reported as Singular, never
// as converged.
//
// A Workspace holds every buffer a solve needs; reusing one for many problems
// of the same size makes a solve free of heap allocation.
package lm
