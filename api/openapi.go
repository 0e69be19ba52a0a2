package api

import (
	"bytes"
	_ "embed"
	"encoding/json"
	"fmt"
	"net/http"
	"strings"

	"github.com/gin-gonic/gin"

	"sluice/fit"
)

// openAPIDoc is the OpenAPI 3.1 description of the routes; openapi_test.go
// checks that it lists exactly the routes the router serves. Its Model
// schema is completed from the model registry by openAPIDocument.
//
//go:embed openapi.json
var openAPIDoc []byte

// openAPI returns the handler of GET /v1/openapi.json, which serves the
// document built once here.
func (s *Server) openAPI() gin.HandlerFunc {
	doc, err := openAPIDocument(openAPIDoc, fit.Builtin())
	if err != nil {
		panic(err) // the embedded document is broken: a build error, caught by the tests
	}
	return func(c *gin.Context) {
		c.Data(http.StatusOK, "application/json", doc)
	}
}

// openAPIDocument returns doc with the value of components.schemas.Model
// replaced by one generated from the registry: the enum of model names, the
// default and a description that lists each model's summary. So a model
// added to the registry is in the served document without editing it; the
// rest of the document is served byte for byte as written.
func openAPIDocument(doc []byte, models *fit.Registry) ([]byte, error) {
	start, end, err := valueSpan(doc, "components", "schemas", "Model")
	if err != nil {
		return nil, fmt.Errorf("openapi.json: %w", err)
	}
	var desc strings.Builder
	desc.WriteString("A curve model. ")
	names := models.Names()
	for i, m := range names {
		spec, _ := models.Lookup(m)
		if i > 0 {
			desc.WriteString("; ")
		}
		fmt.Fprintf(&desc, "%s: %s", m, spec.Summary())
	}
	desc.WriteString(".")
	schema := struct {
		Type        string      `json:"type"`
		Enum        []fit.Model `json:"enum"`
		Default     fit.Model   `json:"default"`
		Description string      `json:"description"`
	}{"string", names, models.Default(), desc.String()}
	// Indent like the line the value starts on.
	line := doc[bytes.LastIndexByte(doc[:start], '\n')+1 : start]
	indent := line[:len(line)-len(bytes.TrimLeft(line, " "))]
	gen, err := json.MarshalIndent(schema, string(indent), " ")
	if err != nil {
		return nil, err
	}
	out := make([]byte, 0, len(doc)+len(gen))
	out = append(out, doc[:start]...)
	out = append(out, gen...)
	return append(out, doc[end:]...), nil
}

// valueSpan returns the byte offsets [start, end) of the JSON value reached
// from the top-level object by the object keys of path.
func valueSpan(doc []byte, path ...string) (start, end int, err error) {
	dec := json.NewDecoder(bytes.NewReader(doc))
	if err := openObject(dec); err != nil {
		return 0, 0, err
	}
	for depth := 0; ; {
		tok, err := dec.Token()
		if err != nil {
			return 0, 0, err
		}
		key, ok := tok.(string)
		if !ok { // the object at this depth ended
			return 0, 0, fmt.Errorf("no %s", strings.Join(path[:depth+1], "."))
		}
		if key != path[depth] {
			if err := skipValue(dec); err != nil {
				return 0, 0, err
			}
			continue
		}
		if depth < len(path)-1 {
			if err := openObject(dec); err != nil {
				return 0, 0, fmt.Errorf("%s: %w", strings.Join(path[:depth+1], "."), err)
			}
			depth++
			continue
		}
		start = int(dec.InputOffset()) // just after the key
		for start < len(doc) && strings.IndexByte(": \t\r\n", doc[start]) >= 0 {
			start++
		}
		if err := skipValue(dec); err != nil {
			return 0, 0, err
		}
		return start, int(dec.InputOffset()), nil
	}
}

// openObject reads the '{' that must come next.
func openObject(dec *json.Decoder) error {
	tok, err := dec.Token()
	if err != nil {
		return err
	}
	if tok != json.Delim('{') {
		return fmt.Errorf("not an object")
	}
	return nil
}

// skipValue reads one whole value.
func skipValue(dec *json.Decoder) error {
	for depth := 0; ; {
		tok, err := dec.Token()
		if err != nil {
			return err
		}
		switch tok {
		case json.Delim('{'), json.Delim('['):
			depth++
		case json.Delim('}'), json.Delim(']'):
			depth--
		}
		if depth == 0 {
			return nil
		}
	}
}
