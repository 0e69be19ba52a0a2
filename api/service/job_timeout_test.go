package service

import (
	"context"
	"testing"
	"time"

	"sluice/api/wire"
	"sluice/db/dbtest"
	"sluice/fit/cost"
)

// A job's timeout is 30 s plus ten times its estimated single-core time
// (JobTimeout's equation); the cost unit is cost.NanosecondsPerUnit.
func TestJobTimeoutScalesWithWork(t *testing.T) {
	perSecond := cost.Work(1e9 / cost.NanosecondsPerUnit) // one second of one core
	for _, c := range []struct {
		w    cost.Work
		want time.Duration
	}{
		{0, 30 * time.Second},
		{perSecond, 40 * time.Second},
		{60 * perSecond, 630 * time.Second},
		{1e300, 0}, // overflow: the queue's ceiling
	} {
		if got := JobTimeout(c.w); got < c.want-time.Millisecond || got > c.want+time.Millisecond {
			t.Errorf("JobTimeout(%.3g) = %v, want %v", float64(c.w), got, c.want)
		}
	}
}

// A plate's job is queued with the timeout of its work: 30 s and a little
// for a small plate, more with more resamples.
func TestPlateJobTimeout(t *testing.T) {
	store := dbtest.SQLite(t)
	s := newTestService(t, store)
	ctx := context.Background()
	who := Caller{Name: "p", Scope: "submit"}
	timeout := func(sub *PlateSubmission) (time.Duration, cost.Work) {
		t.Helper()
		v, err := s.validatePlate(&sub.Plate, WellsIn(sub.Plate.Wells), locator(sub.Form, nil))
		if err != nil {
			t.Fatal(err)
		}
		_, acc, err := s.SubmitPlate(ctx, who, nil, sub)
		if err != nil {
			t.Fatal(err)
		}
		j, err := store.Job(ctx, acc.JobID)
		if err != nil {
			t.Fatal(err)
		}
		return j.Timeout, v.work
	}
	small, w1 := timeout(small96("T-1"))
	big := small96("T-2")
	big.Plate.Fit = &wire.PlateFit{Bootstrap: &wire.BootstrapIn{Resamples: 100000}}
	large, w2 := timeout(big)
	t.Logf("96-well plate: %v (work %.3g units); with B = 100 000: %v (%.3g units)", small, float64(w1), large, float64(w2))
	if w1 <= 0 || w2 <= 100*w1 {
		t.Errorf("work %.3g then %.3g with B = 100 000: want far more", float64(w1), float64(w2))
	}
	for _, c := range []struct {
		got  time.Duration
		work cost.Work
	}{{small, w1}, {large, w2}} {
		if want := JobTimeout(c.work).Truncate(time.Millisecond); c.got != want {
			t.Errorf("job timeout %v, want JobTimeout(%.3g) = %v", c.got, float64(c.work), want)
		}
	}
	if small < 30*time.Second || small > 31*time.Second || large <= small {
		t.Errorf("timeouts %v (no bootstrap) and %v (B = 100 000)", small, large)
	}
}
