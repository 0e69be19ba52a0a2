package wire

import (
	"bytes"
	"math"
	"strconv"
)

// Num is a float64 that encodes NaN and ±Inf as JSON null (JSON has no
// such numbers) and decodes null as NaN.
type Num float64

// MarshalJSON writes the shortest decimal that round-trips, or null.
func (n Num) MarshalJSON() ([]byte, error) {
	f := float64(n)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return strconv.AppendFloat(nil, f, 'g', -1, 64), nil
}

// UnmarshalJSON reads a number or null.
func (n *Num) UnmarshalJSON(b []byte) error {
	if bytes.Equal(bytes.TrimSpace(b), []byte("null")) {
		*n = Num(math.NaN())
		return nil
	}
	f, err := strconv.ParseFloat(string(b), 64)
	if err != nil {
		return err
	}
	*n = Num(f)
	return nil
}
