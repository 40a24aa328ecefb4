package handlers

import (
	"errors"
	"net/http"
	"strconv"
	"strings"
)

// errKind is one of the few kinds of failure a request can meet; each
// maps to one HTTP status and one problem type, here and nowhere else.
type errKind int

const (
	errInvalid       errKind = iota // the request cannot be read
	errNotFound                     // unknown route or material
	errMethod                       // wrong method
	errTooLarge                     // body over the limit
	errURITooLong                   // request URI over the limit
	errMediaType                    // wrong content type
	errUnprocessable                // read, but not computable
	errUnauthorized                 // missing or wrong API key
	errOverloaded                   // too many requests in flight
	errInternal                     // a defect; never expected
)

var kindInfo = map[errKind]struct {
	status int
	slug   string
	title  string
}{
	errInvalid:       {http.StatusBadRequest, "invalid-input", "The request cannot be read"},
	errNotFound:      {http.StatusNotFound, "not-found", "Not found"},
	errMethod:        {http.StatusMethodNotAllowed, "method-not-allowed", "Method not allowed"},
	errTooLarge:      {http.StatusRequestEntityTooLarge, "too-large", "Request too large"},
	errURITooLong:    {http.StatusRequestURITooLong, "uri-too-long", "Request URI too long"},
	errMediaType:     {http.StatusUnsupportedMediaType, "unsupported-media-type", "Unsupported content type"},
	errUnprocessable: {http.StatusUnprocessableEntity, "not-computable", "The inputs cannot be computed"},
	errUnauthorized:  {http.StatusUnauthorized, "unauthorized", "Unauthorized"},
	errOverloaded:    {http.StatusServiceUnavailable, "overloaded", "Service busy"},
	errInternal:      {http.StatusInternalServerError, "internal", "Internal error"},
}

// ProblemTypeBase prefixes every problem type; the types are relative
// URI references (RFC 9457 3.1.1) served by this service under /problems/.
const ProblemTypeBase = "/problems/"

// Problem is an RFC 9457 problem details object, with the list of every
// bad parameter.
type Problem struct {
	Type      string       `json:"type" example:"/problems/invalid-input" validate:"required"`
	Title     string       `json:"title" example:"The request cannot be read" validate:"required"`
	Status    int          `json:"status" example:"400" validate:"required"`
	Detail    string       `json:"detail" example:"invalid parameter \"length\": unknown unit \"mtr\" in \"30 mtr\"" validate:"required"`
	Instance  string       `json:"instance,omitempty" example:"/v1/expansion/linear"`
	RequestID string       `json:"request_id,omitempty"`
	Errors    []FieldError `json:"errors,omitempty"`
}

// FieldError names one bad parameter and what is wrong with it.
type FieldError struct {
	Parameter string `json:"parameter" example:"length" validate:"required"`
	Detail    string `json:"detail" example:"unknown unit \"mtr\" in \"30 mtr\""`
}

// apiError is the error every handler returns; the wrapper turns it into
// a Problem.
type apiError struct {
	kind   errKind
	detail string
	fields []FieldError
}

func (e *apiError) Error() string { return e.detail }

func newError(k errKind, detail string, fields ...FieldError) *apiError {
	return &apiError{kind: k, detail: detail, fields: fields}
}

// fieldsError builds one error from the bad fields found, with the most
// basic kind among them deciding the status: unreadable before unknown
// material before not computable.
func fieldsError(groups map[errKind][]FieldError) error {
	for _, k := range []errKind{errInvalid, errNotFound, errUnprocessable} {
		fs := groups[k]
		if len(fs) == 0 {
			continue
		}
		var all []FieldError
		for _, k2 := range []errKind{errInvalid, errNotFound, errUnprocessable} {
			all = append(all, groups[k2]...)
		}
		return &apiError{kind: k, detail: joinFields(all), fields: all}
	}
	return nil
}

// maxListed bounds the bad fields a problem lists: a body of thousands of
// bad members gets the first of them and a count, not a megabyte.
const maxListed = 50

// joinFields is the detail of a problem that names the bad fields fs.
func joinFields(fs []FieldError) string {
	parts := make([]string, 0, min(len(fs), maxListed)+1)
	for _, f := range fs[:min(len(fs), maxListed)] {
		parts = append(parts, "invalid parameter \""+f.Parameter+"\": "+f.Detail)
	}
	if len(fs) > maxListed {
		parts = append(parts, "and "+strconv.Itoa(len(fs)-maxListed)+" more not listed")
	}
	return strings.Join(parts, "; ")
}

// problemOf converts any error into the problem to send.
func problemOf(err error, instance string) Problem {
	var ae *apiError
	if !errors.As(err, &ae) {
		ae = newError(errInternal, "the service met an unexpected condition; the request id identifies it in the logs")
	}
	info := kindInfo[ae.kind]
	return Problem{
		Type:     ProblemTypeBase + info.slug,
		Title:    info.title,
		Status:   info.status,
		Detail:   ae.detail,
		Instance: instance,
		Errors:   ae.fields[:min(len(ae.fields), maxListed)],
	}
}
