package fit

import (
	"fmt"
	"math"
)

// MinCaseReplicates is the fewest points at every tested concentration with
// which the case scheme is accepted.
//
// Resampling r points with replacement within a concentration gives its
// mean a variance of (r − 1)/r · s²/r, not s²/r (Davison & Hinkley 1997,
// §2.3, eq. 2.9): the bootstrap sees too little scatter, and a nominal
// 95 % interval stretches only to about ±1.96·√((r − 1)/r) true standard
// errors, covering about 2Φ(1.96·√((r − 1)/r)) − 1 = 83 % for duplicates and
// 89 % for triplicates. With one point per concentration every resample is
// the data and the interval has zero width. The number is set by the
// coverage simulation in casescheme_test.go (TestCaseSchemeCoverage), which
// counts the coverage at this number and at duplicates against the band of
// TestBootstrapCoverage; the residual scheme has no such limit.
const MinCaseReplicates = 7

// checkScheme refuses the case scheme for a design with fewer than
// MinCaseReplicates points at some concentration, with a *SettingError on
// bootstrap.scheme that points to the residual scheme.
func checkScheme(s BootSettings, d *design) error {
	if s.Scheme != SchemeCase {
		return nil
	}
	fewest, at := d.n+1, 0
	for l := range d.x {
		if r := d.start[l+1] - d.start[l]; r < fewest {
			fewest, at = r, l
		}
	}
	if fewest >= MinCaseReplicates {
		return nil
	}
	where := "the vehicle"
	if !math.IsInf(d.x[at], -1) {
		where = fmt.Sprintf("%.3g M", math.Pow(10, d.x[at]))
	}
	return &SettingError{"bootstrap.scheme", invalid(
		"the case scheme needs at least %d points at every concentration, and %s has %d: "+
			"resampling so few points within a concentration understates the scatter and the intervals do not cover; "+
			"use the residual scheme", MinCaseReplicates, where, fewest)}
}
