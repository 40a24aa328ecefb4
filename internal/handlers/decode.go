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
// a query or a JSON string), a JSON number, a JSON boolean, the JSON
// object form of a quantity {"value": 30, "unit": "m"}, or a value that
// could not be read at all.
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
	// rawInvalid holds the place of a parameter whose value could not be
	// read (bad percent-encoding, a JSON null, array or malformed quantity
	// object), whose fault is already recorded: the calculation then
	// neither asks for it as missing nor calls it unknown, and every
	// reader refuses it, so nothing is computed from it.
	rawInvalid
)

// readQuery reads the parameters of a raw query string, as sent: pairs
// separated by "&", each name=value percent-encoded with "+" for a space.
// A parameter given twice, bad percent-encoding and invalid UTF-8 are
// errors naming the parameter; every other pair is still read. A name
// given twice keeps its first value; a value that cannot be decoded is
// held by a rawInvalid placeholder. Empty pairs ("a=1&&b=2") are skipped.
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
		r := raw{kind: rawString}
		v, err := url.QueryUnescape(ev)
		switch {
		case err != nil:
			errs = append(errs, FieldError{Parameter: k, Detail: "value is not valid percent-encoding"})
			r.kind = rawInvalid
		case !utf8.ValidString(v):
			errs = append(errs, FieldError{Parameter: k, Detail: "value is not valid UTF-8"})
			r.kind = rawInvalid
		default:
			r.str, r.origin = v, v
		}
		if _, dup := into[k]; dup {
			errs = append(errs, FieldError{Parameter: k, Detail: givenTwice})
			continue
		}
		into[k] = r
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
// calculation at all: not JSON, not an object, too large, or of another
// content type. It names no parameter: a fault of one member's value is
// a FieldError instead, and the other members are still read.
type errBody struct {
	kind errKind
	msg  string
}

func (e *errBody) Error() string { return e.msg }

// errValue is a member of a body that is well formed JSON but not the
// value of a parameter: null, an array, a malformed quantity object, a
// number beyond float64. Its detail does not repeat the name.
type errValue struct {
	key, detail string
}

func (e *errValue) Error() string { return "parameter " + strconv.Quote(e.key) + ": " + e.detail }

// readJSON reads the body of a POST: one JSON object whose members are
// strings, numbers, booleans or quantity objects. The content type must
// be application/json and the body is capped at limit bytes; a body that
// is not one well formed JSON object (trailing data included) is an
// *errBody. Otherwise every member is read into into, and the faults of
// members are returned, one per member: a value that is not a parameter's
// (held by a rawInvalid placeholder) and a name given more than once (the
// first value is kept).
func readJSON(r *http.Request, limit int64, into map[string]raw) ([]FieldError, error) {
	if err := checkJSONType(r.Header.Get("Content-Type")); err != nil {
		return nil, err
	}
	if msg := unsupportedCoding(r.Header); msg != "" {
		return nil, &errBody{errMediaType, msg}
	}
	body, err := io.ReadAll(http.MaxBytesReader(nil, r.Body, limit))
	if err != nil {
		var mbe *http.MaxBytesError
		if errors.As(err, &mbe) {
			return nil, &errBody{errTooLarge, "request body over " + strconv.FormatInt(limit, 10) + " bytes"}
		}
		return nil, &errBody{errInvalid, "request body cannot be read"}
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

// givenTwice is the detail of a parameter or member sent more than once.
const givenTwice = "given more than once"

// unsupportedCoding describes a body sent with a content coding (gzip,
// deflate, ...): bodies are read as sent, so RFC 9110 15.5.16 asks for a
// 415. It returns "" for a body without one, or marked identity.
func unsupportedCoding(h http.Header) string {
	for _, v := range h.Values("Content-Encoding") {
		for _, c := range strings.Split(v, ",") {
			if c = strings.TrimSpace(c); c != "" && !strings.EqualFold(c, "identity") {
				return "Content-Encoding " + strconv.QuoteToASCII(c) + " is not accepted: send the body uncompressed"
			}
		}
	}
	return ""
}

// utf8BOM is the byte order mark some editors put before UTF-8 text.
const utf8BOM = "\xef\xbb\xbf"

// decodeObject decodes one JSON object into raw parameters, as readJSON.
func decodeObject(body []byte, into map[string]raw) ([]FieldError, error) {
	if !utf8.Valid(body) {
		return nil, &errBody{errInvalid, "request body is not valid UTF-8"}
	}
	if len(bytes.TrimSpace(body)) == 0 {
		return nil, &errBody{errInvalid, "request body is empty; send a JSON object such as {\"length\": \"30 m\"}"}
	}
	if bytes.HasPrefix(body, []byte(utf8BOM)) {
		return nil, &errBody{errInvalid, "malformed JSON: the body starts with a byte order mark; send the JSON object without one"}
	}
	dec := json.NewDecoder(bytes.NewReader(body))
	dec.UseNumber()
	errs, err := decodeMembers(dec, into, nil)
	if err != nil {
		return nil, err
	}
	if _, err := dec.Token(); err != io.EOF {
		return nil, &errBody{errInvalid, "malformed JSON: data after the object"}
	}
	return errs, nil
}

// decodeMembers reads the object of parameters, member by member. A
// member whose value is not a parameter's is a fault of that member, and
// reading goes on with the next; malformed JSON ends the reading.
// order, when not nil, receives the names in the order sent.
func decodeMembers(dec *json.Decoder, into map[string]raw, order *[]string) ([]FieldError, error) {
	t, err := dec.Token()
	if err != nil {
		return nil, malformed(err, "")
	}
	if d, ok := t.(json.Delim); !ok || d != '{' {
		return nil, &errBody{errInvalid, "the body must be a JSON object of parameters, such as {\"length\": \"30 m\"}, not " + jsonKind(t)}
	}
	var errs []FieldError
	for dec.More() {
		kt, err := dec.Token()
		if err != nil {
			return nil, malformed(err, "")
		}
		key := kt.(string) // the decoder allows only a string here
		v, err := decodeValue(dec, key)
		if err != nil {
			var ev *errValue
			if !errors.As(err, &ev) {
				return nil, err
			}
			errs = append(errs, FieldError{Parameter: key, Detail: ev.detail})
			v = raw{kind: rawInvalid}
		}
		if _, dup := into[key]; dup {
			errs = append(errs, FieldError{Parameter: key, Detail: givenTwice})
			continue
		}
		into[key] = v
		if order != nil {
			*order = append(*order, key)
		}
	}
	if _, err := dec.Token(); err != nil {
		return nil, malformed(err, "")
	}
	return dedupe(errs), nil
}

// decodeValue reads the value of the member key. A value that is well
// formed but not a parameter's is read to its end and refused with an
// *errValue, so that the caller can go on with the next member; malformed
// JSON is an *errBody.
func decodeValue(dec *json.Decoder, key string) (raw, error) {
	bad := func(detail string) error { return &errValue{key, detail} }
	t, err := dec.Token()
	if err != nil {
		return raw{}, malformed(err, key)
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
		if v == '{' {
			return decodeQuantityObject(dec, key)
		}
		if err := skip(dec, 1, key); err != nil {
			return raw{}, err
		}
		return raw{}, bad("an array is not a value; give a string such as \"30 m\" or an object {\"value\": 30, \"unit\": \"m\"}")
	}
	return raw{}, bad("unexpected JSON")
}

// decodeQuantityObject reads the rest of {"value": <number>, "unit": <string>}.
// The first fault found decides the message; the rest of the object is
// read through.
func decodeQuantityObject(dec *json.Decoder, key string) (raw, error) {
	bad := func(detail string) error {
		return &errValue{key, detail + "; write {\"value\": 30, \"unit\": \"m\"}"}
	}
	r := raw{kind: rawObject}
	var haveValue, haveUnit bool
	fault := ""
	for dec.More() {
		kt, err := dec.Token()
		if err != nil {
			return raw{}, malformed(err, key)
		}
		t, err := dec.Token()
		if err != nil {
			return raw{}, malformed(err, key)
		}
		if d, ok := t.(json.Delim); ok {
			// A nested object or array: never a quantity's member.
			if err := skip(dec, 1, key); err != nil {
				return raw{}, err
			}
			t = d
		}
		if fault != "" {
			continue
		}
		switch kt.(string) {
		case "value":
			n, ok := t.(json.Number)
			if !ok || haveValue {
				fault = "\"value\" must be one number"
				continue
			}
			f, err := strconv.ParseFloat(string(n), 64)
			if err != nil || math.IsInf(f, 0) {
				fault = "number " + string(n) + " out of range"
				continue
			}
			r.num, haveValue = f, true
			r.origin = string(n) + r.origin
		case "unit":
			s, ok := t.(string)
			if !ok || haveUnit {
				fault = "\"unit\" must be one string"
				continue
			}
			r.unit, haveUnit = s, true
			r.origin += " " + s
		default:
			fault = "unknown member " + strconv.Quote(kt.(string))
		}
	}
	if _, err := dec.Token(); err != nil {
		return raw{}, malformed(err, key)
	}
	switch {
	case fault != "":
		return raw{}, bad(fault)
	case !haveValue || !haveUnit:
		return raw{}, bad("a quantity object needs both \"value\" and \"unit\"")
	}
	return r, nil
}

// skip reads through the rest of a value whose depth opening delimiters
// have been read.
func skip(dec *json.Decoder, depth int, key string) error {
	for depth > 0 {
		t, err := dec.Token()
		if err != nil {
			return malformed(err, key)
		}
		switch t {
		case json.Delim('{'), json.Delim('['):
			depth++
		case json.Delim('}'), json.Delim(']'):
			depth--
		}
	}
	return nil
}

// malformed is the whole-body error of malformed JSON met in the value of
// the member key ("" outside any value).
func malformed(err error, key string) error {
	msg := "malformed JSON: " + jsonMessage(err)
	if key != "" {
		msg += ", in the value of " + strconv.Quote(key)
	}
	return &errBody{errInvalid, msg}
}

// jsonKind names the kind of JSON value that begins with token t.
func jsonKind(t json.Token) string {
	switch v := t.(type) {
	case json.Delim:
		if v == '[' {
			return "an array"
		}
		return "an object"
	case string:
		return "a string"
	case json.Number:
		return "a number"
	case bool:
		return "a boolean"
	case nil:
		return "null"
	}
	return "that"
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
