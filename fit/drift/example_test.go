package drift_test

import (
	"fmt"

	"sluice/fit/drift"
)

// ExampleEvaluate charts an invented control: a baseline from its first
// ten plates, then a shift of about 1.5 SD: 4-1s catches it at its third
// plate (the last baseline plate was high too), EWMA and CUSUM at its fifth,
// and no value comes near 3 SD.
func ExampleEvaluate() {
	values := []float64{
		101, 98, 100.5, 99, 102, 97.5, 100, 101.5, 98.5, 102, // baseline plates
		102.3, 102.9, 102.1, 102.6, 103.0, 102.4,
	}
	base, err := drift.BaselineFrom(values, 10)
	if err != nil {
		fmt.Println(err)
		return
	}
	ch, err := drift.Evaluate(drift.Series(values), base, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("baseline %.2f ± %.2f\n", base.Mean, base.SD)
	for i, p := range ch.Points[10:] {
		fmt.Printf("plate %d: z %+.2f, EWMA %.2f (%.2f–%.2f), C+ %.2f %s %v\n",
			i+11, p.Z, p.EWMA, p.EWMALo, p.EWMAHi, p.CUSUMHi, p.Status, p.Violations.Strings())
	}
	fmt.Println("chart:", ch.Status)
	// Output:
	// baseline 100.00 ± 1.67
	// plate 11: z +1.38, EWMA 100.63 (98.34–101.66), C+ 1.58 in_control []
	// plate 12: z +1.74, EWMA 101.08 (98.34–101.66), C+ 2.82 in_control []
	// plate 13: z +1.26, EWMA 101.28 (98.34–101.66), C+ 3.58 out_of_control [4-1s]
	// plate 14: z +1.56, EWMA 101.55 (98.33–101.67), C+ 4.64 out_of_control [4-1s]
	// plate 15: z +1.80, EWMA 101.84 (98.33–101.67), C+ 5.94 out_of_control [4-1s ewma cusum]
	// plate 16: z +1.44, EWMA 101.95 (98.33–101.67), C+ 6.88 out_of_control [4-1s ewma cusum]
	// chart: out_of_control
}

// ExampleBaselineFrom estimates a baseline from an assay's first plates.
func ExampleBaselineFrom() {
	b, err := drift.BaselineFrom([]float64{0.71, 0.68, 0.74, 0.70, 0.69, 0.72}, 6)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("Z′ baseline %.3f ± %.3f\n", b.Mean, b.SD)
	// Output:
	// Z′ baseline 0.707 ± 0.022
}
