package api

import (
	"context"
	"encoding/base64"
	"errors"
	"fmt"
	"strings"
	"sync"
	"time"

	"github.com/gin-gonic/gin"

	"sluice/api/service"
	"sluice/db"
)

// Scopes, each including the ones before it (service.Caller.Can).
const (
	ScopeRead   = service.ScopeRead
	ScopeSubmit = service.ScopeSubmit
	ScopeAdmin  = service.ScopeAdmin
)

// ValidScope reports whether s names a scope.
func ValidScope(s string) bool { return service.ValidScope(s) }

// NewToken returns a new secret and the hash to store. The secret is 32
// bytes from the system's secure source, base64url, behind a "slc_" prefix
// so that leaked tokens are easy to find.
func NewToken() (secret, hash string) {
	var b [32]byte
	randomBytes(b[:])
	secret = "slc_" + base64.RawURLEncoding.EncodeToString(b[:])
	return secret, HashToken(secret)
}

// HashToken is the stored form of a secret (service.HashToken).
func HashToken(secret string) string { return service.HashToken(secret) }

const (
	actorKey = "sluice.actor"
	scopeKey = "sluice.scope"
)

// actor returns the name of the token behind the request.
func actor(c *gin.Context) string { return c.GetString(actorKey) }

// callerOf is who sent the request, for the use cases.
func callerOf(c *gin.Context) service.Caller {
	return service.Caller{Name: c.GetString(actorKey), Scope: c.GetString(scopeKey)}
}

// authenticate admits requests whose bearer token has at least the scope.
func (s *Server) authenticate(scope string) gin.HandlerFunc {
	return func(c *gin.Context) {
		if s.cfg.AuthDisabled {
			c.Set(actorKey, "anonymous")
			c.Set(scopeKey, ScopeAdmin)
			c.Next()
			return
		}
		secret, ok := bearer(c.GetHeader("Authorization"))
		if !ok {
			c.Header("WWW-Authenticate", `Bearer realm="sluice"`)
			s.writeProblem(c, &service.Error{Kind: errUnauthenticated, Detail: "send Authorization: Bearer <token>"})
			return
		}
		tok, err := s.tokens.lookup(c.Request.Context(), HashToken(secret))
		if errors.Is(err, db.ErrNotFound) {
			c.Header("WWW-Authenticate", `Bearer realm="sluice", error="invalid_token"`)
			s.writeProblem(c, &service.Error{Kind: errUnauthenticated, Detail: "the token is not valid"})
			return
		}
		if err != nil {
			s.writeProblem(c, fmt.Errorf("token lookup: %w", err))
			return
		}
		if !(service.Caller{Scope: tok.Scope}).Can(scope) {
			s.writeProblem(c, &service.Error{Kind: errForbidden,
				Detail: fmt.Sprintf("token %q has scope %s; this needs %s", tok.Name, tok.Scope, scope)})
			return
		}
		c.Set(actorKey, tok.Name)
		c.Set(scopeKey, tok.Scope)
		c.Next()
	}
}

// bearer returns the token of an Authorization header of the Bearer scheme,
// whose name is case-insensitive (RFC 9110 §11.1; RFC 6750 §2.1).
func bearer(h string) (string, bool) {
	scheme, secret, ok := strings.Cut(h, " ")
	secret = strings.TrimSpace(secret)
	if !ok || !strings.EqualFold(scheme, "Bearer") || secret == "" {
		return "", false
	}
	return secret, true
}

// tokenTTL is how long a looked-up token is trusted without asking the
// store again: a revoked token stops working within this time.
const tokenTTL = 10 * time.Second

// tokenCache remembers valid tokens by hash for tokenTTL, saving a
// database round trip on every request. Unknown hashes are not cached, so
// a new token works at once.
type tokenCache struct {
	store db.Store
	now   func() time.Time
	mu    sync.Mutex
	byKey map[string]cachedToken
}

type cachedToken struct {
	tok     db.Token
	expires time.Time
}

// maxCachedTokens bounds the cache; past it the cache starts again.
const maxCachedTokens = 10000

func (tc *tokenCache) lookup(ctx context.Context, hash string) (*db.Token, error) {
	now := tc.now()
	tc.mu.Lock()
	ct, ok := tc.byKey[hash]
	tc.mu.Unlock()
	if ok && now.Before(ct.expires) {
		t := ct.tok
		return &t, nil
	}
	tok, err := tc.store.TokenByHash(ctx, hash)
	if err != nil {
		return nil, err
	}
	tc.mu.Lock()
	if tc.byKey == nil || len(tc.byKey) >= maxCachedTokens {
		tc.byKey = map[string]cachedToken{}
	}
	tc.byKey[hash] = cachedToken{tok: *tok, expires: now.Add(tokenTTL)}
	tc.mu.Unlock()
	return tok, nil
}
