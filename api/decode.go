package api

import (
	"sluice/api/service"

	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"mime"
	"net"
	"net/http"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/gin-gonic/gin"
)

// readBody reads the whole request body, within the server's limit.
func readBody(c *gin.Context) ([]byte, error) {
	b, err := io.ReadAll(c.Request.Body)
	var mbe *http.MaxBytesError
	if errors.As(err, &mbe) {
		return nil, &service.Error{Kind: errTooLarge, Detail: fmt.Sprintf("the body is larger than the limit of %d bytes", mbe.Limit)}
	}
	var ne net.Error
	if errors.As(err, &ne) && ne.Timeout() {
		return nil, &service.Error{Kind: errBodyTimeout, Detail: "the body did not arrive in time: " + bodyPace}
	}
	if err != nil {
		return nil, &service.Error{Kind: errBadRequest, Detail: "reading the body: " + err.Error()}
	}
	return b, nil
}

// requireJSON checks the Content-Type of a JSON body (absent is accepted).
func requireJSON(c *gin.Context) error {
	ct := c.GetHeader("Content-Type")
	if ct == "" {
		return nil
	}
	mt, _, err := mime.ParseMediaType(ct)
	if err != nil || (mt != "application/json" && !strings.HasSuffix(mt, "+json")) {
		return &service.Error{Kind: errUnsupportedType, Detail: fmt.Sprintf("Content-Type %q: want application/json", ct)}
	}
	return nil
}

// readJSON reads a JSON request body into dst strictly and returns the raw
// body; on any error it has already answered with a problem and returns
// ok false.
func (s *Server) readJSON(c *gin.Context, dst any) (body []byte, ok bool) {
	if err := requireJSON(c); err != nil {
		s.writeProblem(c, err)
		return nil, false
	}
	body, err := readBody(c)
	if err != nil {
		s.writeProblem(c, err)
		return nil, false
	}
	if err := decodeJSON(body, dst); err != nil {
		s.writeProblem(c, err)
		return nil, false
	}
	return body, true
}

// decodeJSON decodes body into dst strictly: unknown fields, trailing data
// and wrong types are errors that point at the field (RFC 6901).
func decodeJSON(body []byte, dst any) error {
	if len(bytes.TrimSpace(body)) == 0 {
		return &service.Error{Kind: errBadRequest, Detail: "the body is empty; want a JSON object"}
	}
	if !utf8.Valid(body) {
		// encoding/json would read invalid bytes as U+FFFD and store
		// text the client never sent; RFC 8259 §8.1 requires UTF-8.
		return &service.Error{Kind: errBadRequest, Detail: fmt.Sprintf("the body is not valid UTF-8 (at byte %d)", invalidUTF8At(body))}
	}
	dec := json.NewDecoder(bytes.NewReader(body))
	dec.DisallowUnknownFields()
	err := dec.Decode(dst)
	if err == nil {
		if _, terr := dec.Token(); terr != io.EOF {
			return &service.Error{Kind: errBadRequest, Detail: "unexpected data after the JSON object"}
		}
		return nil
	}
	var se *json.SyntaxError
	var te *json.UnmarshalTypeError
	switch {
	case errors.As(err, &se):
		return &service.Error{Kind: errBadRequest, Detail: fmt.Sprintf("malformed JSON at byte %d: %v", se.Offset, se)}
	case errors.As(err, &te):
		ptr := pointerAt(body, te.Offset)
		d := fmt.Sprintf("%s is not a valid %s", te.Value, te.Type)
		if strings.HasPrefix(te.Value, "number") && te.Type.String() == "float64" {
			d = te.Value + " is out of range"
		}
		return &service.Error{Kind: errInvalid, Detail: ptr + ": " + d, Fields: []FieldError{{Pointer: ptr, Detail: d}}}
	case strings.HasPrefix(err.Error(), "json: unknown field "):
		raw := strings.TrimPrefix(err.Error(), "json: unknown field ")
		name, uerr := strconv.Unquote(raw)
		if uerr != nil {
			name = raw
		}
		ptr := pointerOfKey(body, name)
		d := fmt.Sprintf("unknown field %q", name)
		return &service.Error{Kind: errInvalid, Detail: d, Fields: []FieldError{{Pointer: ptr, Detail: d}}}
	case errors.Is(err, io.ErrUnexpectedEOF):
		return &service.Error{Kind: errBadRequest, Detail: "the JSON body ends early"}
	}
	return &service.Error{Kind: errBadRequest, Detail: err.Error()}
}

// invalidUTF8At is the offset of the first byte that is not valid UTF-8.
func invalidUTF8At(b []byte) int {
	for i := 0; i < len(b); {
		r, n := utf8.DecodeRune(b[i:])
		if r == utf8.RuneError && n <= 1 {
			return i
		}
		i += n
	}
	return len(b)
}

// pointerAt returns the JSON Pointer of the value that ends at byte offset
// off of doc (as encoding/json reports it).
func pointerAt(doc []byte, off int64) string {
	return walkJSON(doc, func(_ []ptrFrame, isKey bool, _ string, end int64) bool {
		return !isKey && end >= off
	})
}

// pointerOfKey returns the JSON Pointer of the first member named name.
func pointerOfKey(doc []byte, name string) string {
	if p := walkJSON(doc, func(_ []ptrFrame, isKey bool, key string, _ int64) bool {
		return isKey && key == name
	}); p != "" {
		return p
	}
	return "/" + escapePointer(name)
}

// walkJSON walks doc's tokens, calling stop after each member name and
// before descending into or past each value, with the byte offset where the
// token ends; it returns the JSON Pointer where stop said yes, or of where
// the walk ended.
func walkJSON(doc []byte, stop func(stack []ptrFrame, isKey bool, key string, end int64) bool) string {
	dec := json.NewDecoder(bytes.NewReader(doc))
	var stack []ptrFrame
	for {
		tok, err := dec.Token()
		if err != nil {
			return framesPath(stack)
		}
		top := len(stack) - 1
		if d, ok := tok.(json.Delim); ok && (d == '}' || d == ']') {
			stack = stack[:top]
			if top > 0 {
				stack[top-1].next()
			}
			continue
		}
		if top >= 0 && stack[top].expectKey {
			stack[top].key, stack[top].expectKey = tok.(string), false
			if stop(stack, true, stack[top].key, dec.InputOffset()) {
				return framesPath(stack)
			}
			continue
		}
		if stop(stack, false, "", dec.InputOffset()) {
			return framesPath(stack)
		}
		if d, ok := tok.(json.Delim); ok {
			stack = append(stack, ptrFrame{array: d == '[', expectKey: d == '{'})
			continue
		}
		if top >= 0 {
			stack[top].next()
		}
	}
}

// framesPath is the JSON Pointer of the open containers.
func framesPath(stack []ptrFrame) string {
	var b strings.Builder
	for _, f := range stack {
		b.WriteByte('/')
		if f.array {
			b.WriteString(strconv.Itoa(f.index))
		} else {
			b.WriteString(escapePointer(f.key))
		}
	}
	return b.String()
}

// ptrFrame is one open container while walking tokens.
type ptrFrame struct {
	array     bool
	index     int    // array: the current element
	key       string // object: the current member
	expectKey bool   // object: the next token is a member name
}

// next moves past the current element or member.
func (f *ptrFrame) next() {
	if f.array {
		f.index++
	} else {
		f.expectKey = true
	}
}

func escapePointer(s string) string {
	return strings.ReplaceAll(strings.ReplaceAll(s, "~", "~0"), "/", "~1")
}
