package service

// Caller is who calls a use case: the token's name (the audit actor, and
// the owner of its idempotency keys) and its scope.
type Caller struct {
	Name  string
	Scope string
}

// Scopes, each including the ones before it.
const (
	ScopeRead   = "read"
	ScopeSubmit = "submit"
	ScopeAdmin  = "admin"
)

var scopeRank = map[string]int{ScopeRead: 1, ScopeSubmit: 2, ScopeAdmin: 3}

// ValidScope reports whether s names a scope.
func ValidScope(s string) bool { return scopeRank[s] > 0 }

// Can reports whether the caller's scope includes scope.
func (c Caller) Can(scope string) bool {
	return scopeRank[c.Scope] >= scopeRank[scope] && scopeRank[scope] > 0
}
