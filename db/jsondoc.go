package db

import (
	"bytes"
	"encoding/json"
	"unicode/utf8"
)

// jsonDoc checks a JSON document before it is written, the same way on
// both engines, and returns it as the text to bind. Empty means def (e.g.
// "{}" for labels; "" for a nullable column, bound as NULL).
//
// A document must be valid JSON (json.Valid), valid UTF-8, and free of
// the \u0000 escape: PostgreSQL's jsonb cannot hold it (SQLSTATE 22P05),
// so SQLite must not either.
func jsonDoc(doc []byte, def string) (any, bool) {
	if len(doc) == 0 {
		if def == "" {
			return nil, true
		}
		return def, true
	}
	if !json.Valid(doc) || !utf8.Valid(doc) || hasNULEscape(doc) {
		return nil, false
	}
	return string(doc), true
}

// hasNULEscape reports whether a valid JSON text has the escape \u0000: an
// occurrence counts when an even number of backslashes precede it (an odd
// number means its backslash is itself escaped, as in "\\u0000").
func hasNULEscape(doc []byte) bool {
	for i := 0; ; {
		j := bytes.Index(doc[i:], []byte(`\u0000`))
		if j < 0 {
			return false
		}
		j += i
		k := j
		for k > 0 && doc[k-1] == '\\' {
			k--
		}
		if (j-k)%2 == 0 {
			return true
		}
		i = j + 1
	}
}
