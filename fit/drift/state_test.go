package drift

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
	"time"
)

// TestResumeIsExact: on random series (shifts, trends, groups of one to
// three points, explicit and default settings), judging the series point
// by point from the stored State — round-tripped through JSON, as the
// store keeps it — gives bit-identical results to Evaluate over the whole
// series.
func TestResumeIsExact(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 13))
	t0 := time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)
	settings := []*Settings{nil, {Mode: ModeTrigger}, {EWMALambda: 0.05, EWMAL: 2.7, CUSUMK: 0.25, CUSUMH: 4}, {Rules: Set(RuleR4s)}}
	for trial := range 200 {
		base := Baseline{Mean: rng.NormFloat64() * 10, SD: 0.1 + rng.Float64()*3}
		set := settings[trial%len(settings)]
		var pts []Point
		n := 1 + rng.IntN(120)
		shift := 0.0
		for g := 0; len(pts) < n; g++ {
			if rng.IntN(15) == 0 {
				shift = rng.NormFloat64() * 2.5
			}
			size := 1 + rng.IntN(3)
			for range size {
				v := base.Mean + base.SD*(shift+rng.NormFloat64()*1.5)
				pts = append(pts, Point{Time: t0.Add(time.Duration(g) * time.Hour), Value: v, Group: fmt.Sprintf("p%d", g)})
			}
		}
		whole, err := Evaluate(pts, base, set)
		if err != nil {
			t.Fatal(err)
		}
		var st State
		for i := 0; i < len(pts); {
			j := i + 1
			for j < len(pts) && pts[j].Group == pts[i].Group {
				j++
			}
			part, err := Resume(st, pts[i:j], base, set)
			if err != nil {
				t.Fatalf("trial %d point %d: %v", trial, i, err)
			}
			for k, got := range part.Points {
				if want := whole.Points[i+k]; !sameResult(got, want) {
					t.Fatalf("trial %d point %d: resumed %+v, whole %+v", trial, i+k, got, want)
				}
			}
			st = roundTrip(t, part.State())
			i = j
		}
		if got, want := st, roundTrip(t, whole.State()); got.String() != want.String() {
			t.Fatalf("trial %d: final state %v, whole series %v", trial, got, want)
		}
	}
}

func sameResult(a, b PointResult) bool {
	same := func(x, y float64) bool { return math.Float64bits(x) == math.Float64bits(y) }
	return same(a.Z, b.Z) && same(a.EWMA, b.EWMA) && same(a.EWMALo, b.EWMALo) && same(a.EWMAHi, b.EWMAHi) &&
		same(a.CUSUMHi, b.CUSUMHi) && same(a.CUSUMLo, b.CUSUMLo) && a.Violations == b.Violations && a.Status == b.Status
}

func roundTrip(t *testing.T, st State) State {
	t.Helper()
	b, err := json.Marshal(st)
	if err != nil {
		t.Fatal(err)
	}
	var out State
	if err := json.Unmarshal(b, &out); err != nil {
		t.Fatal(err)
	}
	return out
}

// TestResumeRejectsEarlierPoint: a point before the state's last point is
// a field error, not a silent misplacement.
func TestResumeRejectsEarlierPoint(t *testing.T) {
	t0 := time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)
	ch, err := Evaluate([]Point{{Time: t0.Add(time.Hour), Value: 1}}, Baseline{Mean: 0, SD: 1}, nil)
	if err != nil {
		t.Fatal(err)
	}
	_, err = Resume(ch.State(), []Point{{Time: t0, Value: 1}}, Baseline{Mean: 0, SD: 1}, nil)
	if err == nil {
		t.Fatal("a point before the last one was accepted")
	}
}
