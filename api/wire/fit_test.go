package wire

import (
	"encoding/json"
	"slices"
	"testing"

	"sluice/fit"
)

// Estimates reads back, in the model's order, the parameter vector a stored
// result was written from.
func TestParamsEstimates(t *testing.T) {
	var c fit.Curve
	for k := 0; k < 8; k++ {
		conc := 1e-9 * float64(int(1)<<k)
		c.Points = append(c.Points, fit.Point{Conc: conc, Response: fit.Hill.Value([]float64{1, 99, -7.6, 1.1}, conc) + float64(k%3) - 1})
	}
	r, err := fit.Fit(c, &fit.Settings{Model: fit.Hill5})
	if err != nil || !r.Converged() {
		t.Fatalf("fit: %v, %v", err, r)
	}
	b, err := json.Marshal(FromFit(r))
	if err != nil {
		t.Fatal(err)
	}
	var back FitResult
	if err := json.Unmarshal(b, &back); err != nil {
		t.Fatal(err)
	}
	if got, want := back.Params.Estimates(), r.Estimates(); !slices.Equal(got, want) {
		t.Errorf("Estimates() = %v, want %v", got, want)
	}
}

// The result says which interval method each parameter's boot_ci used and
// by how much the intervals were widened.
func TestBootstrapMethodOnTheWire(t *testing.T) {
	var c fit.Curve
	for k := 0; k < 10; k++ {
		conc := 1e-9 * float64(int(1)<<k)
		c.Points = append(c.Points, fit.Point{Conc: conc, Response: fit.Hill.Value([]float64{1, 99, -7.6, 1.1}, conc) + float64(k%3) - 1})
	}
	r, err := fit.Fit(c, nil)
	if err != nil || !r.Converged() {
		t.Fatal(err, r.Status)
	}
	if err := fit.Bootstrap(t.Context(), r, &fit.BootSettings{Resamples: 100, Seed: 1}); err != nil {
		t.Fatal(err)
	}
	out := FromFit(r)
	for _, p := range out.Params {
		if p.BootInterval != "bca" {
			t.Errorf("%s: boot_interval %q, want bca", p.Name, p.BootInterval)
		}
	}
	if b := out.Bootstrap; b == nil || b.Calibration == nil || !(float64(*b.Calibration) > 1) {
		t.Errorf("bootstrap info %+v: want a calibration factor > 1", b)
	}
}
