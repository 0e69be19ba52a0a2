package fit_test

import (
	"context"
	"fmt"
	"time"

	"sluice/fit"
)

// Example fits an invented agonist curve in triplicate, with a vehicle point,
// and bootstraps it (BCa, t-calibrated: see calibration.go).
func Example() {
	conc := []float64{0, 1e-8, 3e-8, 1e-7, 3e-7, 1e-6, 3e-6, 1e-5}
	resp := [][]float64{{1, -2, 0.5}, {3, 6, 4}, {12, 9, 14}, {31, 35, 28}, {62, 58, 66}, {84, 88, 81}, {95, 92, 97}, {99, 101, 96}}
	var c fit.Curve
	for i, x := range conc {
		for _, y := range resp[i] {
			c.Points = append(c.Points, fit.Point{Conc: x, Response: y})
		}
	}
	r, err := fit.Fit(c, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	if err := fit.Bootstrap(context.Background(), r, &fit.BootSettings{Resamples: 2000, Seed: 1}); err != nil {
		fmt.Println(err)
		return
	}
	ec50, lo, hi := r.EC50()
	fmt.Printf("%s, %d points, %d flags\n", r.Status, r.N, len(r.Flags))
	fmt.Printf("EC50 %.0f nM (95%% BCa %.0f–%.0f nM), pEC50 %.2f\n", ec50*1e9, lo*1e9, hi*1e9, -r.LogEC50().Estimate)
	h, _ := r.Param("hill")
	fmt.Printf("hill %.2f ± %.2f\n", h.Estimate, h.SE)
	fmt.Printf("log EC90 − log EC50 = %.3f\n", r.LogECF(90)-r.LogEC50().Estimate)
	// Output:
	// converged, 24 points, 0 flags
	// EC50 198 nM (95% BCa 174–222 nM), pEC50 6.70
	// hill 1.09 ± 0.06
	// log EC90 − log EC50 = 0.877
}

// ExampleParseModel shows the registry behind the model names: the parse
// error lists the registered models, and a model describes its parameters.
func ExampleParseModel() {
	if _, err := fit.ParseModel("hill7"); err != nil {
		fmt.Println(err)
	}
	m, _ := fit.ParseModel("bell")
	fmt.Println(m, m.Params(), "monotone:", m.Monotone())
	theta := []float64{0, 100, -6, 1.2, -4, 1}
	fmt.Println("log_ec50", m.LogEC50(theta), "hill", m.HillSlope(theta), "top", m.Top(theta))
	// Output:
	// unknown model "hill7" (want hill, hill5 or bell)
	// bell [bottom top log_ec50 hill log_ic50 hill_block] monotone: false
	// log_ec50 -6 hill 1.2 top 100
}

// ExampleFitBatch fits a batch under a deadline and reports its progress
// the way a caller should: the fitting goroutines only count into a
// fit.Progress, and the caller's own goroutine reads it on a ticker (here
// it would write it to a store; the example prints only the end).
func ExampleFitBatch() {
	conc := []float64{1e-8, 3e-8, 1e-7, 3e-7, 1e-6, 3e-6}
	var curves []fit.Curve
	for k, shift := range []float64{1, 2, 4} {
		c := fit.Curve{ID: fmt.Sprint("compound-", k+1)}
		for i, x := range conc {
			y := 100 / (1 + shift*2e-7/x)
			c.Points = append(c.Points, fit.Point{Conc: x, Response: y + float64(i%3-1)})
		}
		curves = append(curves, c)
	}
	ctx, cancel := context.WithTimeout(context.Background(), time.Minute)
	defer cancel()
	var progress fit.Progress
	done := make(chan struct{})
	reported := make(chan struct{})
	go func() {
		defer close(reported)
		t := time.NewTicker(100 * time.Millisecond)
		defer t.Stop()
		for {
			select {
			case <-done:
				return
			case <-t.C:
				_ = progress.Curves() // e.g. store it as the job's progress
			}
		}
	}()
	results, err := fit.FitBatch(ctx, curves, nil, &fit.BootSettings{Resamples: 200, Seed: 1}, 0, &progress)
	close(done)
	<-reported
	if err != nil { // wraps context.DeadlineExceeded when the minute ran out
		fmt.Println(err)
		return
	}
	fmt.Printf("%d curves, %d resamples refitted\n", progress.Curves(), progress.Resamples())
	for _, r := range results {
		fmt.Printf("%s: pEC50 %.2f\n", r.Curve, -r.LogEC50().Estimate)
	}
	// Output:
	// 3 curves, 600 resamples refitted
	// compound-1: pEC50 6.69
	// compound-2: pEC50 6.35
	// compound-3: pEC50 6.03
}
