package plate

import (
	"errors"
	"fmt"
	"math"
	"testing"
)

// validWells is a small valid 96-well plate: two controls of each kind,
// one compound at three concentrations, a vehicle and an empty well.
func validWells() []WellInput {
	return []WellInput{
		{Well: "A1", Role: "max_control", Value: 1000, HasValue: true},
		{Well: "B1", Role: "max_control", Value: 990, HasValue: true},
		{Well: "A12", Role: "min_control", Value: 0, HasValue: true},
		{Well: "B12", Role: "min_control", Value: 0, HasValue: true},
		{Well: "A2", Role: "sample", CompoundID: "c", Conc: 1e-8, HasConc: true, Value: 100, HasValue: true},
		{Well: "A3", Role: "sample", CompoundID: "c", Conc: 1e-7, HasConc: true, Value: 500, HasValue: true},
		{Well: "a04", Role: "sample", CompoundID: "c", Conc: 1e-6, HasConc: true, Value: 900, HasValue: true},
		{Well: "A5", Role: "vehicle", Value: 5, HasValue: true},
		{Well: "H6", Role: "empty"},
	}
}

func TestValidateAccepts(t *testing.T) {
	got, err := Validate(Plate96, validWells(), ForPlate)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 9 || got[6].Name != "A04" || got[6].Well != (Well{0, 3}) || got[6].Role != Sample || got[8].Role != Empty {
		t.Errorf("checked wells: %+v", got)
	}
	if r := Read(got); len(r) != 8 {
		t.Errorf("Read kept %d wells, want 8 (all but the empty one)", len(r))
	}
	// The same map without values is a valid layout.
	layout := validWells()
	for i := range layout {
		layout[i].Value, layout[i].HasValue = 0, false
	}
	if _, err := Validate(Plate96, layout, ForLayout); err != nil {
		t.Errorf("layout: %v", err)
	}
}

// Each broken rule is reported at its entry and field, wrapping its
// sentinel and ErrInvalid.
func TestValidateRejects(t *testing.T) {
	cases := []struct {
		name     string
		use      Use
		mod      func(ws []WellInput) []WellInput
		index    int
		field    string
		sentinel error
	}{
		{"off the plate", ForPlate, func(ws []WellInput) []WellInput { ws[4].Well = "I1"; return ws }, 4, "well", ErrWellName},
		{"not a name", ForPlate, func(ws []WellInput) []WellInput { ws[4].Well = "12"; return ws }, 4, "well", ErrWellName},
		{"duplicate", ForPlate, func(ws []WellInput) []WellInput { ws[5].Well = "a02"; return ws }, 5, "well", ErrDuplicate},
		{"role", ForPlate, func(ws []WellInput) []WellInput { ws[7].Role = "blank"; return ws }, 7, "role", ErrRole},
		{"compound", ForPlate, func(ws []WellInput) []WellInput { ws[4].CompoundID = ""; return ws }, 4, "compound_id", ErrMissing},
		{"conc missing", ForPlate, func(ws []WellInput) []WellInput { ws[4].HasConc = false; return ws }, 4, "conc", ErrMissing},
		{"conc negative", ForPlate, func(ws []WellInput) []WellInput { ws[4].Conc = -1; return ws }, 4, "conc", ErrConc},
		{"conc NaN", ForPlate, func(ws []WellInput) []WellInput { ws[4].Conc = math.NaN(); return ws }, 4, "conc", ErrConc},
		{"value missing", ForPlate, func(ws []WellInput) []WellInput { ws[7].HasValue = false; return ws }, 7, "value", ErrMissing},
		{"value infinite", ForPlate, func(ws []WellInput) []WellInput { ws[0].Value = math.Inf(1); return ws }, 0, "value", ErrValue},
		{"value in layout", ForLayout, func(ws []WellInput) []WellInput { return ws }, 0, "value", ErrNotAllowed},
		{"antagonist conc alone", ForPlate, func(ws []WellInput) []WellInput { ws[5].AntagonistConc = 1e-8; return ws }, 5, "antagonist_id", ErrAntagonist},
		{"antagonist conc negative", ForPlate, func(ws []WellInput) []WellInput {
			ws[5].AntagonistID, ws[5].AntagonistConc = "x", -1e-8
			return ws
		}, 5, "antagonist_conc", ErrConc},
		{"control character", ForPlate, func(ws []WellInput) []WellInput { ws[4].CompoundID = "c\x00"; return ws }, 4, "compound_id", ErrText},
		{"invalid UTF-8", ForPlate, func(ws []WellInput) []WellInput {
			ws[5].AntagonistID = "\xff"
			return ws
		}, 5, "antagonist_id", ErrText},
		{"no wells", ForPlate, func(ws []WellInput) []WellInput { return nil }, -1, "wells", ErrWellCount},
		{"too many", ForPlate, func(ws []WellInput) []WellInput {
			for len(ws) <= 96 {
				ws = append(ws, WellInput{Well: "H12", Role: "empty"})
			}
			return ws
		}, -1, "wells", ErrWellCount},
		{"one min control", ForPlate, func(ws []WellInput) []WellInput { ws[3].Role = "excluded"; return ws }, -1, "wells", ErrControls},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := Validate(Plate96, c.mod(validWells()), c.use)
			var we *WellError
			if !errors.As(err, &we) {
				t.Fatalf("want a *WellError, got %v", err)
			}
			if we.Index != c.index || we.Field != c.field || !errors.Is(err, c.sentinel) || !errors.Is(err, ErrInvalid) {
				t.Errorf("got entry %d field %q (%v), want entry %d field %q (%v)", we.Index, we.Field, we.Err, c.index, c.field, c.sentinel)
			}
			if we.Index >= 0 && c.sentinel != ErrWellName && we.Well == "" {
				t.Errorf("error does not name the well: %v", we)
			}
		})
	}
}

// Every broken rule is listed, in entry order, up to MaxErrors.
func TestValidateListsAll(t *testing.T) {
	ws := validWells()
	ws[4].CompoundID = ""
	ws[6].Role = "blank"
	_, err := Validate(Plate96, ws, ForPlate)
	var inv Invalid
	if !errors.As(err, &inv) || len(inv) != 2 || inv[0].Index != 4 || inv[1].Index != 6 {
		t.Fatalf("got %v", err)
	}
	var many []WellInput
	for i := 0; i < 96; i++ {
		many = append(many, WellInput{Well: fmt.Sprintf("%c%d", 'A'+i/12, i%12+1), Role: "sample", Value: 1, HasValue: true})
	}
	_, err = Validate(Plate96, many, ForPlate)
	if !errors.As(err, &inv) || len(inv) != MaxErrors {
		t.Errorf("got %d errors, want the first %d", len(inv), MaxErrors)
	}
}
