package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
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
