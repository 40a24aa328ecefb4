package handlers

import (
	"bytes"
	"encoding/json"
	"errors"
	"io"
	"math"
	"mime"
	"net/http"
	"net/url"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"
)

// raw is one request parameter before it is interpreted: a string (from
// a query or a JSON string), a JSON number, a JSON boolean, or the JSON
// object form of a quantity {"value": 30, "unit": "m"}.
type raw struct {
	kind   rawKind
	str    string
	num    float64
	b      bool
	unit   string // object form
	origin string // the text as sent, for messages
}

type rawKind int

const (
	rawString rawKind = iota
	rawNumber
	rawBool
	rawObject
)

// readQuery reads the parameters of a raw query string, as sent: pairs
// separated by "&", each name=value percent-encoded with "+" for a space.
// A parameter given twice, bad percent-encoding and invalid UTF-8 are
// errors naming the parameter. Empty pairs ("a=1&&b=2") are skipped.
func readQuery(query string, into map[string]raw) []FieldError {
	var errs []FieldError
	for query != "" {
		var pair string
		pair, query, _ = strings.Cut(query, "&")
		if pair == "" {
			continue
		}
		ek, ev, _ := strings.Cut(pair, "=")
		k, err := url.QueryUnescape(ek)
		if err != nil {
			errs = append(errs, FieldError{Parameter: strconv.QuoteToASCII(ek), Detail: "parameter name is not valid percent-encoding"})
			continue
		}
		if !utf8.ValidString(k) {
			errs = append(errs, FieldError{Parameter: strconv.QuoteToASCII(k), Detail: "parameter name is not valid UTF-8"})
			continue
		}
		v, err := url.QueryUnescape(ev)
		switch {
		case err != nil:
			errs = append(errs, FieldError{Parameter: k, Detail: "value is not valid percent-encoding"})
			continue
		case !utf8.ValidString(v):
			errs = append(errs, FieldError{Parameter: k, Detail: "value is not valid UTF-8"})
			continue
		}
		if _, dup := into[k]; dup {
			errs = append(errs, FieldError{Parameter: k, Detail: "given more than once"})
			continue
		}
		into[k] = raw{kind: rawString, str: v, origin: v}
	}
	return dedupe(errs)
}

// dedupe keeps the first error of each parameter, so that a name given
// three times is reported once.
func dedupe(errs []FieldError) []FieldError {
	out := errs[:0]
	for _, e := range errs {
		if !slices.ContainsFunc(out, func(o FieldError) bool { return o.Parameter == e.Parameter && o.Detail == e.Detail }) {
			out = append(out, e)
		}
	}
	return out
}

// errBody is a request body that cannot be read as the JSON object of a
// calculation.
type errBody struct {
	kind errKind
	msg  string
}

func (e *errBody) Error() string { return e.msg }

// readJSON reads the body of a POST: one JSON object whose members are
// strings, numbers, booleans or quantity objects. The content type must
// be application/json; the body is capped at limit bytes; duplicate keys,
// unknown members of quantity objects, nesting and trailing data are
// refused.
func readJSON(r *http.Request, limit int64, into map[string]raw) error {
	if err := checkJSONType(r.Header.Get("Content-Type")); err != nil {
		return err
	}
	body, err := io.ReadAll(http.MaxBytesReader(nil, r.Body, limit))
	if err != nil {
		var mbe *http.MaxBytesError
		if errors.As(err, &mbe) {
			return &errBody{errTooLarge, "request body over " + strconv.FormatInt(limit, 10) + " bytes"}
		}
		return &errBody{errInvalid, "request body cannot be read"}
	}
	return decodeObject(body, into)
}

func checkJSONType(ct string) error {
	if ct == "" {
		return &errBody{errMediaType, "Content-Type must be application/json"}
	}
	mt, params, err := mime.ParseMediaType(ct)
	if err != nil || mt != "application/json" {
		return &errBody{errMediaType, "Content-Type must be application/json, not " + strconv.Quote(ct)}
	}
	if cs, ok := params["charset"]; ok && !strings.EqualFold(cs, "utf-8") {
		return &errBody{errMediaType, "JSON must be UTF-8, not " + strconv.Quote(cs)}
	}
	return nil
}

// decodeObject decodes one JSON object into raw parameters.
func decodeObject(body []byte, into map[string]raw) error {
	if !utf8.Valid(body) {
		return &errBody{errInvalid, "request body is not valid UTF-8"}
	}
	if len(bytes.TrimSpace(body)) == 0 {
		return &errBody{errInvalid, "request body is empty; send a JSON object such as {\"length\": \"30 m\"}"}
	}
	dec := json.NewDecoder(bytes.NewReader(body))
	dec.UseNumber()
	if err := decodeMembers(dec, into); err != nil {
		return err
	}
	if _, err := dec.Token(); err != io.EOF {
		return &errBody{errInvalid, "malformed JSON: data after the object"}
	}
	return nil
}

func decodeMembers(dec *json.Decoder, into map[string]raw) error {
	bad := func(msg string) error { return &errBody{errInvalid, "malformed JSON: " + msg} }
	t, err := dec.Token()
	if err != nil {
		return bad(jsonMessage(err))
	}
	if d, ok := t.(json.Delim); !ok || d != '{' {
		return &errBody{errInvalid, "the body must be a JSON object of parameters"}
	}
	for dec.More() {
		kt, err := dec.Token()
		if err != nil {
			return bad(jsonMessage(err))
		}
		key := kt.(string)
		if _, dup := into[key]; dup {
			return &errBody{errInvalid, "parameter " + strconv.Quote(key) + " given more than once"}
		}
		v, err := decodeValue(dec, key)
		if err != nil {
			return err
		}
		into[key] = v
	}
	if _, err := dec.Token(); err != nil {
		return bad(jsonMessage(err))
	}
	return nil
}

func decodeValue(dec *json.Decoder, key string) (raw, error) {
	bad := func(msg string) error { return &errBody{errInvalid, "parameter " + strconv.Quote(key) + ": " + msg} }
	t, err := dec.Token()
	if err != nil {
		return raw{}, &errBody{errInvalid, "malformed JSON: " + jsonMessage(err)}
	}
	switch v := t.(type) {
	case string:
		return raw{kind: rawString, str: v, origin: v}, nil
	case json.Number:
		f, err := strconv.ParseFloat(string(v), 64)
		if err != nil || math.IsInf(f, 0) {
			return raw{}, bad("number " + string(v) + " out of range")
		}
		return raw{kind: rawNumber, num: f, origin: string(v)}, nil
	case bool:
		return raw{kind: rawBool, b: v, origin: strconv.FormatBool(v)}, nil
	case nil:
		return raw{}, bad("null is not a value; leave the parameter out")
	case json.Delim:
		if v != '{' {
			return raw{}, bad("an array is not a value; give a string such as \"30 m\" or an object {\"value\": 30, \"unit\": \"m\"}")
		}
		return decodeQuantityObject(dec, key)
	}
	return raw{}, bad("unexpected JSON")
}

// decodeQuantityObject reads the rest of {"value": <number>, "unit": <string>}.
func decodeQuantityObject(dec *json.Decoder, key string) (raw, error) {
	bad := func(msg string) error {
		return &errBody{errInvalid, "parameter " + strconv.Quote(key) + ": " + msg + "; write {\"value\": 30, \"unit\": \"m\"}"}
	}
	r := raw{kind: rawObject}
	var haveValue, haveUnit bool
	for dec.More() {
		kt, err := dec.Token()
		if err != nil {
			return raw{}, &errBody{errInvalid, "malformed JSON: " + jsonMessage(err)}
		}
		t, err := dec.Token()
		if err != nil {
			return raw{}, &errBody{errInvalid, "malformed JSON: " + jsonMessage(err)}
		}
		switch kt.(string) {
		case "value":
			n, ok := t.(json.Number)
			if !ok || haveValue {
				return raw{}, bad("\"value\" must be one number")
			}
			f, err := strconv.ParseFloat(string(n), 64)
			if err != nil || math.IsInf(f, 0) {
				return raw{}, bad("number " + string(n) + " out of range")
			}
			r.num, haveValue = f, true
			r.origin = string(n) + r.origin
		case "unit":
			s, ok := t.(string)
			if !ok || haveUnit {
				return raw{}, bad("\"unit\" must be one string")
			}
			r.unit, haveUnit = s, true
			r.origin += " " + s
		default:
			return raw{}, bad("unknown member " + strconv.Quote(kt.(string)))
		}
	}
	if _, err := dec.Token(); err != nil {
		return raw{}, &errBody{errInvalid, "malformed JSON: " + jsonMessage(err)}
	}
	if !haveValue || !haveUnit {
		return raw{}, bad("a quantity object needs both \"value\" and \"unit\"")
	}
	return r, nil
}

func jsonMessage(err error) string {
	if err == io.EOF || err == io.ErrUnexpectedEOF {
		return "unexpected end of input"
	}
	var se *json.SyntaxError
	if errors.As(err, &se) {
		return se.Error() + " at byte " + strconv.FormatInt(se.Offset, 10)
	}
	return err.Error()
}
