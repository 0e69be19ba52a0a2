package ingest

import (
	"bytes"
	"encoding/csv"
	"errors"
	"math"
	"strconv"
	"strings"
	"testing"
)

func TestReadCurves(t *testing.T) {
	in := "\ufeffCurve, conc ,response,weight\nb,1,10,\na,2,20,2\nb,3,30,1\n\na,0,5,\n"
	cs, err := ReadCurves(strings.NewReader(in), Micromolar, "--unit")
	if err != nil {
		t.Fatal(err)
	}
	if len(cs) != 2 || cs[0].ID != "b" || cs[1].ID != "a" {
		t.Fatalf("curves %+v, want b then a", cs)
	}
	if len(cs[0].Points) != 2 || cs[0].Points[1].Conc != 3e-6 || cs[0].Points[1].Response != 30 || cs[0].Points[1].Weight != 1 {
		t.Errorf("curve b: %+v", cs[0].Points)
	}
	if p := cs[1].Points; len(p) != 2 || p[0].Weight != 2 || p[1].Conc != 0 || p[1].Weight != 0 {
		t.Errorf("curve a: %+v (empty weight means 0, i.e. 1)", p)
	}
	// Without a curve column every row is one curve.
	cs, err = ReadCurves(strings.NewReader("response,conc\n1,2\n3,4\n"), Molar, "--unit")
	if err != nil || len(cs) != 1 || cs[0].ID != "1" || cs[0].Points[1].Conc != 4 {
		t.Errorf("%+v %v", cs, err)
	}
}

func TestReadCurvesErrors(t *testing.T) {
	cases := []struct {
		in         string
		line, col  int
		sentinel   error
		wantInText string
	}{
		{"conc,response\n1,x\n", 2, 2, ErrNotNumber, `"x"`},
		{"conc,response\n1,2\n-1,2\n", 3, 1, ErrBadValue, "negative"},
		{"conc,response\n1,NaN\n", 2, 2, ErrNotNumber, "NaN"},
		{"conc,response\n1,Inf\n", 2, 2, ErrNotNumber, "Inf"},
		{"conc,response\n,2\n", 2, 1, ErrBadValue, "empty"},
		{"conc,response,weight\n1,2,-3\n", 2, 3, ErrBadValue, "negative"},
		// An explicit weight of 0 would count as 1 (the zero value of
		// fit.Point.Weight): refused, pointing at the cell.
		{"conc,response,weight\n1,2,1\n2,3,0\n", 3, 3, ErrBadValue, "weight 0"},
		{"weight,conc,response\n0.0,1,2\n", 2, 1, ErrBadValue, "remove the row"},
		{"conc,response\n1\n", 2, 2, ErrBadValue, "empty"},
		{"dose,response\n1,2\n", 1, 0, ErrMissingColumn, `"conc"`},
		{"conc,response,conc\n1,2,3\n", 1, 3, ErrBadValue, "twice"},
		{"conc,response\n", 2, 0, ErrNoData, ""},
		{"conc,response\n1,\"2\n", 2, 0, nil, ""},
	}
	for _, c := range cases {
		_, err := ReadCurves(strings.NewReader(c.in), Molar, "--unit")
		var pe *ParseError
		if !errors.As(err, &pe) {
			t.Errorf("%q: error %v is not a *ParseError", c.in, err)
			continue
		}
		if pe.Line != c.line || (c.col != 0 && pe.Column != c.col) {
			t.Errorf("%q: at line %d column %d, want %d, %d (%v)", c.in, pe.Line, pe.Column, c.line, c.col, err)
		}
		if c.sentinel != nil && !errors.Is(err, c.sentinel) {
			t.Errorf("%q: %v does not wrap %v", c.in, err, c.sentinel)
		}
		if !strings.Contains(err.Error(), c.wantInText) {
			t.Errorf("%q: %q does not say %q", c.in, err, c.wantInText)
		}
	}
}

func TestParseUnit(t *testing.T) {
	for s, want := range map[string]Unit{"": NoUnit, "M": 1, "mM": 1e-3, "uM": 1e-6, "µM": 1e-6, "μM": 1e-6, "nM": 1e-9, "pM": 1e-12} {
		if u, err := ParseUnit(s); err != nil || u != want {
			t.Errorf("ParseUnit(%q) = %v, %v; want %v", s, u, err, want)
		}
	}
	for _, s := range []string{"mg/ml", "um", "NM"} {
		if _, err := ParseUnit(s); err == nil {
			t.Errorf("ParseUnit(%q) accepted", s)
		}
	}
}

// FuzzReadCurves: whatever the bytes, ReadCurves returns curves or a
// *ParseError, never panics; every value it returns is finite and
// non-negative where required; and writing the curves back as CSV and
// reading them again gives the same curves (round trip).
func FuzzReadCurves(f *testing.F) {
	f.Add("curve,conc,response,weight\na,1e-9,5,1\na,1e-8,50,\nb,0,3,2\n")
	f.Add("conc,response\n1,2\n")
	f.Add("response,conc\n\"1\",2\n")
	f.Add("conc,response\n1,x\n")
	f.Fuzz(func(t *testing.T, in string) {
		cs, err := ReadCurves(strings.NewReader(in), Nanomolar, "--unit")
		if err != nil {
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("error %v (%T) is not a *ParseError", err, err)
			}
			if !IsInputError(err) { // the API's status < 500
				t.Fatalf("error %v is not an input error: the API would answer 500", err)
			}
			return
		}
		var buf bytes.Buffer
		w := csv.NewWriter(&buf)
		w.Write([]string{"curve", "conc", "response", "weight"})
		for _, c := range cs {
			for _, p := range c.Points {
				if math.IsNaN(p.Conc) || math.IsInf(p.Conc, 0) || p.Conc < 0 || math.IsNaN(p.Response) ||
					math.IsInf(p.Response, 0) || p.Weight < 0 || math.IsNaN(p.Weight) || math.IsInf(p.Weight, 0) {
					t.Fatalf("bad point %+v from %q", p, in)
				}
				// No weight (fit.Point's zero) is an empty cell: an
				// explicit 0 is refused.
				weight := ""
				if p.Weight != 0 {
					weight = strconv.FormatFloat(p.Weight, 'g', -1, 64)
				}
				w.Write([]string{c.ID, strconv.FormatFloat(p.Conc, 'g', -1, 64),
					strconv.FormatFloat(p.Response, 'g', -1, 64), weight})
			}
		}
		w.Flush()
		again, err := ReadCurves(&buf, Molar, "--unit")
		if err != nil {
			t.Fatalf("round trip of %q: %v", buf.String(), err)
		}
		if len(again) != len(cs) {
			t.Fatalf("round trip: %d curves, want %d", len(again), len(cs))
		}
		for i := range cs {
			if again[i].ID != cs[i].ID || len(again[i].Points) != len(cs[i].Points) {
				t.Fatalf("round trip: curve %d differs", i)
			}
			for k, p := range cs[i].Points {
				if again[i].Points[k] != p {
					t.Fatalf("round trip: point %+v became %+v", p, again[i].Points[k])
				}
			}
		}
	})
}
