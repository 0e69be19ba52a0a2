package membrane

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"sync/atomic"
	"testing"

	"go.uber.org/goleak"

	"sluice/fit/boot"
)

// Every test of the package ends with no goroutine of Band left behind.
func TestMain(m *testing.M) { goleak.VerifyTestMain(m) }

// randomCell draws an NMDA-type cell: a K⁺-dominated rest with Na⁺ and
// Cl⁻ leaks, a channel reversing near 0 mV, and 0.5–2 mM Mg²⁺. A third of
// the draws have a strong ligand conductance against a small rest, where
// the equation has three roots over a range of g.
func randomCell(rng *rand.Rand) ([]Conductance, Channel) {
	rest := []Conductance{{1 + 20*rng.Float64(), -89 - 5*rng.Float64()}, {0.1 + rng.Float64(), 66.6}, {3 * rng.Float64(), -64.09}}
	ch := Channel{Count: 10 + 1000*rng.Float64(), ConductancePS: 5 + 60*rng.Float64(), Reversal: -10 + 20*rng.Float64(),
		MgOut: 0.5 + 1.5*rng.Float64()}
	if rng.IntN(3) == 0 {
		rest = rest[:1]
		rest[0].G = 1 + 2*rng.Float64()
		ch.Count, ch.ConductancePS = 1000, 50
	}
	return rest, ch
}

func sameFloat(a, b float64) bool {
	return math.Float64bits(a) == math.Float64bits(b) || (math.IsNaN(a) && math.IsNaN(b))
}

// Property: the continued root (mgEquation.nearest) is the full scan's
// root, bit for bit (tolerance 0), from any starting potential, on cells
// with one and with three steady states; and the multistable ones are
// there to be found.
func TestNearestRootIsScanRoot(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	multi := 0
	for trial := 0; trial < 1500; trial++ {
		rest, ch := randomCell(rng)
		eq := newMgEquation(rest, ch)
		g := ch.MaxConductance() * rng.Float64()
		var near float64
		switch trial % 4 {
		case 0:
			near = ChordVoltage(rest...)
		case 1:
			near = eq.lo + (eq.hi-eq.lo)*rng.Float64()
		case 2:
			near = eq.x(rng.IntN(scanSteps + 1)) // on a grid point
		case 3:
			near = eq.lo - 10 // off the grid: the full scan
		}
		want, m := eq.scan(g, near)
		if m {
			multi++
		}
		if got := eq.nearest(g, near); !sameFloat(got, want) {
			t.Fatalf("trial %d: g %g near %g: continued root %.17g, scan %.17g (multistable %v)", trial, g, near, got, want, m)
		}
	}
	if multi < 25 {
		t.Errorf("only %d of 1500 random cells were multistable: the property is not exercised", multi)
	}
}

// Property: along a concentration series, continuation gives Predict's
// potentials exactly, for random cells and open-fraction curves, and
// Predict (a full scan per concentration) still reports the multistable
// ones.
func TestContinuationIsPredict(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	concs := make([]float64, 60)
	for i := range concs {
		concs[len(concs)-1-i] = 1e-10 * math.Pow(10, 7*float64(i)/float64(len(concs)-1)) // descending on purpose
	}
	multi := 0
	for trial := 0; trial < 30; trial++ {
		rest, ch := randomCell(rng)
		po := hillPo(0.3+0.7*rng.Float64(), 1e-8*math.Pow(10, 4*rng.Float64()), 0.7+2*rng.Float64())
		p := predict(t, rest, ch, po, concs)
		if p.Multistable {
			multi++
		}
		eq := newMgEquation(rest, ch)
		prev := p.Rest
		for _, i := range ascending(concs) {
			v := steady(&eq, ch.MaxConductance()*po(concs[i]), prev)
			if !sameFloat(v, p.Points[i].V) {
				t.Fatalf("trial %d, %g M: continued %.17g, Predict %.17g", trial, concs[i], v, p.Points[i].V)
			}
			prev = v
		}
	}
	if multi == 0 {
		t.Error("no multistable cell among 30: the detection is not exercised")
	}
}

// Band is the percentile interval of Predict over the draws, as the API
// computed it before it existed, exactly; with and without Mg²⁺, on one
// worker and on several, with the concentrations in one block or in many.
func TestBandIsPredictOverDraws(t *testing.T) {
	rng := rand.New(rand.NewPCG(15, 16))
	concs := []float64{1e-6, 0, 1e-3, 3e-8, 1e-9, 3e-6, 1e-4, 1e-7, 1e-5} // unsorted on purpose
	for trial := 0; trial < 4; trial++ {
		rest, ch := randomCell(rng)
		if trial == 3 {
			ch.MgOut = 0
		}
		draws := make([]func(float64) float64, 60)
		for d := range draws {
			draws[d] = hillPo(0.5+0.5*rng.Float64(), 1e-6*math.Pow(10, rng.NormFloat64()/2), 1+rng.NormFloat64()/5)
		}
		vs := make([][]float64, len(concs))
		for _, po := range draws {
			for i, pt := range predict(t, rest, ch, po, concs).Points {
				if !math.IsNaN(pt.V) && !math.IsInf(pt.V, 0) {
					vs[i] = append(vs[i], pt.V)
				}
			}
		}
		for i := range concs {
			slices.Sort(vs[i])
		}
		// One block of concentrations, blocks of 2, blocks of 1.
		for _, block := range []int{bandBlockValues, 2*len(draws) + 1, 1} {
			for _, workers := range []int{1, 3} {
				lo, hi, err := band(context.Background(), rest, ch, draws, concs, 0.9, workers, block)
				if err != nil {
					t.Fatal(err)
				}
				for i := range concs {
					wlo, whi := boot.Percentile(vs[i], 0.9)
					if !sameFloat(lo[i], wlo) || !sameFloat(hi[i], whi) {
						t.Fatalf("trial %d, %g M, %d workers, block %d: band [%v, %v], want [%v, %v]",
							trial, concs[i], workers, block, lo[i], hi[i], wlo, whi)
					}
				}
			}
		}
	}
}

// A band cancelled mid-run returns an error wrapping context.Canceled
// within one chunk of draws per worker; so do Predict and ThresholdConc,
// at the next concentration.
func TestPotentialCancelled(t *testing.T) {
	rest, ch := []Conductance{{2, -90}}, Channel{Count: 1000, ConductancePS: 50, Reversal: 0, MgOut: 1.2}
	concs := make([]float64, 200)
	for i := range concs {
		concs[i] = 1e-9 * math.Pow(10, 5*float64(i)/199)
	}
	var calls atomic.Int64 // open-fraction evaluations: one per draw and concentration
	draws := make([]func(float64) float64, 100000)
	for d := range draws {
		po := hillPo(0.8, 1e-6, 1+float64(d%7)/10)
		draws[d] = func(c float64) float64 { calls.Add(1); return po(c) }
	}
	for _, workers := range []int{1, 2} {
		calls.Store(0)
		ctx, cancel := context.WithCancel(context.Background())
		atCancel := make(chan int64, 1)
		go func() {
			for calls.Load() < int64(3*len(concs)) {
				runtime.Gosched()
			}
			cancel()
			atCancel <- calls.Load()
		}()
		_, _, err := Band(ctx, rest, ch, draws, concs, 0.95, workers)
		cancel()
		if !errors.Is(err, context.Canceled) {
			t.Fatalf("workers %d: err = %v, want context.Canceled", workers, err)
		}
		// Draws done after the cancel: at most the chunk each worker held.
		done, c0 := calls.Load()/int64(len(concs)), <-atCancel/int64(len(concs))
		if done-c0 > int64(workers*boot.Chunk)+1 || done > int64(len(draws)/2) {
			t.Errorf("workers %d: %d draws done, %d when cancelled (chunk %d)", workers, done, c0, boot.Chunk)
		}
	}

	// Predict and ThresholdConc run on the caller's goroutine: cancelled
	// from inside the 10th open-fraction evaluation, they evaluate no
	// further concentration.
	n := 0
	ctx, cancel := context.WithCancel(context.Background())
	po := func(c float64) float64 {
		if n++; n == 10 {
			cancel()
		}
		return hillPo(0.8, 1e-6, 1)(c)
	}
	if _, err := Predict(ctx, rest, ch, po, concs); !errors.Is(err, context.Canceled) || n != 10 {
		t.Errorf("Predict: err %v after %d concentrations", err, n)
	}
	n = 0
	ctx, cancel = context.WithCancel(context.Background())
	if _, _, err := ThresholdConc(ctx, rest, ch, po, -20, 1e-15, 1); !errors.Is(err, context.Canceled) || n != 10 {
		t.Errorf("ThresholdConc: err %v after %d steps", err, n)
	}
	cancel()
}

// A panic while predicting one draw is an error, not a crash.
func TestBandPanicBecomesError(t *testing.T) {
	rest, ch := []Conductance{{2, -90}}, Channel{Count: 1000, ConductancePS: 50, Reversal: 0, MgOut: 1.2}
	draws := make([]func(float64) float64, 100)
	for d := range draws {
		draws[d] = hillPo(0.8, 1e-6, 1)
	}
	draws[37] = func(float64) float64 { panic("bad draw") }
	_, _, err := Band(context.Background(), rest, ch, draws, []float64{1e-6}, 0.95, 2)
	var pe *boot.PanicError
	if !errors.As(err, &pe) || pe.Index != 37 {
		t.Fatalf("err = %v, want a *boot.PanicError at draw 37", err)
	}
}
