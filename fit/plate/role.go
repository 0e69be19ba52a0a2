package plate

import "fmt"

// Role is what a well holds.
type Role string

// The roles.
const (
	Sample     Role = "sample"
	MaxControl Role = "max_control" // full response (agonist reference at its maximum)
	MinControl Role = "min_control" // no response (buffer, or full block)
	Vehicle    Role = "vehicle"     // a sample's zero-concentration point
	Reference  Role = "reference"   // a reference compound's curve
	Empty      Role = "empty"
	Excluded   Role = "excluded" // measured but left out
)

// ParseRole reads a role name.
func ParseRole(s string) (Role, error) {
	switch r := Role(s); r {
	case Sample, MaxControl, MinControl, Vehicle, Reference, Empty, Excluded:
		return r, nil
	}
	return "", fmt.Errorf("unknown role %q (want sample, max_control, min_control, vehicle, reference, empty or excluded)", s)
}

// Mode says how responses are normalised.
type Mode string

// The modes.
const (
	// Agonist: percent of the control window, 100·(x − μmin)/(μmax − μmin).
	Agonist Mode = "agonist"
	// Antagonist: percent inhibition, 100·(μmax − x)/(μmax − μmin).
	Antagonist Mode = "antagonist"
)

// ParseMode reads a mode; "" is agonist.
func ParseMode(s string) (Mode, error) {
	switch Mode(s) {
	case "", Agonist:
		return Agonist, nil
	case Antagonist:
		return Antagonist, nil
	}
	return "", fmt.Errorf("unknown mode %q (want agonist or antagonist)", s)
}

// Normalise maps a raw value to percent using the control means.
func (m Mode) Normalise(x, meanMax, meanMin float64) float64 {
	if m == Antagonist {
		return 100 * (meanMax - x) / (meanMax - meanMin)
	}
	return 100 * (x - meanMin) / (meanMax - meanMin)
}
