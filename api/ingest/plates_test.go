package ingest

import (
	"errors"
	"strings"
	"testing"

	"sluice/fit/plate"
)

func TestReadPlateCSV(t *testing.T) {
	ws, u, err := ReadPlateCSV(strings.NewReader("well,role,compound_id,conc,value,antagonist_id,antagonist_conc\nA1,max_control,,,1000,,\nA02,sample,X,1e-9,550,B,1e-8\nA3,empty,,,,,\n"), Molar, "conc_unit")
	if err != nil || u != Molar {
		t.Fatal(err)
	}
	if len(ws) != 3 || ws[1].CompoundID != "X" || ws[1].AntagonistConc != 1e-8 || !ws[1].HasValue || ws[2].HasValue || ws[1].Line != 3 {
		t.Errorf("%+v", ws)
	}
	_, _, err = ReadPlateCSV(strings.NewReader("well,role,conc,value\nA1,sample,1,1\nA2,sample,1,x\n"), Nanomolar, "conc_unit")
	var pe *ParseError
	if !errors.As(err, &pe) || pe.Line != 3 || pe.Column != 4 {
		t.Errorf("bad value: %v", err)
	}
}

func TestReadGrid(t *testing.T) {
	g, err := ReadGrid(strings.NewReader("Plate 1,1,2,3\nA,1.5,2,\nB,4,5,6\n"), plate.Plate96)
	if err != nil {
		t.Fatal(err)
	}
	if len(g) != 5 || g["A01"] != 1.5 || g["B03"] != 6 {
		t.Errorf("%v", g)
	}
	for _, bad := range []string{",1,13\nA,1,2\n", ",1\nZ,1\n", ",1\nA,x\n", ",1\nA,1\nA,2\n"} {
		if _, err := ReadGrid(strings.NewReader(bad), plate.Plate96); err == nil {
			t.Errorf("%q accepted", bad)
		} else if pe := (*ParseError)(nil); !errors.As(err, &pe) {
			t.Errorf("%q: %T is not a *ParseError", bad, err)
		}
	}
}

// Fuzz the plate readers: any bytes give wells or a *ParseError, never a
// panic; every value read is finite.
func FuzzReadPlateCSV(f *testing.F) {
	f.Add("well,role,compound_id,conc,value\nA1,max_control,,,1000\nA2,sample,X,1e-9,550\n")
	f.Add("well,role,conc,value\n\"A1\",sample,1,1\n")
	f.Add("well,role,compound_id,conc_nM,value\nA1,max_control,,,1000\nA2,sample,X,1,550\n")
	f.Fuzz(func(t *testing.T, in string) {
		ws, _, err := ReadPlateCSV(strings.NewReader(in), NoUnit, "conc_unit")
		if err != nil {
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("%T %v", err, err)
			}
			if !IsInputError(err) { // the API's status < 500
				t.Fatalf("error %v is not an input error: the API would answer 500", err)
			}
			return
		}
		for _, w := range ws {
			if w.Value != w.Value || w.Conc != w.Conc {
				t.Fatalf("NaN from %q", in)
			}
		}
	})
}

func FuzzReadGrid(f *testing.F) {
	f.Add(",1,2,3\nA,1,2,3\nB,4,5,6\n")
	f.Add("x,24\nP,1e3\n")
	f.Fuzz(func(t *testing.T, in string) {
		g, err := ReadGrid(strings.NewReader(in), plate.Plate384)
		if err != nil {
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("%T %v", err, err)
			}
			if !IsInputError(err) { // the API's status < 500
				t.Fatalf("error %v is not an input error: the API would answer 500", err)
			}
			return
		}
		for name, v := range g {
			if _, err := plate.Plate384.ParseWell(name); err != nil || v != v {
				t.Fatalf("well %q value %v from %q", name, v, in)
			}
		}
	})
}
