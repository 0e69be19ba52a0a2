package web

import (
	"encoding/json"
	"fmt"

	"sluice/api/wire"
)

// plateRow is a plate as lists show it: the API's view with its QC read.
type plateRow struct {
	wire.PlateView
	QC *wire.PlateQC // nil until the plate is assessed
}

// plateRows reads a page of the API's plate list.
func plateRows(list *wire.PlateList) ([]plateRow, error) {
	out := make([]plateRow, 0, len(list.Plates))
	for _, raw := range list.Plates {
		var r plateRow
		if err := json.Unmarshal(raw, &r.PlateView); err != nil {
			return nil, fmt.Errorf("plate view: %w", err)
		}
		if len(r.PlateView.QC) > 0 && string(r.PlateView.QC) != "null" {
			r.QC = new(wire.PlateQC)
			if err := json.Unmarshal(r.PlateView.QC, r.QC); err != nil {
				return nil, fmt.Errorf("QC of plate %s: %w", r.PlateID, err)
			}
		}
		out = append(out, r)
	}
	return out, nil
}
