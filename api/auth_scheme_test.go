package api

import (
	"testing"

	"sluice/db/dbtest"
)

// The Bearer scheme's name is case-insensitive (RFC 9110 §11.1); another
// scheme or no token is a 401.
func TestBearerSchemeCaseInsensitive(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	tok := ts.tokens[ScopeRead]
	for _, c := range []struct {
		h    string
		code int
	}{
		{"Bearer " + tok, 200}, {"bearer " + tok, 200}, {"BEARER " + tok, 200}, {"bEaReR  " + tok + " ", 200},
		{"Basic " + tok, 401}, {"Bearer", 401}, {"Bearer ", 401}, {tok, 401},
	} {
		if w := ts.do("GET", "/v1/assays", "", "", "Authorization", c.h); w.Code != c.code {
			t.Errorf("%.12q…: %d, want %d", c.h, w.Code, c.code)
		}
	}
}
