package db

import (
	"context"
	"encoding/json"
	"math"
	"strconv"
	"strings"
)

// Bulk is a batch of records loaded by Store.Load in one transaction:
// catalogue entries, finished plates with their wells and QC figures, and
// curve results. It is for filling a database (sluice seed, benchmarks),
// not for the request path: it skips the job queue, and plates are stored
// with the status, QC and counts they are given.
type Bulk struct {
	Assays    []Assay
	Compounds []Compound
	Plates    []BulkPlate
	Curves    []CurveResult
}

// BulkPlate is a plate with its wells; Plate.Figures (nil: not assessed)
// fills the QC columns and Plate.QC the QC document.
type BulkPlate struct {
	Plate Plate
	Wells []WellRow
}

// Loader loads many rows at once.
type Loader interface {
	// Load stores b in one transaction, all or nothing, in the order
	// assays, compounds, plates, wells, curves: COPY on PostgreSQL, one
	// prepared statement per table on SQLite. A taken key is an error
	// (ErrExists), not skipped.
	Load(ctx context.Context, b *Bulk) error
}

// bulkCopier is a querier that can COPY rows into a table (PostgreSQL).
type bulkCopier interface {
	copyRows(ctx context.Context, table string, cols []string, rows [][]any) error
}

const wellCols = "plate_id, well, row_index, col_index, role, compound_id, conc, value, antagonist_id, antagonist_conc"

// Load implements Loader.
func (s *sqlStore) Load(ctx context.Context, b *Bulk) error {
	const op = "Load"
	return s.Write(ctx, func(wr Writer) error {
		w := wr.(*sqlWriter)
		var rows [][]any
		for _, a := range b.Assays {
			rows = append(rows, []any{a.ID, a.Name, a.Target, a.Readout, a.Units, w.e.timeArg(a.CreatedAt), a.CreatedBy})
		}
		if err := w.loadRows(ctx, op, "assays", catalogueCols, rows); err != nil {
			return err
		}
		rows = rows[:0]
		for _, c := range b.Compounds {
			rows = append(rows, []any{c.ID, c.Name, c.Target, c.Readout, c.Units, w.e.timeArg(c.CreatedAt), c.CreatedBy})
		}
		if err := w.loadRows(ctx, op, "compounds", catalogueCols, rows); err != nil {
			return err
		}
		rows = rows[:0]
		var wells [][]any
		for i := range b.Plates {
			r, err := w.bulkPlateArgs(&b.Plates[i].Plate)
			if err != nil {
				return err
			}
			rows = append(rows, r)
			id := b.Plates[i].Plate.ID
			for _, wl := range b.Plates[i].Wells {
				wells = append(wells, []any{id, wl.Well, wl.Row, wl.Col, wl.Role, wl.CompoundID, wl.Conc, wl.Value, wl.AntagonistID, wl.AntagonistConc})
			}
		}
		if err := w.loadRows(ctx, op, "plates", plateCols+", "+plateQCCols, rows); err != nil {
			return err
		}
		if err := w.loadRows(ctx, op, "wells", wellCols, wells); err != nil {
			return err
		}
		rows = rows[:0]
		for i := range b.Curves {
			r, field := w.resultArgs(&b.Curves[i])
			if field != "" {
				return w.invalid(op, b.Curves[i].ID, field)
			}
			rows = append(rows, r)
		}
		return w.loadRows(ctx, op, "curve_results", resultCols, rows)
	})
}

// bulkPlateArgs returns a plate's row of plateCols and plateQCCols.
func (w *sqlWriter) bulkPlateArgs(p *Plate) ([]any, error) {
	const op = "Load"
	var measured any
	if p.MeasuredAt != nil {
		measured = w.e.timeArg(*p.MeasuredAt)
	}
	settings, ok := jsonDoc(p.Settings, "")
	if !ok || settings == nil {
		return nil, w.invalid(op, p.ID, "settings")
	}
	qc, ok := jsonDoc(p.QC, "")
	if !ok {
		return nil, w.invalid(op, p.ID, "qc")
	}
	r := []any{p.ID, w.e.timeArg(p.CreatedAt), p.SubmittedBy, nullString(p.AssayID), p.Barcode, p.Format, measured, p.ConcUnit,
		p.Mode, settings, p.InputSHA256, p.JobID, p.Status, qc, p.CurvesTotal, p.CurvesDone, p.Error}
	f := p.Figures
	if f == nil {
		return append(r, nil, nil, nil, false, nil, nil, nil, nil, nil, nil), nil
	}
	reasons := f.Reasons
	if reasons == nil {
		reasons = []string{}
	}
	rj, err := json.Marshal(reasons)
	if err != nil {
		return nil, w.invalid(op, p.ID, "qc_reasons")
	}
	return append(r, nullNaN(f.ZPrime), nullNaN(f.SignalWindow), nullNaN(f.SignalToBackground),
		math.IsInf(f.SignalToBackground, 1), nullNaN(f.MaxMean), nullNaN(f.MaxCV),
		nullNaN(f.MinMean), nullNaN(f.MinCV), f.Pass, string(rj)), nil
}

// loadRows stores rows of cols in table: COPY on PostgreSQL, one prepared
// INSERT on SQLite. Arguments are checked as every write's are.
func (w *sqlWriter) loadRows(ctx context.Context, op, table, cols string, rows [][]any) error {
	if w.err != nil {
		return w.err
	}
	if len(rows) == 0 {
		return nil
	}
	for _, r := range rows {
		if checkArgs(r) != nil {
			return w.invalid(op, table, "")
		}
	}
	names := strings.Split(cols, ", ")
	if c, ok := w.q.(bulkCopier); ok {
		if err := c.copyRows(ctx, table, names, rows); err != nil {
			return w.abort(opError(op, table, err, w.e.classify))
		}
		return nil
	}
	var q strings.Builder
	q.WriteString("INSERT INTO " + table + " (" + cols + ") VALUES (")
	for i := range names {
		if i > 0 {
			q.WriteString(", ")
		}
		q.WriteString("$" + strconv.Itoa(i+1))
	}
	q.WriteString(")")
	return w.execMany(ctx, op, table, q.String(), rows)
}
