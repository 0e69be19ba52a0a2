package service

import (
	"testing"
	"time"

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
