package handlers

import (
	"bufio"
	"crypto/sha256"
	"crypto/subtle"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"net/http"
	"net/url"
	"strings"

	"github.com/gin-gonic/gin"
)

// APIKeys are the accepted API keys, kept as SHA-256 hashes with a label.
// The keys themselves are never held by the service. APIKeys is read-only
// after LoadAPIKeys and safe for concurrent use.
type APIKeys struct {
	hashes [][sha256.Size]byte
	labels []string
}

// maxKeysFileBytes bounds the keys file; a real one is a few kilobytes.
const maxKeysFileBytes = 1 << 20

// LoadAPIKeys reads a keys file: one key a line, the lowercase or
// uppercase hex SHA-256 of the key, then white space, then a label
// naming the client (the rest of the line). Blank lines and lines
// starting with # are skipped. A file without any key is an error: a
// deployment that asks for keys and accepts none is a mistake.
//
//	# sha256 of the key                                             label
//	9f86d081884c7d659a2feaa0c55ad015a3bf4f1b2b0b822cd15d6c15b0f00a08 structures-team (demo: the key "test")
//
// The hash of a key is `printf %s "$KEY" | sha256sum`.
func LoadAPIKeys(r io.Reader) (*APIKeys, error) {
	k := &APIKeys{}
	seen := map[[sha256.Size]byte]int{}
	sc := bufio.NewScanner(io.LimitReader(r, maxKeysFileBytes+1))
	n, size := 0, 0
	for sc.Scan() {
		n++
		size += len(sc.Bytes()) + 1
		if size > maxKeysFileBytes {
			return nil, fmt.Errorf("api keys: file over %d bytes", maxKeysFileBytes)
		}
		line := strings.TrimSpace(sc.Text())
		if line == "" || strings.HasPrefix(line, "#") {
			continue
		}
		hexHash, label, _ := strings.Cut(strings.ReplaceAll(line, "\t", " "), " ")
		label = strings.TrimSpace(label)
		var h [sha256.Size]byte
		if len(hexHash) != 2*sha256.Size {
			return nil, fmt.Errorf("api keys: line %d: want a SHA-256 hash of %d hex digits, then a label", n, 2*sha256.Size)
		}
		if _, err := hex.Decode(h[:], []byte(hexHash)); err != nil {
			return nil, fmt.Errorf("api keys: line %d: the hash is not hexadecimal", n)
		}
		if h == sha256.Sum256(nil) {
			return nil, fmt.Errorf("api keys: line %d: the hash of an empty key", n)
		}
		if label == "" {
			return nil, fmt.Errorf("api keys: line %d: a label naming the client must follow the hash", n)
		}
		if first, dup := seen[h]; dup {
			return nil, fmt.Errorf("api keys: line %d: the same hash as line %d", n, first)
		}
		seen[h] = n
		k.hashes = append(k.hashes, h)
		k.labels = append(k.labels, label)
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("api keys: %w", err)
	}
	if len(k.hashes) == 0 {
		return nil, errors.New("api keys: the file holds no key")
	}
	return k, nil
}

// Len returns the number of accepted keys; 0 for nil (no keys required).
func (k *APIKeys) Len() int {
	if k == nil {
		return 0
	}
	return len(k.hashes)
}

// match returns the label of the key, or false. It compares the key's
// hash with every stored hash in constant time and does not stop at the
// first match, so that the time taken tells nothing about the keys.
func (k *APIKeys) match(key string) (string, bool) {
	sum := sha256.Sum256([]byte(key))
	found := -1
	for i := range k.hashes {
		if subtle.ConstantTimeCompare(sum[:], k.hashes[i][:]) == 1 {
			found = i
		}
	}
	if found < 0 {
		return "", false
	}
	return k.labels[found], true
}

// apiKeyParam is the query parameter that carries a key for clients that
// cannot send headers (a spreadsheet's web-service function).
const apiKeyParam = "api_key"

// apiKeyLabelKey is where auth leaves the label of the accepted key.
const apiKeyLabelKey = "api_key_label"

// openRoutes are the route templates served without a key: liveness,
// readiness, metrics and the documentation. Every other route, and every
// unmatched path, needs a key when keys are set.
var openRoutes = map[string]bool{
	"/healthz":        true,
	"/readyz":         true,
	"/metrics":        true,
	"/openapi.yaml":   true,
	"/docs":           true,
	"/docs/*any":      true,
	"/problems/:type": true,
}

// auth checks the API key of requests when keys are set. The key comes
// from "Authorization: Bearer <key>" or the api_key query parameter; both
// are removed from the request before the handlers, the logs and the
// metrics see it. The answer to a missing key and to a wrong key is the
// same 401, so that it tells a caller nothing about the keys.
func (h *Handler) auth(c *gin.Context) {
	key, fromQuery, many := takeAPIKey(c.Request)
	if h.opts.APIKeys == nil || openRoutes[c.FullPath()] {
		c.Next()
		return
	}
	header := c.GetHeader("Authorization")
	c.Request.Header.Del("Authorization")
	if header != "" {
		scheme, token, _ := strings.Cut(header, " ")
		if !strings.EqualFold(scheme, "Bearer") || fromQuery {
			key, many = "", true
		} else {
			key = strings.TrimSpace(token)
		}
	}
	if label, ok := h.opts.APIKeys.match(key); ok && key != "" && !many {
		c.Set(apiKeyLabelKey, label)
		c.Next()
		return
	}
	c.Header("WWW-Authenticate", `Bearer realm="thermal-movement"`)
	h.problem(c, nil, newError(errUnauthorized, "this deployment needs an API key: send the header Authorization: Bearer <key>, or the api_key query parameter"))
}

// takeAPIKey removes the api_key parameter from the request's query (and
// from RequestURI) and returns its value; many is true when it was given
// more than once. The other parameters are left exactly as sent.
func takeAPIKey(r *http.Request) (key string, found, many bool) {
	q := r.URL.RawQuery
	if !mayHoldAPIKey(q) {
		return "", false, false
	}
	parts := strings.Split(q, "&")
	kept := parts[:0]
	for _, part := range parts {
		name, value, _ := strings.Cut(part, "=")
		if n, err := url.QueryUnescape(name); err != nil || n != apiKeyParam {
			kept = append(kept, part)
			continue
		}
		v, err := url.QueryUnescape(value)
		if err != nil {
			v = ""
		}
		many = many || found
		key, found = v, true
	}
	if !found {
		return "", false, false
	}
	r.URL.RawQuery = strings.Join(kept, "&")
	r.RequestURI = r.URL.RequestURI()
	return key, found, many
}

// mayHoldAPIKey reports whether a raw query may name api_key: spelled out,
// or in a name with escapes, which might decode to it. Most queries hold
// neither and are left alone after one pass over their bytes.
func mayHoldAPIKey(q string) bool {
	start, inName := 0, true // where the current name starts; whether i is in it
	for i := 0; i < len(q); i++ {
		switch c := q[i]; {
		case c == '&':
			if inName && q[start:i] == apiKeyParam {
				return true
			}
			start, inName = i+1, true
		case !inName:
		case c == '=':
			if q[start:i] == apiKeyParam {
				return true
			}
			inName = false
		case c == '%' || c == '+':
			return true
		}
	}
	return inName && q[start:] == apiKeyParam
}

// retryAfterSeconds is the Retry-After of a shed request.
const retryAfterSeconds = "1"

// unshedRoutes are served whatever the load: the probes must answer
// while the service is busy, or the kubelet restarts a healthy process,
// and the metrics show the load.
var unshedRoutes = map[string]bool{"/healthz": true, "/readyz": true, "/metrics": true}

// shed bounds the requests in flight to Options.MaxInFlight: beyond it a
// request is answered at once with 503 and Retry-After, instead of
// queueing until every caller times out. 0 means no bound.
func (h *Handler) shed(c *gin.Context) {
	max := int64(h.opts.MaxInFlight)
	if max <= 0 || unshedRoutes[c.FullPath()] {
		c.Next()
		return
	}
	n := &h.inFlight
	defer n.Add(-1)
	if n.Add(1) > max {
		c.Header("Retry-After", retryAfterSeconds)
		h.problem(c, nil, newError(errOverloaded, "the service is busy; retry after "+retryAfterSeconds+" s"))
		return
	}
	c.Next()
}
