package service

import (
	"encoding/csv"
	"io"
	"math"
	"strconv"
	"strings"

	"sluice/api/wire"
	"sluice/db"
)

// CSVName is the download name of one of a plate's CSV files,
// "<plate>-<what>.csv" (plate: its barcode or id), with nothing that could
// break a Content-Disposition header.
func CSVName(plate, what string) string {
	name := strings.Map(func(r rune) rune {
		if r == '"' || r == '\\' || r < 0x20 || r == 0x7f {
			return -1
		}
		return r
	}, plate)
	return name + "-" + what + ".csv"
}

// csvNum is a number as the CSV files write it: shortest round-trip form,
// empty for NaN and ±Inf (no value).
func csvNum(v wire.Num) string {
	f := float64(v)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return ""
	}
	return strconv.FormatFloat(f, 'g', -1, 64)
}

// WritePlateCurvesCSV writes a plate's curves as CSV, one row per curve
// (GET /v1/plates/{id}/curves.csv and the dashboard's download), the
// header from the first curve's parameters; nothing for a plate without
// curves. An error is the writer's (the client's connection).
func WritePlateCurvesCSV(out io.Writer, p *db.Plate, curves []wire.PlateCurve) error {
	w := csv.NewWriter(out)
	for i, pc := range curves {
		if i == 0 {
			header := []string{"plate_id", "barcode", "key", "compound_id", "antagonist_id", "antagonist_conc", "model", "status"}
			for _, pr := range pc.Params {
				header = append(header, pr.Name, pr.Name+"_se")
			}
			header = append(header, "ec50", "ec50_ci_lo", "ec50_ci_hi", "pec50", "n", "r2", "flags", "activity", "qualifier", "bound", "direction",
				"log_ec50", "log_ec50_ci_lo", "log_ec50_ci_hi", "plate_qc", "curve_id")
			if err := w.Write(header); err != nil {
				return err
			}
		}
		row := []string{p.ID, p.Barcode, pc.Key, pc.CompoundID, pc.AntagonistID, strconv.FormatFloat(pc.AntagonistConc, 'g', -1, 64), pc.Model, pc.Status}
		for _, pr := range pc.Params {
			row = append(row, csvNum(pr.Estimate), csvNum(pr.SE))
		}
		row = append(row, csvNum(pc.EC50.Estimate), csvNum(pc.EC50.CI[0]), csvNum(pc.EC50.CI[1]), csvNum(pc.PEC50), strconv.Itoa(pc.Stats.N),
			csvNum(pc.Stats.R2), strings.Join(pc.Flags, ";"), pc.Activity, deref(pc.Qualifier), csvNum(pc.Bound), deref(pc.Direction))
		row = append(row, logEC50Cols(pc, csvNum)...)
		row = append(row, plateVerdict(p), pc.ID)
		if err := w.Write(row); err != nil {
			return err
		}
	}
	w.Flush()
	return w.Error()
}

// WriteWellsCSV writes a plate's wells as CSV, one row per well in the
// order of GET /v1/plates/{id}/wells: well name, role, compound and molar
// concentrations, the raw value and the value normalised to the plate's
// controls (empty until the plate is assessed, and for wells without a
// value).
func WriteWellsCSV(out io.Writer, l *wire.WellList) error {
	w := csv.NewWriter(out)
	if err := w.Write([]string{"plate_id", "well", "role", "compound_id", "conc", "antagonist_id", "antagonist_conc",
		"value", "normalised", "mode"}); err != nil {
		return err
	}
	opt := func(v *wire.Num) string {
		if v == nil {
			return ""
		}
		return csvNum(*v)
	}
	for _, x := range l.Wells {
		conc, ant := csvNum(x.Conc), csvNum(x.AntagonistConc)
		if x.CompoundID == "" && float64(x.Conc) == 0 {
			conc = ""
		}
		if x.AntagonistID == "" && float64(x.AntagonistConc) == 0 {
			ant = ""
		}
		if err := w.Write([]string{l.PlateID, x.Well, x.Role, x.CompoundID, conc,
			x.AntagonistID, ant, opt(x.Value), opt(x.Normalised), l.Mode}); err != nil {
			return err
		}
	}
	w.Flush()
	return w.Error()
}

// deref is the string behind p, "" for nil (a JSON null).
func deref(p *string) string {
	if p == nil {
		return ""
	}
	return *p
}
