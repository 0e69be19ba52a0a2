package db

import (
	"context"
	"time"
)

// SchildRun is a stored Schild analysis.
type SchildRun struct {
	ID            string
	CreatedAt     time.Time
	SubmittedBy   string
	PlateID       string // "" unless it came from a plate
	AgonistID     string
	AntagonistID  string
	EngineVersion string
	InputSHA256   string
	Input, Result []byte // JSON
}

const schildCols = "id, created_at, submitted_by, plate_id, agonist_id, antagonist_id, engine_version, input_sha256, input, result"

func (w *sqlWriter) InsertSchildRun(ctx context.Context, r *SchildRun) error {
	const op = "InsertSchildRun"
	in, ok := jsonDoc(r.Input, "")
	if !ok || in == nil {
		return w.invalid(op, r.ID, "input")
	}
	res, ok := jsonDoc(r.Result, "")
	if !ok || res == nil {
		return w.invalid(op, r.ID, "result")
	}
	return w.insert(ctx, op, r.ID, "INSERT INTO schild_runs ("+schildCols+") VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10)",
		r.ID, w.e.timeArg(r.CreatedAt), r.SubmittedBy, nullString(r.PlateID), r.AgonistID, r.AntagonistID, r.EngineVersion,
		r.InputSHA256, in, res)
}

func scanSchild(row rowScanner) (*SchildRun, error) {
	var r SchildRun
	var t dbTime
	var plate *string
	if err := row.Scan(&r.ID, &t, &r.SubmittedBy, &plate, &r.AgonistID, &r.AntagonistID, &r.EngineVersion, &r.InputSHA256, &r.Input, &r.Result); err != nil {
		return nil, err
	}
	r.CreatedAt, r.PlateID = t.t, deref(plate)
	return &r, nil
}

func (s *sqlStore) SchildRun(ctx context.Context, id string) (*SchildRun, error) {
	r, err := scanSchild(s.e.queryRow(ctx, "SELECT "+schildCols+" FROM schild_runs WHERE id = $1", id))
	if err != nil {
		return nil, s.read("SchildRun", id, err)
	}
	return r, nil
}

func (s *sqlStore) PlateSchildRuns(ctx context.Context, plateID string) ([]SchildRun, error) {
	rows, err := s.e.query(ctx, "SELECT "+schildCols+" FROM schild_runs WHERE plate_id = $1 ORDER BY agonist_id, antagonist_id", plateID)
	if err != nil {
		return nil, s.read("PlateSchildRuns", plateID, err)
	}
	defer rows.Close()
	var out []SchildRun
	for rows.Next() {
		r, err := scanSchild(rows)
		if err != nil {
			return nil, s.read("PlateSchildRuns", plateID, err)
		}
		out = append(out, *r)
	}
	return out, s.read("PlateSchildRuns", plateID, rows.Err())
}
