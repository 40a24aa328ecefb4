// Package api holds the service's OpenAPI description, api/openapi.yaml,
// generated from the swag annotations on the handlers by
// internal/openapigen (run `go generate ./...`), and embedded in the
// binary so that GET /openapi.yaml serves it.
package api

import _ "embed"

//go:generate go run ../internal/openapigen -out openapi.yaml

// Spec is the OpenAPI 3.0 document, as committed in api/openapi.yaml.
//
//go:embed openapi.yaml
var Spec []byte
