package web

import (
	"math"
	"testing"

	"sluice/api/wire"
)

// Concentrations are shown in the unit that keeps three significant
// figures at or above 1; potencies to two decimals; qualifiers turned
// round for pEC50 (an EC50 above the range is a pEC50 below it).
func TestFormat(t *testing.T) {
	for _, c := range []struct {
		v    any
		want string
	}{
		{1.234e-6, "1.23 µM"}, {4.56e-8, "45.6 nM"}, {1e-9, "1.00 nM"}, {9.999e-7, "1.00 µM"}, {2.5e-3, "2.50 mM"},
		{3e-13, "300 fM"}, {wire.Num(7.5e-10), "750 pM"}, {math.NaN(), "—"}, {nil, "—"}, {0.0, "0"},
	} {
		if got := conc(c.v); got != c.want {
			t.Errorf("conc(%v) = %q, want %q", c.v, got, c.want)
		}
	}
	for _, c := range []struct {
		v    float64
		want string
	}{{0.8891, "0.889"}, {12.345, "12.3"}, {123456, "123456"}, {-0.5, "−0.500"}, {1.5e-5, "1.50e−05"}, {math.Inf(1), "∞"}} {
		if got := sig(c.v); got != c.want {
			t.Errorf("sig(%v) = %q, want %q", c.v, got, c.want)
		}
	}
	if got := pecq(">", 4.013); got != "< 4.01" {
		t.Errorf("pecq(>) = %q", got)
	}
	if got := pecq("=", wire.Num(6.1049)); got != "6.10" {
		t.Errorf("pecq(=) = %q", got)
	}
}

// Only local paths survive as the place to return to after sign-in.
func TestSafeNext(t *testing.T) {
	for in, want := range map[string]string{
		"/plates?x=1": "/plates?x=1", "": "/", "//evil.example/": "/", "https://evil.example/": "/", "/\\evil": "/", "plates": "/",
	} {
		if got := safeNext(in); got != want {
			t.Errorf("safeNext(%q) = %q, want %q", in, got, want)
		}
	}
}
