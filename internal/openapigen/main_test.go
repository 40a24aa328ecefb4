package main

import (
	"bytes"
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/getkin/kin-openapi/openapi3"
)

// TestCommittedFileIsCurrent fails when api/openapi.yaml is stale: the
// annotations changed and `go generate ./api` was not run.
func TestCommittedFileIsCurrent(t *testing.T) {
	root := repoRoot()
	want, err := Generate(root)
	if err != nil {
		t.Fatal(err)
	}
	got, err := os.ReadFile(filepath.Join(root, "api", "openapi.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want) {
		t.Fatal("api/openapi.yaml is stale: run `go generate ./api` and commit the result")
	}
}

// TestGeneratedIsValidOpenAPI30 checks the document against the OpenAPI
// 3.0 rules as kin-openapi implements them.
func TestGeneratedIsValidOpenAPI30(t *testing.T) {
	data, err := Generate(repoRoot())
	if err != nil {
		t.Fatal(err)
	}
	doc, err := openapi3.NewLoader().LoadFromData(data)
	if err != nil {
		t.Fatal(err)
	}
	if err := doc.Validate(context.Background()); err != nil {
		t.Fatalf("invalid OpenAPI: %v", err)
	}
	if doc.OpenAPI != "3.0.3" {
		t.Errorf("openapi = %q, want 3.0.3", doc.OpenAPI)
	}
	post := doc.Paths.Find("/v1/expansion/linear").Post
	if post == nil || post.RequestBody == nil {
		t.Fatal("POST /v1/expansion/linear has no request body")
	}
	schema := post.RequestBody.Value.Content.Get("application/json").Schema.Value
	if _, ok := schema.Properties["length"]; !ok {
		t.Errorf("POST body schema lacks length: %v", schema.Properties)
	}
}

// miniDoc is the shape openapi2conv gives the annotations, cut down to
// one calculation that declares the output options, one that does not, a
// batch and a probe.
const miniDoc = `
openapi: 3.0.3
info: {title: t, version: "1"}
paths:
  /v1/expansion/linear:
    get: &linear
      parameters:
      - {in: query, name: length, required: true, schema: {type: string}}
      - {in: query, name: units, description: si (default) or us, schema: {type: string, enum: [si, us]}}
      - {in: query, name: format, schema: {type: string, enum: [json, text]}}
      - {in: query, name: result, description: "the result, from linear", schema: {type: string}}
      - {in: query, name: on_error, description: "inline, from linear", schema: {type: string, enum: [problem, inline]}}
      responses:
        "200": {description: OK}
        "400": {description: Bad Request, content: {application/json: {schema: {$ref: "#/components/schemas/handlers.Problem"}}}}
    post: *linear
  /v1/expansion/area:
    get: &area
      parameters:
      - {in: query, name: area, required: true, schema: {type: string}}
      - {in: query, name: units, description: si (default) or us, schema: {type: string, enum: [si, us]}}
      - {in: query, name: format, schema: {type: string, enum: [json, text]}}
      - {in: query, name: api_key, schema: {type: string}}
      responses:
        "200": {description: OK}
    post: *area
  /v1/batch/{calculation}:
    post:
      parameters:
      - {in: path, name: calculation, required: true, schema: {type: string}}
      - {in: query, name: format, schema: {type: string, enum: [csv, json]}}
      requestBody: {content: {application/json: {schema: {type: string}}, text/csv: {schema: {type: string}}}}
      responses:
        "200": {description: rows, content: {application/json: {schema: {type: string}}, text/csv: {schema: {type: string}}}}
        "413": {description: Request Entity Too Large, content: {application/json: {schema: {$ref: "#/components/schemas/handlers.Problem"}}}}
  /healthz:
    get:
      responses:
        "200": {description: OK}
components:
  schemas:
    handlers.Problem: {type: object, properties: {status: {type: integer}}}
  securitySchemes:
    bearer: {type: apiKey, in: header, name: Authorization}
`

// TestCompleteAddsWhatTheServiceDoes runs complete over miniDoc and checks
// what it adds beyond the annotations.
func TestCompleteAddsWhatTheServiceDoes(t *testing.T) {
	loader := openapi3.NewLoader()
	doc, err := loader.LoadFromData([]byte(miniDoc))
	if err != nil {
		t.Fatal(err)
	}
	// The YAML anchors share one operation between GET and POST; the
	// converter makes two.
	for _, p := range []string{"/v1/expansion/linear", "/v1/expansion/area"} {
		item := doc.Paths.Find(p)
		js, _ := json.Marshal(item.Get)
		var post openapi3.Operation
		if err := json.Unmarshal(js, &post); err != nil {
			t.Fatal(err)
		}
		item.Post = &post
	}
	complete(doc)
	js, err := json.Marshal(doc)
	if err != nil {
		t.Fatal(err)
	}
	doc, err = openapi3.NewLoader().LoadFromData(js)
	if err != nil {
		t.Fatal(err)
	}
	if err := doc.Validate(context.Background()); err != nil {
		t.Fatalf("invalid OpenAPI: %v", err)
	}

	area := doc.Paths.Find("/v1/expansion/area")
	for _, op := range []*openapi3.Operation{area.Get, area.Post} {
		var names []string
		for _, p := range op.Parameters {
			if p.Value.In == "query" {
				names = append(names, p.Value.Name)
			}
		}
		if got := strings.Join(names, ","); !strings.Contains(got, "units,format,result,on_error,api_key") {
			t.Errorf("area query parameters %s: want result and on_error after format", got)
		}
		if d := op.Parameters.GetByInAndName("query", "result").Description; d != "the result, from linear" {
			t.Errorf("area result: %q, want the words of /v1/expansion/linear", d)
		}
		units := op.Parameters.GetByInAndName("query", "units").Description
		if strings.Count(units, "<result>_unit") != 1 || !strings.HasPrefix(units, "si (default) or us") {
			t.Errorf("area units: %q, want the annotation's words and one <result>_unit sentence", units)
		}
		if !keyOptionalIn(op.Security) || op.Responses.Value("401") == nil || op.Responses.Value("503") == nil ||
			op.Responses.Value("405") == nil || op.Responses.Value("414") == nil {
			t.Errorf("area: security %v, responses %v", op.Security, op.Responses.Map())
		}
	}
	// The units sentence is added once, however often the step runs.
	op := area.Get
	describeUnits(op)
	if n := strings.Count(op.Parameters.GetByInAndName("query", "units").Description, unitsSentence); n != 1 {
		t.Errorf("units sentence %d times after a second run", n)
	}
	post := area.Post
	if post.Responses.Value("413") == nil || post.Responses.Value("415") == nil || area.Get.Responses.Value("413") != nil {
		t.Error("413 and 415 belong to POSTs, and only to them")
	}
	body := post.RequestBody.Value.Content.Get("application/json").Schema.Value
	for _, p := range []string{"area", "units", "format", "result", "on_error"} {
		if body.Properties[p] == nil {
			t.Errorf("area body lacks %s", p)
		}
	}
	if body.Properties["api_key"] != nil || post.Parameters.GetByInAndName("query", "api_key") == nil {
		t.Error("api_key stays in the query only")
	}
	if ap := body.AdditionalProperties.Schema; ap == nil || !ap.Value.Type.Is("string") {
		t.Error("area body: additionalProperties is not a string (for <result>_unit)")
	}
	if len(body.Required) != 1 || body.Required[0] != "area" {
		t.Errorf("area body required %v, want [area]: output options are optional", body.Required)
	}

	batch := doc.Paths.Find("/v1/batch/{calculation}").Post
	if batch.Parameters.GetByInAndName("query", "result") != nil || batch.Parameters.GetByInAndName("query", "on_error") != nil {
		t.Error("a batch refuses result and on_error; the document must not offer them")
	}
	if d := batch.Responses.Value("413").Value.Description; d == nil || *d == "Request Entity Too Large" {
		t.Error("a 413 that says only the status text gives way to the shared one")
	}
	ok := batch.Responses.Value("200").Value
	if ok.Headers["Trailer"] == nil || ok.Headers["Cache-Control"] == nil || !ok.Content.Get("application/json").Schema.Value.Type.Is("array") {
		t.Errorf("batch 200: headers %v, JSON schema %v", ok.Headers, ok.Content.Get("application/json").Schema.Value.Type)
	}
	if !batch.RequestBody.Value.Content.Get("application/json").Schema.Value.Type.Is("array") {
		t.Error("a batch's JSON body is an array")
	}

	probe := doc.Paths.Find("/healthz").Get
	if probe.Security != nil || probe.Responses.Value("401") != nil || probe.Responses.Value("503") != nil {
		t.Error("/healthz needs no key and is never shed")
	}
	if probe.Responses.Value("405") == nil || probe.Responses.Value("414") == nil {
		t.Error("/healthz: 405 and 414 apply to every operation")
	}
	if s := doc.Components.SecuritySchemes["bearer"].Value; s.Type != "http" || s.Scheme != "bearer" {
		t.Errorf("bearer scheme %+v", s)
	}
	if r := doc.Components.Responses["MethodNotAllowed"].Value; r.Headers["Allow"] == nil || r.Content.Get("application/problem+json") == nil {
		t.Error("405: problem+json with Allow")
	}
}

// keyOptionalIn reports whether s is exactly: bearer, or api_key, or none.
func keyOptionalIn(s *openapi3.SecurityRequirements) bool {
	if s == nil || len(*s) != 3 {
		return false
	}
	has := func(r openapi3.SecurityRequirement, name string) bool {
		_, ok := r[name]
		return len(r) == 1 && ok
	}
	return has((*s)[0], "bearer") && has((*s)[1], "api_key") && len((*s)[2]) == 0
}
