package api

import (
	"encoding/json"
	"regexp"
	"sort"
	"strings"
	"testing"

	"sluice/db/dbtest"
)

// The OpenAPI document lists exactly the routes the router serves.
func TestOpenAPIMatchesRoutes(t *testing.T) {
	var doc struct {
		OpenAPI string                    `json:"openapi"`
		Paths   map[string]map[string]any `json:"paths"`
	}
	if err := json.Unmarshal(openAPIDoc, &doc); err != nil {
		t.Fatal(err)
	}
	if doc.OpenAPI != "3.1.0" {
		t.Errorf("openapi %q", doc.OpenAPI)
	}
	documented := map[string]bool{}
	for path, ops := range doc.Paths {
		for method := range ops {
			documented[strings.ToUpper(method)+" "+path] = true
		}
	}
	ts := newTestServer(t, dbtest.SQLite(t))
	param := regexp.MustCompile(`:([A-Za-z_]+)`)
	served := map[string]bool{}
	for _, r := range ts.srv.engine.Routes() {
		served[r.Method+" "+param.ReplaceAllString(r.Path, "{$1}")] = true
	}
	var missing, extra []string
	for k := range served {
		if !documented[k] {
			missing = append(missing, k)
		}
	}
	for k := range documented {
		if !served[k] {
			extra = append(extra, k)
		}
	}
	sort.Strings(missing)
	sort.Strings(extra)
	if len(missing) > 0 || len(extra) > 0 {
		t.Errorf("served but not documented: %v\ndocumented but not served: %v", missing, extra)
	}
	// Every $ref resolves.
	refs := regexp.MustCompile(`"\$ref":\s*"#/([^"]+)"`).FindAllStringSubmatch(string(openAPIDoc), -1)
	var all map[string]any
	json.Unmarshal(openAPIDoc, &all)
	for _, m := range refs {
		var node any = all
		for _, part := range strings.Split(m[1], "/") {
			obj, ok := node.(map[string]any)
			if !ok || obj[part] == nil {
				t.Errorf("$ref #/%s does not resolve", m[1])
				break
			}
			node = obj[part]
		}
	}
}
