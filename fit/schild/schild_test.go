package schild

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"sluice/fit"
)

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.IsNaN(got) || math.Abs(got-want) > tol {
		t.Errorf("%s = %.9f, want %.9f ± %g", what, got, want, tol)
	}
}

// FACTS §2 "Dose ratios" and "Schild line": KB 10 nM gives DR 2, 11, 101 at
// 10, 100, 1000 nM (Gaddum–Schild, exact), and a line of slope 1,
// intercept 8, pA2 = pKB = 8 (1e-9).
func TestSchildLineFACTS(t *testing.T) {
	b := []float64{1e-8, 1e-7, 1e-6}
	dr := make([]float64, 3)
	for i, x := range b {
		dr[i] = 1 + x/1e-8
	}
	for i, want := range []float64{2, 11, 101} {
		near(t, "DR", dr[i], want, 1e-12)
	}
	s, err := SchildRegression(b, dr)
	if err != nil {
		t.Fatal(err)
	}
	near(t, "slope", s.Slope, 1, 1e-9)
	near(t, "intercept", s.Intercept, 8, 1e-9)
	near(t, "pA2", s.PA2, 8, 1e-9)
	near(t, "pKB", s.PKB, 8, 1e-9)
}

// FACTS §2 "Non-unit slope": EC50 1 µM → 3, 15, 80 µM at 10, 100, 1000 nM:
// s 0.798299 (SE 0.027020), intercept 6.703018, pA2 8.396631 (1e-5).
func TestSchildNonUnitFACTS(t *testing.T) {
	s, err := SchildRegression([]float64{1e-8, 1e-7, 1e-6}, []float64{3, 15, 80})
	if err != nil {
		t.Fatal(err)
	}
	near(t, "slope", s.Slope, 0.798299, 1e-5)
	near(t, "SE(slope)", s.SESlope, 0.027020, 1e-5)
	near(t, "intercept", s.Intercept, 6.703018, 1e-5)
	near(t, "pA2", s.PA2, 8.396631, 1e-5)
	if _, err := SchildRegression([]float64{1e-8, 1e-7}, []float64{1, 3}); err == nil {
		t.Error("a dose ratio of 1 accepted")
	}
}

// FACTS §2 "Leff–Dougall": at A = EC80 with nH 1, IC50/KB = 5; with nH 2
// (A/EC50 = 2), 1.449490 (1e-6).
func TestChengPrusoffFACTS(t *testing.T) {
	near(t, "nH 1", 1/ChengPrusoff(1, 4, 1, 1), 5, 1e-9)
	near(t, "nH 2", 1/ChengPrusoff(1, 2, 1, 2), 1.449490, 1e-6)
}

// FACTS §3 operational-model check values (Em 100, KA 1 µM), table "Inputs
// (Em 100, KA 1 µM)": EC50 and Emax with the table's tolerance, taken as
// relative to the value. The rows printed to six significant digits
// (0.666667 µM, 0.431662 µM) also carry the rounding of the print, half a
// unit of the sixth digit (5e-7 µM): 2/3 µM differs from 0.666667 by
// 3.3e-7 µM and 1/(√11 − 1) µM from 0.431662 by 4.8e-7 µM.
func TestOperationalFACTS(t *testing.T) {
	for _, c := range []struct{ n, tau, ec50, emax, tol, print float64 }{
		{1, 9, 0.1e-6, 90, 1e-9, 0}, {1, 1, 0.5e-6, 50, 1e-9, 0},
		{1, 0.5, 0.666667e-6, 33.3333, 1e-6, 5e-7}, {2, 3, 0.431662e-6, 90, 1e-6, 5e-7},
	} {
		ec := OperationalEC50(1e-6, c.tau, c.n)
		near(t, "EC50 (µM)", ec*1e6, c.ec50*1e6, c.tol*c.ec50*1e6+c.print)
		near(t, "Emax", OperationalEmax(100, c.tau, c.n), c.emax, 1e-4)
		if c.n == 2 {
			near(t, "E(EC50)", Operational(100, 1e-6, c.tau, c.n, ec), 45, 1e-6)
		}
	}
}

// gaddumData generates curves from the Lew & Angus model: Emax 100,
// log EC50 −6, nH 1.2, pKB 8, slope s; agonist 1 nM–3 mM in half-log steps;
// [B] 0, 10, 100, 1000 nM (FACTS §2 "Global-fit recovery"), with noise sd.
func gaddumData(rng *rand.Rand, pkb, s, sd float64, reps int) []Curve {
	var cs []Curve
	for _, b := range []float64{0, 1e-8, 1e-7, 1e-6} {
		L := -6.0
		if b > 0 {
			L += math.Log10(1 + math.Pow(b*math.Pow(10, pkb), s))
		}
		var c Curve
		c.AntagonistConc = b
		for k := 0; k <= 13; k++ {
			a := 1e-9 * math.Pow(10, 0.5*float64(k))
			for r := 0; r < reps; r++ {
				y := fit.Hill.Value([]float64{0, 100, L, 1.2}, a)
				if sd > 0 {
					y += sd * rng.NormFloat64()
				}
				c.Points = append(c.Points, fit.Point{Conc: a, Response: y})
			}
		}
		cs = append(cs, c)
	}
	return cs
}

// FACTS §2 "Global-fit recovery": noise-free data give back the generating
// values to 1e-6.
func TestGlobalRecoveryFACTS(t *testing.T) {
	r, err := Analyze(context.Background(), gaddumData(nil, 8, 1, 0, 1), nil)
	if err != nil {
		t.Fatal(err)
	}
	g := r.Global
	if g == nil || !r.Competitive {
		t.Fatalf("no global fit; flags %v, withheld %q", r.Flags, r.Withheld)
	}
	near(t, "pKB", g.PKB.Estimate, 8, 1e-6)
	near(t, "pA2 (s free)", g.PA2.Estimate, 8, 1e-6)
	near(t, "slope", g.Slope.Estimate, 1, 1e-6)
	near(t, "log EC50₀", g.Shared["log_ec50_0"], -6, 1e-6)
	near(t, "hill", g.Shared["hill"], 1.2, 1e-6)
	near(t, "top", g.Shared["top"], 100, 1e-6)
	// The dose ratios are those of the Gaddum–Schild equation, 1 + [B]/KB.
	for _, dr := range r.DoseRatios {
		near(t, "dose ratio", dr.DoseRatio.Estimate, 1+dr.AntagonistConc/1e-8, 1e-4*dr.DoseRatio.Estimate)
	}
	// A non-unit slope is recovered too, and s = 1 is rejected.
	r, err = Analyze(context.Background(), gaddumData(nil, 8, 0.7, 0, 1), nil)
	if err != nil {
		t.Fatal(err)
	}
	near(t, "slope 0.7", r.Global.Slope.Estimate, 0.7, 1e-6)
	near(t, "pA2 at slope 0.7", r.Global.PA2.Estimate, 8, 1e-6)
}

// A depressed maximum (a channel blocker, say) is flagged insurmountable,
// gets no pA2 or pKB, and gets a Cheng–Prusoff estimate instead.
func TestInsurmountable(t *testing.T) {
	cs := gaddumData(nil, 8, 1, 0, 1)
	for i := range cs {
		drop := 1 / (1 + cs[i].AntagonistConc/1e-7) // noncompetitive block, IC50 100 nM
		for k := range cs[i].Points {
			cs[i].Points[k].Response = fit.Hill.Value([]float64{0, 100 * drop, -6, 1.2}, cs[i].Points[k].Conc)
		}
	}
	r, err := Analyze(context.Background(), cs, nil)
	if err != nil {
		t.Fatal(err)
	}
	if r.Competitive || r.Global != nil || r.Withheld == "" || !r.has(FlagInsurmountable) {
		t.Fatalf("competitive %v, global %v, flags %v", r.Competitive, r.Global, r.Flags)
	}
	// The block is independent of agonist, so the inhibition curve's IC50
	// is the blocker's 100 nM exactly; KB is its Cheng–Prusoff correction.
	cp := r.ChengPrusoff
	if cp == nil {
		t.Fatal("no Cheng–Prusoff estimate")
	}
	near(t, "pIC50", -math.Log10(cp.IC50), 7, 1e-6)
	near(t, "KB", cp.KB, ChengPrusoff(cp.IC50, cp.AgonistConc, 1e-6, 1.2), 1e-12)
}

// Noisy simulations: the bootstrap intervals of pKB and of the slope cover
// the generating values at the nominal rate. 200 datasets, 95 % intervals;
// declared before running: the count must lie in the binomial 99 % band
// for 0.95 less a small-sample allowance of 0.03 (four curves of 14 points).
func TestGlobalCoverage(t *testing.T) {
	if testing.Short() {
		t.Skip("coverage simulation")
	}
	const N = 200
	rng := rand.New(rand.NewPCG(5, 8))
	var pkb, slope int
	for i := 0; i < N; i++ {
		r, err := Analyze(context.Background(), gaddumData(rng, 8, 1, 4, 2), &Settings{Resamples: 400, Seed: uint64(i)})
		if err != nil {
			t.Fatal(err)
		}
		if g := r.Global; g != nil {
			if g.PKB.Lo <= 8 && 8 <= g.PKB.Hi {
				pkb++
			}
			if g.Slope.Lo <= 1 && 1 <= g.Slope.Hi {
				slope++
			}
		}
	}
	t.Logf("pKB covered %d/%d, slope %d/%d", pkb, N, slope, N)
	// Binomial(200, 0.92) 0.5 % quantile is 173; Binomial(200, 0.95) 99.5 % is 197.
	for name, n := range map[string]int{"pKB": pkb, "slope": slope} {
		if n < 173 || n > 197 {
			t.Errorf("%s covered %d/%d, outside [173, 197]", name, n, N)
		}
	}
}

// FitOperational recovers τ and KA from noise-free partial-agonist data
// generated by the operational model (Em 100 from the full agonist).
func TestOperationalRecovery(t *testing.T) {
	var pts []fit.Point
	for k := 0; k < 12; k++ {
		a := 1e-9 * math.Pow(10, 0.5*float64(k))
		pts = append(pts, fit.Point{Conc: a, Response: Operational(100, 2e-6, 1.5, 1, a)})
	}
	o, err := FitOperational(pts, 100, 0.95)
	if err != nil {
		t.Fatal(err)
	}
	near(t, "τ", o.Tau.Estimate, 1.5, 1e-5)
	near(t, "KA (µM)", o.KA.Estimate*1e6, 2, 1e-4)
	near(t, "n", o.Slope.Estimate, 1, 1e-5)
}

// baselineData is gaddumData (pKB 8, slope 1, noise-free) on a baseline of
// 40: the control rises from 40 to 140, and every curve with antagonist
// keeps only (1 − loss) of the control's window, its top at 40 + 100(1 − loss).
// Invented for the test (issue "Honest results", item 8).
func baselineData(loss float64) []Curve {
	cs := gaddumData(nil, 8, 1, 0, 1)
	for i := range cs {
		window := 100.0
		if cs[i].AntagonistConc > 0 {
			window *= 1 - loss
		}
		L := -6 + math.Log10(1+cs[i].AntagonistConc/1e-8)
		for k := range cs[i].Points {
			cs[i].Points[k].Response = fit.Hill.Value([]float64{40, 40 + window, L, 1.2}, cs[i].Points[k].Conc)
		}
	}
	return cs
}

// Insurmountability is judged on the window (top − bottom), not on the top:
// on a baseline of 40, a 25 % loss of window leaves the top at 115, within
// 20 % of the control's 140, yet the response the agonist can raise has
// lost a quarter — more than MaxDepression (0.2). It must be flagged and no
// pKB reported (judged on the top it was "competitive" with a biased pKB).
func TestInsurmountableOnABaseline(t *testing.T) {
	r, err := Analyze(context.Background(), baselineData(0.25), nil)
	if err != nil {
		t.Fatal(err)
	}
	if r.Competitive || r.Global != nil || r.Withheld == "" || !r.has(FlagInsurmountable) {
		pkb := math.NaN()
		if r.Global != nil {
			pkb = r.Global.PKB.Estimate
		}
		t.Fatalf("competitive %v, pKB %.3f, flags %v: want insurmountable and pKB withheld", r.Competitive, pkb, r.Flags)
	}
	// A loss within the tolerance (10 %) stays competitive.
	r, err = Analyze(context.Background(), baselineData(0.10), nil)
	if err != nil {
		t.Fatal(err)
	}
	if r.has(FlagInsurmountable) {
		t.Errorf("a 10 %% loss of window was flagged insurmountable (flags %v)", r.Flags)
	}
}
