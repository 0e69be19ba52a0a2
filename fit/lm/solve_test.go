package lm_test

import (
	"fmt"
	"math"
	"testing"

	"sluice/fit/lm"
)

// line is r_i = y_i − (a + b·x_i): linear least squares, whose solution and
// covariance have closed forms (the normal equations; common practice).
type line struct{ x, y []float64 }

func (l line) Eval(p, r, jac []float64) {
	m := len(l.x)
	for i, x := range l.x {
		r[i] = l.y[i] - (p[0] + p[1]*x)
		if jac != nil {
			jac[0*m+i] = -1
			jac[1*m+i] = -x
		}
	}
}

func TestLinearClosedForm(t *testing.T) {
	f := line{x: []float64{1, 2, 3, 4, 5}, y: []float64{2.1, 3.9, 6.2, 7.8, 10.1}}
	res, err := lm.Solve(&lm.Problem{M: 5, N: 2, Func: f}, []float64{0, 0}, nil)
	if err != nil {
		t.Fatal(err)
	}
	// Closed form: b = Sxy/Sxx = 19.9/10, a = ȳ − b·x̄; σ² = RSS/3,
	// SE(b) = σ/√Sxx, SE(a) = σ·√(1/n + x̄²/Sxx).
	b := 19.9 / 10
	a := 6.02 - b*3
	var rss float64
	for i, x := range f.x {
		d := f.y[i] - a - b*x
		rss += d * d
	}
	s := math.Sqrt(rss / 3)
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"a", res.X[0], a}, {"b", res.X[1], b}, {"RSS", res.RSS, rss},
		{"SE(a)", res.SE(0), s * math.Sqrt(1.0/5+9.0/10)}, {"SE(b)", res.SE(1), s / math.Sqrt(10)},
	} {
		if math.Abs(c.got-c.want) > 1e-12*math.Max(1, math.Abs(c.want)) {
			t.Errorf("%s = %.15g, want %.15g", c.name, c.got, c.want)
		}
	}
	if res.DOF != 3 {
		t.Errorf("DOF = %d", res.DOF)
	}
}

// Weights multiply each squared residual: duplicating a point is the same as
// giving it weight 2.
func TestWeightsEqualDuplicates(t *testing.T) {
	dup := line{x: []float64{1, 2, 2, 3}, y: []float64{1, 2.5, 2.5, 2.9}}
	wtd := line{x: []float64{1, 2, 3}, y: []float64{1, 2.5, 2.9}}
	r1, _ := lm.Solve(&lm.Problem{M: 4, N: 2, Func: dup}, []float64{0, 0}, nil)
	r2, _ := lm.Solve(&lm.Problem{M: 3, N: 2, Func: wtd, Weights: []float64{1, 2, 1}}, []float64{0, 0}, nil)
	for j := 0; j < 2; j++ {
		if math.Abs(r1.X[j]-r2.X[j]) > 1e-12 {
			t.Errorf("x[%d]: %v with duplicates, %v with weights", j, r1.X[j], r2.X[j])
		}
	}
	if math.Abs(r1.RSS-r2.RSS) > 1e-12 {
		t.Errorf("RSS %v vs %v", r1.RSS, r2.RSS)
	}
}

// A fixed parameter keeps its value and has no standard error; a bound
// that binds holds its parameter on the bound, marks it, and leaves it out
// of the degrees of freedom.
func TestFixedAndBounds(t *testing.T) {
	f := line{x: []float64{1, 2, 3, 4}, y: []float64{3, 5, 7, 9}} // a = 1, b = 2
	res, err := lm.Solve(&lm.Problem{M: 4, N: 2, Func: f, Fixed: []bool{true, false}}, []float64{0, 1}, nil)
	if err != nil || res.X[0] != 0 || !math.IsNaN(res.SE(0)) || res.DOF != 3 {
		t.Errorf("fixed: x=%v SE(a)=%v dof=%d err=%v", res.X, res.SE(0), res.DOF, err)
	}
	// With a fixed at 0 the slope is Σxy/Σx² = 70/30.
	if math.Abs(res.X[1]-70.0/30) > 1e-12 {
		t.Errorf("slope with a = 0: %v, want %v", res.X[1], 70.0/30)
	}
	res, err = lm.Solve(&lm.Problem{M: 4, N: 2, Func: f, Upper: []float64{math.Inf(1), 1.5}, Lower: []float64{math.Inf(-1), 0}},
		[]float64{0, 1}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if res.X[1] != 1.5 || !res.AtBound[1] || res.AtBound[0] || res.DOF != 3 {
		t.Errorf("bounded: x=%v atBound=%v dof=%d", res.X, res.AtBound, res.DOF)
	}
	// With b held at 1.5 the intercept is ȳ − 1.5·x̄ = 6 − 3.75.
	if math.Abs(res.X[0]-2.25) > 1e-12 {
		t.Errorf("intercept with b = 1.5: %v, want 2.25", res.X[0])
	}
	// Starting outside the box moves onto it.
	res, _ = lm.Solve(&lm.Problem{M: 4, N: 2, Func: f, Upper: []float64{10, 1.5}, Lower: []float64{-10, 0}}, []float64{0, 7}, nil)
	if res.X[1] != 1.5 {
		t.Errorf("start outside the box: %v", res.X)
	}
}

// flat has a parameter the data cannot see: r = y − a, with b unused.
type flat struct{ y []float64 }

func (f flat) Eval(p, r, jac []float64) {
	m := len(f.y)
	for i := range f.y {
		r[i] = f.y[i] - p[0]
		if jac != nil {
			jac[i], jac[m+i] = -1, 0
		}
	}
}

// An unidentifiable parameter is reported as Singular, never as converged.
func TestSingularIsNotConverged(t *testing.T) {
	res, err := lm.Solve(&lm.Problem{M: 3, N: 2, Func: flat{[]float64{1, 2, 4}}}, []float64{0, 5}, nil)
	if res.Status != lm.Singular || err != lm.ErrSingular || res.Status.Converged() {
		t.Errorf("status %v, err %v", res.Status, err)
	}
}

// nanAt returns NaN residuals: a numerical failure at the start.
type nanAt struct{}

func (nanAt) Eval(p, r, jac []float64) {
	for i := range r {
		r[i] = math.NaN()
	}
}

func TestNumericalFailure(t *testing.T) {
	res, err := lm.Solve(&lm.Problem{M: 2, N: 1, Func: nanAt{}}, []float64{1}, nil)
	if res.Status != lm.NumericalFailure || err == nil {
		t.Errorf("status %v err %v", res.Status, err)
	}
}

func TestIterationLimit(t *testing.T) {
	d := readNIST(t, "../../testdata/nist-strd/MGH09.dat")
	p := &lm.Problem{M: len(d.y), N: 4, Func: &nistProblem{d: d, f: nistModels["MGH09"], bc: make([]complex128, 4)}}
	res, err := lm.Solve(p, d.start1, &lm.Settings{MaxIterations: 3})
	if res.Status != lm.IterationLimit || err != lm.ErrIterationLimit || res.Iterations > 3 {
		t.Errorf("status %v after %d iterations, err %v", res.Status, res.Iterations, err)
	}
}

// A reused workspace solves without allocating.
func TestWorkspaceDoesNotAllocate(t *testing.T) {
	f := line{x: []float64{1, 2, 3, 4, 5}, y: []float64{2.1, 3.9, 6.2, 7.8, 10.1}}
	p := &lm.Problem{M: 5, N: 2, Func: f}
	var ws lm.Workspace
	var res lm.Result
	x0 := []float64{0, 0}
	ws.Solve(p, x0, nil, &res)
	if n := testing.AllocsPerRun(100, func() { ws.Solve(p, x0, nil, &res) }); n != 0 {
		t.Errorf("%v allocations per solve", n)
	}
}

// Example fits NIST's Misra1a, y = b1·(1 − exp(−b2·x)), from NIST's first
// start with an analytic Jacobian.
func Example() {
	x := []float64{77.6, 114.9, 141.1, 190.8, 239.9, 289.0, 332.8, 378.4, 434.8, 477.3, 536.8, 593.1, 689.1, 760.0}
	y := []float64{10.07, 14.73, 17.94, 23.93, 29.61, 35.18, 40.02, 44.82, 50.76, 55.05, 61.01, 66.40, 75.47, 81.78}
	res, err := lm.Solve(&lm.Problem{M: len(x), N: 2, Func: misra{x, y}}, []float64{500, 1e-4}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("b1 = %.8e ± %.8e\n", res.X[0], res.SE(0))
	fmt.Printf("b2 = %.8e ± %.8e\n", res.X[1], res.SE(1))
	fmt.Printf("RSS = %.8e (%s)\n", res.RSS, res.Status)
	// NIST certifies b1 2.3894212918E+02 (SD 2.7070075241E+00), b2
	// 5.5015643181E-04 (SD 7.2668688436E-06), RSS 1.2455138894E-01.
	// Output:
	// b1 = 2.38942129e+02 ± 2.70700752e+00
	// b2 = 5.50156432e-04 ± 7.26686884e-06
	// RSS = 1.24551389e-01 (gradient_convergence)
}

type misra struct{ x, y []float64 }

func (f misra) Eval(b, r, jac []float64) {
	m := len(f.x)
	for i, x := range f.x {
		e := math.Exp(-b[1] * x)
		r[i] = f.y[i] - b[0]*(1-e)
		if jac != nil {
			jac[i] = -(1 - e)
			jac[m+i] = -b[0] * x * e
		}
	}
}

// On a zero-residual fit SE is 0 for every parameter, a fixed one
// included, as Result.SE documents; with residuals left, a fixed one's SE
// is NaN (TestFixedAndBounds).
func TestZeroResidualSE(t *testing.T) {
	f := line{x: []float64{1, 2, 3, 4}, y: []float64{3, 5, 7, 9}} // exactly a = 1, b = 2
	for _, fixed := range [][]bool{nil, {true, false}} {
		res, err := lm.Solve(&lm.Problem{M: 4, N: 2, Func: f, Fixed: fixed}, []float64{1, 2}, nil)
		if err != nil || res.Status != lm.ZeroResidual || res.RSS != 0 {
			t.Fatalf("fixed %v: status %v RSS %v err %v", fixed, res.Status, res.RSS, err)
		}
		if res.SE(0) != 0 || res.SE(1) != 0 {
			t.Errorf("fixed %v: SE = %v, %v; want 0, 0", fixed, res.SE(0), res.SE(1))
		}
	}
}
