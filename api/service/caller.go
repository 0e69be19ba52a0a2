package service

// Caller is who calls a use case: the token's name (the audit actor, and
// the owner of its idempotency keys) and its scope.
type Caller struct {
	Name  string
	Scope string
}
