package handlers

import (
	"net/http"
	"strings"

	"github.com/gin-gonic/gin"
	swaggerFiles "github.com/swaggo/files"
	ginSwagger "github.com/swaggo/gin-swagger"

	"github.com/thermalmovement/service/api"
)

// Status is the body of the health and readiness answers.
type Status struct {
	Status string `json:"status" example:"ok"`
}

// healthz godoc
//
//	@Summary		Liveness
//	@Description	200 while the process is alive.
//	@Tags			service
//	@Produce		json
//	@Success		200	{object}	Status
//	@Router			/healthz [get]
func (h *Handler) healthz(c *gin.Context) {
	sendJSON(c, http.StatusOK, Status{Status: "ok"})
}

// readyz godoc
//
//	@Summary		Readiness
//	@Description	200 while the service takes requests; 503 from the moment it is told to stop (SIGTERM), while it drains.
//	@Tags			service
//	@Produce		json
//	@Success		200	{object}	Status
//	@Failure		503	{object}	Status
//	@Router			/readyz [get]
func (h *Handler) readyz(c *gin.Context) {
	if !h.ready.Load() {
		sendJSON(c, http.StatusServiceUnavailable, Status{Status: "draining"})
		return
	}
	sendJSON(c, http.StatusOK, Status{Status: "ready"})
}

// openapi godoc
//
//	@Summary		This API's OpenAPI 3.0 description
//	@Tags			service
//	@Produce		application/yaml
//	@Success		200	{string}	string	"api/openapi.yaml"
//	@Router			/openapi.yaml [get]
func (h *Handler) openapi(c *gin.Context) {
	send(c, http.StatusOK, yamlContentType, api.Spec)
}

// docsRedirect godoc
//
//	@Summary		Interactive API page
//	@Description	Redirects to /docs/index.html, an interactive page over /openapi.yaml.
//	@Tags			service
//	@Success		301
//	@Router			/docs [get]
func (h *Handler) docsRedirect(c *gin.Context) {
	c.Redirect(http.StatusMovedPermanently, "/docs/index.html")
}

var docsHandler = ginSwagger.WrapHandler(swaggerFiles.Handler, ginSwagger.URL("/openapi.yaml"), ginSwagger.DocExpansion("none"))

// docs godoc
//
//	@Summary		Interactive API page and its assets
//	@Tags			service
//	@Produce		html
//	@Param			any	path		string	true	"index.html or an asset of the page"
//	@Success		200	{string}	string	"the page"
//	@Success		301	"for / and /doc.json: to /docs/index.html"
//	@Failure		404	{object}	Problem
//	@Router			/docs/{any} [get]
func (h *Handler) docs(c *gin.Context) {
	if c.Param("any") == "/doc.json" || c.Param("any") == "/" {
		c.Redirect(http.StatusMovedPermanently, "/docs/index.html")
		return
	}
	docsHandler(c)
	if c.Writer.Status() == http.StatusNotFound && !c.Writer.Written() {
		h.problem(c, nil, newError(errNotFound, "no such page under /docs"))
	}
}

// problemTypes describes each problem type, served at /problems/{type}.
var problemTypes = map[string]string{
	"invalid-input":          "400: the request cannot be read: a bad number, NaN or Inf, an unknown unit, a wrong dimension, a missing or unknown parameter, malformed JSON. The errors list names every bad parameter.",
	"not-found":              "404: unknown route or material id.",
	"method-not-allowed":     "405: the route exists but not for this method; the Allow header lists the methods.",
	"too-large":              "413: the body, or a batch's rows, are over the limit.",
	"uri-too-long":           "414: the request URI is over the limit (8 KiB by default); send long inputs as a POST JSON body.",
	"unsupported-media-type": "415: a POST body must be application/json (text/csv for batches), UTF-8 and uncompressed (no Content-Encoding but identity).",
	"not-computable":         "422: the inputs were read but cannot be computed: a negative length, a temperature below 0 K or outside the data's range, contradictory inputs.",
	"unauthorized":           "401: this deployment requires an API key.",
	"overloaded":             "503: too many requests in flight; retry after the Retry-After delay.",
	"internal":               "500: a defect in the service; the request id identifies it in the logs.",
}

// problemType godoc
//
//	@Summary		What a problem type means
//	@Tags			service
//	@Produce		plain
//	@Param			type	path		string	true	"problem type, e.g. invalid-input"
//	@Success		200		{string}	string	"description"
//	@Failure		404		{object}	Problem
//	@Router			/problems/{type} [get]
func (h *Handler) problemType(c *gin.Context) {
	d, ok := problemTypes[c.Param("type")]
	if !ok {
		h.problem(c, nil, newError(errNotFound, "no such problem type"))
		return
	}
	send(c, http.StatusOK, contentTypes["text"], []byte(strings.TrimSpace(d)+"\n"))
}

// metricsDoc godoc
//
//	@Summary		Prometheus metrics
//	@Description	Text exposition format. Served here unless the deployment moves metrics to --metrics-addr.
//	@Tags			service
//	@Produce		plain
//	@Success		200	{string}	string	"metrics"
//	@Router			/metrics [get]
func metricsDoc() {}
