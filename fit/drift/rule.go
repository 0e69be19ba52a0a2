package drift

import (
	"fmt"
	"math/bits"
)

// Rule is one control rule.
type Rule uint8

// The rules, in the order they are reported.
const (
	Rule12s   Rule = iota // 1-2s: one value beyond ±2 SD (warning)
	Rule13s               // 1-3s: one value beyond ±3 SD
	Rule22s               // 2-2s: two consecutive values beyond the same 2 SD limit
	RuleR4s               // R-4s: within one group, one value above +2 SD and another below −2 SD
	Rule41s               // 4-1s: four consecutive values beyond the same 1 SD limit
	Rule10x               // 10-x: ten consecutive values on one side of the mean
	RuleEWMA              // EWMA beyond its limits
	RuleCUSUM             // C⁺ or C⁻ above h
	numRules
)

var ruleNames = [numRules]string{"1-2s", "1-3s", "2-2s", "R-4s", "4-1s", "10-x", "ewma", "cusum"}

// String returns the rule's usual name ("1-3s", "R-4s", "ewma", …), the form
// to store.
func (r Rule) String() string {
	if r >= numRules {
		return fmt.Sprintf("rule(%d)", uint8(r))
	}
	return ruleNames[r]
}

// ParseRule reads a rule's name as String writes it.
func ParseRule(name string) (Rule, error) {
	for r, n := range ruleNames {
		if n == name {
			return Rule(r), nil
		}
	}
	return 0, fmt.Errorf("unknown rule %q (want one of 1-2s, 1-3s, 2-2s, R-4s, 4-1s, 10-x, ewma, cusum)", name)
}

// Kind says what a violated rule points to.
type Kind string

// The kinds.
const (
	KindWarning    Kind = "warning"    // 1-2s: inspect, do not reject
	KindRandom     Kind = "random"     // 1-3s, R-4s: imprecision
	KindSystematic Kind = "systematic" // 2-2s, 4-1s, 10-x, EWMA, CUSUM: a shift or trend
)

// Kind says whether the rule detects random or systematic error, or only
// warns (Westgard et al. 1981; FACTS §5).
func (r Rule) Kind() Kind {
	switch r {
	case Rule12s:
		return KindWarning
	case Rule13s, RuleR4s:
		return KindRandom
	}
	return KindSystematic
}

// RuleSet is a set of rules.
type RuleSet uint16

// AllRules holds every rule.
const AllRules = RuleSet(1<<numRules - 1)

// Set returns the set of the given rules.
func Set(rules ...Rule) RuleSet {
	var s RuleSet
	for _, r := range rules {
		s |= 1 << r
	}
	return s
}

// Has reports whether r is in the set.
func (s RuleSet) Has(r Rule) bool { return s&(1<<r) != 0 }

// Len is the number of rules in the set.
func (s RuleSet) Len() int { return bits.OnesCount16(uint16(s & AllRules)) }

// Rules lists the set's rules in report order; nil for the empty set.
func (s RuleSet) Rules() []Rule {
	if s&AllRules == 0 {
		return nil
	}
	out := make([]Rule, 0, s.Len())
	for r := Rule(0); r < numRules; r++ {
		if s.Has(r) {
			out = append(out, r)
		}
	}
	return out
}

// Strings lists the names of the set's rules in report order.
func (s RuleSet) Strings() []string {
	rules := s.Rules()
	out := make([]string, len(rules))
	for i, r := range rules {
		out[i] = r.String()
	}
	return out
}

// Rejects reports whether the set holds a rule that is more than a warning.
func (s RuleSet) Rejects() bool { return s&AllRules&^Set(Rule12s) != 0 }
