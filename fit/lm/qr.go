package lm

import "math"

// householderQR factors the m×k column-major matrix a (a[j*m+i]) in place as
// a = QR. On return the upper triangle of a, diagonal included, holds R;
// below the diagonal, column j holds the Householder vector vⱼ without its
// first element, which is implicitly 1; tau[j] holds τⱼ (0 for a zero column,
// whose reflector is the identity). Each reflector is also applied to the
// vectors in rhs (length m each), so that they come back as Qᵀ·rhs.
//
// The reflector for column j is H = I − τvvᵀ with v = [1, a[j+1:m, j]/(a_jj − α)],
// α = −sign(a_jj)·‖a[j:m, j]‖ and τ = (α − a_jj)/α (Golub & Van Loan, Matrix
// Computations, 4th ed., Algorithm 5.1.1 and §5.2.2); R's diagonal is α.
func householderQR(a []float64, m, k int, tau []float64, rhs ...[]float64) {
	for j := 0; j < k; j++ {
		col := a[j*m : j*m+m]
		// Norm of col[j:]; the plain sum of squares, redone with scaling
		// only when it overflows or underflows.
		var ssq float64
		for i := j; i < m; i++ {
			ssq += col[i] * col[i]
		}
		norm := math.Sqrt(ssq)
		if math.IsInf(norm, 1) || (norm < 1e-150 && norm > 0) {
			norm = scaledNorm(col[j:m])
		}
		if norm == 0 {
			tau[j] = 0
			continue
		}
		alpha := -math.Copysign(norm, col[j])
		v0 := col[j] - alpha
		// v = [1, col[j+1:]/v0]; τ = (α − a_jj)/α = −v0/α.
		inv := 1 / v0
		for i := j + 1; i < m; i++ {
			col[i] *= inv
		}
		t := -v0 / alpha
		tau[j] = t
		col[j] = alpha
		// Apply H to the remaining columns.
		for c := j + 1; c < k; c++ {
			applyReflector(col, a[c*m:c*m+m], j, m, t)
		}
		for _, r := range rhs {
			applyReflector(col, r, j, m, t)
		}
	}
}

// applyReflector applies H = I − τvvᵀ, v = [1, v[j+1:m]], to y[j:m].
func applyReflector(v, y []float64, j, m int, tau float64) {
	if tau == 0 {
		return
	}
	s := y[j]
	for i := j + 1; i < m; i++ {
		s += v[i] * y[i]
	}
	s *= tau
	y[j] -= s
	for i := j + 1; i < m; i++ {
		y[i] -= s * v[i]
	}
}

// backSubstitute solves Rx = b for the k×k upper-triangular R stored in the
// first k rows of the column-major m×k matrix a, writing x into b[:k].
func backSubstitute(a []float64, m, k int, b []float64) {
	for i := k - 1; i >= 0; i-- {
		s := b[i]
		for c := i + 1; c < k; c++ {
			s -= a[c*m+i] * b[c]
		}
		b[i] = s / a[i*m+i]
	}
}

// scaledNorm returns ‖v‖ without overflow or underflow (LAPACK dnrm2's
// scaling).
func scaledNorm(v []float64) float64 {
	var scale, ssq float64 = 0, 1
	for _, x := range v {
		if x == 0 {
			continue
		}
		ax := math.Abs(x)
		if scale < ax {
			ssq = 1 + ssq*(scale/ax)*(scale/ax)
			scale = ax
		} else {
			ssq += (ax / scale) * (ax / scale)
		}
	}
	return scale * math.Sqrt(ssq)
}
