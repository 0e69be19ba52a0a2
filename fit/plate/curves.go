package plate

import (
	"sort"
	"strconv"

	"sluice/fit"
)

// PlateWell is one well of a submitted plate. Conc and AntagonistConc are
// molar.
type PlateWell struct {
	Well           Well
	Role           Role
	CompoundID     string
	Conc           float64
	Value          float64
	AntagonistID   string
	AntagonistConc float64
}

// CurveSpec is one curve cut from a plate: a compound, at one antagonist
// concentration when antagonists are given, its points normalised to the
// controls.
type CurveSpec struct {
	Key            string // compound[@antagonist:conc], unique on the plate
	CompoundID     string
	AntagonistID   string
	AntagonistConc float64
	Curve          fit.Curve
}

// Curves groups the sample and reference wells by compound (and by
// antagonist and its concentration), normalises them with mode against the
// control means, and adds the vehicle wells as zero-concentration points:
// a vehicle well with a compound joins that compound's curves, one without
// joins every curve. Curves come back sorted by key.
func Curves(wells []PlateWell, mode Mode, meanMax, meanMin float64) []CurveSpec {
	byKey := map[string]*CurveSpec{}
	var shared []float64
	vehicleOf := map[string][]float64{}
	for _, w := range wells {
		y := mode.Normalise(w.Value, meanMax, meanMin)
		switch w.Role {
		case Vehicle:
			if w.CompoundID == "" {
				shared = append(shared, y)
			} else {
				vehicleOf[w.CompoundID] = append(vehicleOf[w.CompoundID], y)
			}
		case Sample, Reference:
			key := w.CompoundID
			if w.AntagonistID != "" {
				key += "@" + w.AntagonistID + ":" + strconv.FormatFloat(w.AntagonistConc, 'g', -1, 64)
			}
			cs := byKey[key]
			if cs == nil {
				cs = &CurveSpec{Key: key, CompoundID: w.CompoundID, AntagonistID: w.AntagonistID, AntagonistConc: w.AntagonistConc}
				cs.Curve.ID = key
				byKey[key] = cs
			}
			cs.Curve.Points = append(cs.Curve.Points, fit.Point{Conc: w.Conc, Response: y})
		}
	}
	out := make([]CurveSpec, 0, len(byKey))
	for _, cs := range byKey {
		for _, y := range append(append([]float64{}, vehicleOf[cs.CompoundID]...), shared...) {
			cs.Curve.Points = append(cs.Curve.Points, fit.Point{Conc: 0, Response: y})
		}
		out = append(out, *cs)
	}
	sort.Slice(out, func(a, b int) bool { return out[a].Key < out[b].Key })
	return out
}
