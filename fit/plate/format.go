package plate

import (
	"fmt"
	"strconv"
	"strings"
)

// Format is a plate format: rows × columns.
type Format struct {
	Wells, Rows, Cols int
}

// The standard formats (ANSI SLAS 4-2004 footprints: 8×12, 16×24, 32×48).
var (
	Plate96   = Format{96, 8, 12}
	Plate384  = Format{384, 16, 24}
	Plate1536 = Format{1536, 32, 48}
)

// ParseFormat reads "96", "384" or "1536".
func ParseFormat(s string) (Format, error) {
	switch strings.TrimSpace(s) {
	case "96":
		return Plate96, nil
	case "384":
		return Plate384, nil
	case "1536":
		return Plate1536, nil
	}
	return Format{}, fmt.Errorf("unknown plate format %q (want 96, 384 or 1536)", s)
}

// Well is a position, 0-based.
type Well struct{ Row, Col int }

// rowName is A … Z, then AA … AF (rows 27–32 of a 1536-well plate).
func rowName(r int) string {
	if r < 26 {
		return string(rune('A' + r))
	}
	return "A" + string(rune('A'+r-26))
}

// Name is the canonical well name: row letters and a zero-padded column
// ("A01", "P24", "AF48"), the form Sluice stores.
func (f Format) Name(w Well) string {
	return fmt.Sprintf("%s%02d", rowName(w.Row), w.Col+1)
}

// ParseWell reads a well name with or without zero padding ("A1", "A01",
// "af48") and checks it lies on the plate.
func (f Format) ParseWell(s string) (Well, error) {
	t := strings.ToUpper(strings.TrimSpace(s))
	i := 0
	for i < len(t) && t[i] >= 'A' && t[i] <= 'Z' {
		i++
	}
	letters, digits := t[:i], t[i:]
	var row int
	switch len(letters) {
	case 1:
		row = int(letters[0] - 'A')
	case 2:
		if letters[0] != 'A' {
			return Well{}, fmt.Errorf("well %q: two-letter rows run AA to AF", s)
		}
		row = 26 + int(letters[1]-'A')
	default:
		return Well{}, fmt.Errorf("well %q is not a row letter and a column number", s)
	}
	col, err := strconv.Atoi(digits)
	if err != nil || digits == "" || digits[0] == '+' || digits[0] == '-' {
		return Well{}, fmt.Errorf("well %q is not a row letter and a column number", s)
	}
	w := Well{Row: row, Col: col - 1}
	if w.Row >= f.Rows || w.Col < 0 || w.Col >= f.Cols {
		return Well{}, fmt.Errorf("well %q is not on a %d-well plate (%s01–%s)", s, f.Wells, "A", f.Name(Well{f.Rows - 1, f.Cols - 1}))
	}
	return w, nil
}

// Edge reports whether the well is on the outer ring.
func (f Format) Edge(w Well) bool {
	return w.Row == 0 || w.Col == 0 || w.Row == f.Rows-1 || w.Col == f.Cols-1
}
