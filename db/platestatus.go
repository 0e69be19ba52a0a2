package db

import (
	"context"
	"strconv"
	"strings"
)

// maxStatusIDs bounds the IDs of one PlateStatuses statement; more are
// asked for in several.
const maxStatusIDs = 500

// PlateStatuses returns the status of each plate of ids that exists, by
// ID, in one statement per maxStatusIDs IDs: what waiting requests poll
// (one query per tick for all of them, whatever their number).
func (s *sqlStore) PlateStatuses(ctx context.Context, ids []string) (map[string]string, error) {
	out := make(map[string]string, len(ids))
	for len(ids) > 0 {
		n := min(len(ids), maxStatusIDs)
		chunk := ids[:n]
		ids = ids[n:]
		args := make([]any, len(chunk))
		marks := make([]string, len(chunk))
		for i, id := range chunk {
			args[i], marks[i] = id, "$"+strconv.Itoa(i+1)
		}
		if err := checkArgs(args); err != nil {
			return nil, &Error{Op: "PlateStatuses", Key: chunk[0], Field: "id", Err: ErrInvalid}
		}
		rows, err := s.e.query(ctx, "SELECT id, status FROM plates WHERE id IN ("+strings.Join(marks, ", ")+")", args...)
		if err != nil {
			return nil, s.read("PlateStatuses", chunk[0], err)
		}
		for rows.Next() {
			var id, status string
			if err := rows.Scan(&id, &status); err != nil {
				rows.Close()
				return nil, s.read("PlateStatuses", chunk[0], err)
			}
			out[id] = status
		}
		rows.Close()
		if err := rows.Err(); err != nil {
			return nil, s.read("PlateStatuses", chunk[0], err)
		}
	}
	return out, nil
}
