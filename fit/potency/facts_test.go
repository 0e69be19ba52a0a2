package potency

import (
	"math"
	"slices"
	"testing"
)

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if !(math.Abs(got-want) <= tol) {
		t.Errorf("%s = %.8g, want %.8g ± %g", what, got, want, tol)
	}
}

// FACTS §8 [C]: 1, 2 and 4 µM give a geometric mean of 2 µM and a mean
// pEC50 of 5.698970.
func TestGeoMeanFacts(t *testing.T) {
	gm, err := GeoMean([]float64{1e-6, 2e-6, 4e-6})
	if err != nil {
		t.Fatal(err)
	}
	near(t, "GM (µM)", gm*1e6, 2, 1e-12)
	m, err := MeanLog([]float64{math.Log10(1e-6), math.Log10(2e-6), math.Log10(4e-6)}, 0)
	if err != nil {
		t.Fatal(err)
	}
	near(t, "mean pEC50", m.PMean(), 5.698970, 1e-6)
	near(t, "GeoMean (µM)", m.GeoMean()*1e6, 2, 1e-12)
}

// FACTS §8 [C]: log EC50 −6.0, SE 0.1, df 10 give t 2.228139, the log CI
// (−6.222814, −5.777186) and the EC50 CI (0.5987, 1.6704) µM.
func TestLogIntervalFacts(t *testing.T) {
	near(t, "t(0.975, 10)", TQuantile(10, 0.95), 2.228139, 1e-6)
	ci := TInterval(-6, 0.1, 10, 0.95)
	near(t, "log lo", ci.Lo, -6.222814, 1e-6)
	near(t, "log hi", ci.Hi, -5.777186, 1e-6)
	lin := ci.Pow10()
	near(t, "EC50 lo (µM)", lin.Lo*1e6, 0.5987, 1e-4)
	near(t, "EC50 hi (µM)", lin.Hi*1e6, 1.6704, 1e-4)
}

// FACTS §4 [DER]: MSR = 10^(2√2·s) for s 0.10, 0.15, 0.20, and MSR = 3 at
// s = 0.168688.
func TestMSRFacts(t *testing.T) {
	for _, c := range []struct{ s, msr float64 }{{0.10, 1.917974}, {0.15, 2.656220}, {0.20, 3.678624}} {
		near(t, "MSR", MSR(c.s), c.msr, 1e-5)
		near(t, "SDForMSR", SDForMSR(c.msr), c.s, 1e-6)
	}
	near(t, "s at MSR 3", SDForMSR(3), 0.168688, 1e-6)
}

// FACTS §4 [DER]: the replicate-experiment example, to 1e-5.
func TestReplicateFacts(t *testing.T) {
	run1 := []float64{-6.10, -7.32, -5.85, -8.01, -6.72, -7.90, -5.40, -6.95, -7.45, -8.30}
	run2 := []float64{-6.02, -7.45, -5.70, -8.12, -6.60, -7.70, -5.52, -6.88, -7.30, -8.41}
	pairs := make([]Pair, len(run1))
	for i := range run1 {
		pairs[i] = Pair{Run1: run1[i], Run2: run2[i]}
	}
	s, err := Replicate(pairs)
	if err != nil {
		t.Fatal(err)
	}
	if s.N != 10 {
		t.Errorf("n = %d, want 10", s.N)
	}
	near(t, "MD", s.MD, -0.03, 1e-5)
	near(t, "s_d", s.SD, 0.132162, 1e-5)
	near(t, "MR", s.MR, 0.933254, 1e-5)
	near(t, "MSR", s.MSR, 1.837905, 1e-5)
	near(t, "RL lo", s.RL.Lo, 0.769863, 1e-5)
	near(t, "RL hi", s.RL.Hi, 1.131322, 1e-5)
	near(t, "LsA lo", s.LsA.Lo, 0.507782, 1e-5)
	near(t, "LsA hi", s.LsA.Hi, 1.715233, 1e-5)
	// MSR 1.84 < 3, RL contains 1, LsA within 1/3–3: the study passes.
	if !s.Pass || len(s.Failed) != 0 {
		t.Errorf("pass = %v, failed %v; want a pass", s.Pass, s.Failed)
	}
}

// FACTS §4 [V]: the Assay Guidance Manual's two published examples ("HTS
// Assay Validation", the figure of potency ratio against geometric-mean
// potency). The limits of agreement MR ÷/× MSR must match the published
// values within ±0.02 (they are printed to two decimals).
func TestLimitsOfAgreementAGM(t *testing.T) {
	for _, c := range []struct {
		name        string
		mr, msr     float64
		pubLo, pubH float64
	}{
		{"A", 0.80, 3.54, 0.23, 2.84},
		{"B", 2.01, 1.86, 1.08, 3.75},
	} {
		lsa := LimitsOfAgreement(c.mr, c.msr)
		near(t, c.name+" LsA lo", lsa.Lo, c.pubLo, 0.02)
		near(t, c.name+" LsA hi", lsa.Hi, c.pubH, 0.02)
	}
}

// A study fails on each criterion on its own, and names it. The values are
// built so that only the named criterion fails (arithmetic in the comments).
func TestReplicateFailedCriteria(t *testing.T) {
	pairsOf := func(d ...float64) []Pair {
		p := make([]Pair, len(d))
		for i, x := range d {
			p[i] = Pair{Run1: -6 + x, Run2: -6}
		}
		return p
	}
	for _, c := range []struct {
		name string
		d    []float64
		want []Criterion
	}{
		// d = ±0.26, MD 0, s_d = 0.26·√(10/9) = 0.2741: MSR = 10^0.548 = 3.53;
		// RL contains 1; LsA 0.283–3.53: outside both limits.
		{"wide", []float64{0.26, -0.26, 0.26, -0.26, 0.26, -0.26, 0.26, -0.26, 0.26, -0.26}, []Criterion{MSRBelow3, LsAWithinLimits}},
		// d = 0.2 ± 0.01: MD 0.2, s_d ≈ 0.0105: MSR 1.05, RL ≈ 1.57–1.60
		// excludes 1, LsA ≈ 1.51–1.66 inside 1/3–3.
		{"biased", []float64{0.19, 0.21, 0.19, 0.21, 0.19, 0.21}, []Criterion{RLContains1}},
		// d = 0.3 ± 0.15, n 4: MD 0.3, s_d 0.1732: MSR 2.22 < 3, RL
		// 10^(0.3 ± 0.1732) = 1.34–2.98 excludes 1; LsA 10^(0.3 ± 0.3464) =
		// 0.90–4.44 breaks 3.
		{"biased and wide", []float64{0.15, 0.45, 0.15, 0.45}, []Criterion{RLContains1, LsAWithinLimits}},
	} {
		s, err := Replicate(pairsOf(c.d...))
		if err != nil {
			t.Fatal(err)
		}
		if s.Pass || !slices.Equal(s.Failed, c.want) {
			t.Errorf("%s: pass %v, failed %v; want %v (MSR %.3f, RL %v, LsA %v)", c.name, s.Pass, s.Failed, c.want, s.MSR, s.RL, s.LsA)
		}
	}
}
