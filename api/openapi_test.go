package api

import (
	"bytes"
	"encoding/json"
	"reflect"
	"regexp"
	"slices"
	"sort"
	"strings"
	"testing"

	"sluice/db/dbtest"
	"sluice/fit"
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
		if !apiPath(r.Path) {
			continue // the dashboard's pages are not the API
		}
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

// The served document's Model schema comes from fit's registry: its enum is
// the registry's names in order and its default the registry's default,
// for the built-in registry and for any other.
func TestOpenAPIModelsFromRegistry(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	w := ts.do("GET", "/v1/openapi.json", "", "")
	if w.Code != 200 {
		t.Fatalf("GET /v1/openapi.json: %d", w.Code)
	}
	checkModelSchema(t, w.Body.Bytes(), fit.Builtin())

	one, err := fit.NewRegistry(fit.Hill5.Spec())
	if err != nil {
		t.Fatal(err)
	}
	doc, err := openAPIDocument(openAPIDoc, one)
	if err != nil {
		t.Fatal(err)
	}
	checkModelSchema(t, doc, one)
	// Apart from the Model schema, the served document is the file.
	var file, served map[string]any
	if err := json.Unmarshal(openAPIDoc, &file); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(w.Body.Bytes(), &served); err != nil {
		t.Fatal(err)
	}
	for _, d := range []map[string]any{file, served} {
		delete(d["components"].(map[string]any)["schemas"].(map[string]any), "Model")
	}
	if !reflect.DeepEqual(file, served) {
		t.Error("the served document differs from openapi.json beyond the Model schema")
	}
	// Byte for byte, too: the rest is served as written.
	start, end, err := valueSpan(openAPIDoc, "components", "schemas", "Model")
	if err != nil {
		t.Fatal(err)
	}
	body := w.Body.Bytes()
	if !bytes.HasPrefix(body, openAPIDoc[:start]) || !bytes.HasSuffix(body, openAPIDoc[end:]) {
		t.Error("the served document rewrites more than the Model schema")
	}
	// A document without the schema is an error, not a silent omission.
	if _, err := openAPIDocument([]byte(`{"components": {"schemas": {"Problem": {}}}}`), fit.Builtin()); err == nil {
		t.Error("a document without components.schemas.Model was accepted")
	}
}

func checkModelSchema(t *testing.T, doc []byte, models *fit.Registry) {
	t.Helper()
	var d struct {
		Components struct {
			Schemas struct {
				Model struct {
					Type        string   `json:"type"`
					Enum        []string `json:"enum"`
					Default     string   `json:"default"`
					Description string   `json:"description"`
				} `json:"Model"`
			} `json:"schemas"`
		} `json:"components"`
	}
	if err := json.Unmarshal(doc, &d); err != nil {
		t.Fatal(err)
	}
	m := d.Components.Schemas.Model
	var want []string
	for _, n := range models.Names() {
		want = append(want, string(n))
		if spec, _ := models.Lookup(n); !strings.Contains(m.Description, spec.Summary()) {
			t.Errorf("Model description %q lacks %s's summary", m.Description, n)
		}
	}
	if m.Type != "string" || !slices.Equal(m.Enum, want) || m.Default != string(models.Default()) {
		t.Errorf("Model schema %+v, want enum %v, default %s", m, want, models.Default())
	}
}
