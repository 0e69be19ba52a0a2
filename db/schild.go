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
	return w.e.translate(w.q.exec(ctx, "INSERT INTO schild_runs ("+schildCols+") VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10)",
		r.ID, w.e.timeArg(r.CreatedAt), r.SubmittedBy, nullString(r.PlateID), r.AgonistID, r.AntagonistID, r.EngineVersion,
		r.InputSHA256, string(r.Input), string(r.Result)))
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
	return r, s.e.translate(err)
}

func (s *sqlStore) PlateSchildRuns(ctx context.Context, plateID string) ([]SchildRun, error) {
	rows, err := s.e.query(ctx, "SELECT "+schildCols+" FROM schild_runs WHERE plate_id = $1 ORDER BY agonist_id, antagonist_id", plateID)
	if err != nil {
		return nil, s.e.translate(err)
	}
	defer rows.Close()
	var out []SchildRun
	for rows.Next() {
		r, err := scanSchild(rows)
		if err != nil {
			return nil, s.e.translate(err)
		}
		out = append(out, *r)
	}
	return out, s.e.translate(rows.Err())
}
