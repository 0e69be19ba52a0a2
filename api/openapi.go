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

// openAPIDocument returns doc with components.schemas.Model generated from
// the registry: the enum of model names, the default and a description
// that lists each model's summary. So a model added to the registry is in
// the served document without editing it.
func openAPIDocument(doc []byte, models *fit.Registry) ([]byte, error) {
	var root map[string]any
	dec := json.NewDecoder(bytes.NewReader(doc))
	dec.UseNumber() // numbers pass through as written
	if err := dec.Decode(&root); err != nil {
		return nil, fmt.Errorf("openapi.json: %w", err)
	}
	components, _ := root["components"].(map[string]any)
	schemas, _ := components["schemas"].(map[string]any)
	if schemas == nil {
		return nil, fmt.Errorf("openapi.json: no components.schemas")
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
	schemas["Model"] = map[string]any{"type": "string", "enum": names, "default": models.Default(),
		"description": desc.String()}
	var out bytes.Buffer
	enc := json.NewEncoder(&out)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", " ")
	if err := enc.Encode(root); err != nil {
		return nil, fmt.Errorf("openapi.json: %w", err)
	}
	return out.Bytes(), nil
}
