package handlers

import (
	"strings"
	"sync"

	"github.com/hashicorp/golang-lru/v2/simplelru"
)

// answers keeps the whole answers of calculation GETs, so that a request
// made again (a workbook recalculating its web queries, a tool refreshing
// a schedule of joints) is written from memory instead of being computed
// again.
//
// That is sound because the answer to a GET is a function of the
// calculation, the query as sent (auth has removed api_key) and the
// service and materials versions, which are fixed for the life of the
// process; the ETag rests on the same fact (cache.go). Only complete 200
// answers are kept, never a problem or an on_error=inline "#ERROR:"
// answer. What a caller gets is the same bytes either way; the request
// is still logged, counted in the metrics and given its own request id.
//
// The memory is bounded: the entries held, as counted (keys, bodies and
// entryOverhead each), never exceed max bytes (the least recently used
// answers go first), and an answer larger than max/64 is not kept.
type answers struct {
	mu   sync.Mutex
	lru  *simplelru.LRU[answerKey, answer]
	held int64 // bytes held as counted: keys, bodies and entryOverhead each
	max  int64
	// evicted counts the answers dropped to make room, for the metrics.
	evicted int64
}

// answerKey is what decides an answer: the calculation and its query.
type answerKey struct {
	calculation, query string
}

type answer struct {
	contentType string
	body        []byte
}

// The Cache-Status header (RFC 9211) of a calculation GET, when the
// service keeps answers: written from the cache, or computed and then
// kept or not (too large). As in cache.go, the header map is only ever
// given these values, never changed in place.
var (
	cacheStatusHit    = []string{"thermal-movement; hit"}
	cacheStatusStored = []string{"thermal-movement; fwd=uri-miss; stored"}
	cacheStatusMiss   = []string{"thermal-movement; fwd=uri-miss"}
)

// newAnswers returns a cache of at most max bytes, or nil (no cache)
// when max is zero or negative.
func newAnswers(max int64) *answers {
	if max <= 0 {
		return nil
	}
	a := &answers{max: max}
	entries := max / entryOverhead // no entry takes less
	if entries < 1 {
		entries = 1
	}
	// NewLRU fails only for a size below 1.
	a.lru, _ = simplelru.NewLRU(int(min(entries, 1<<24)), func(k answerKey, v answer) {
		a.held -= k.size(v)
		a.evicted++
	})
	return a
}

// entryOverhead is what an entry costs beyond its strings and body: the
// list element (128 bytes in golang-lru v2), the map slot, the headers of
// the strings and the slice, and the rounding of the allocations. 256
// bytes holds for the smallest answers (a bare number of format=text,
// which takes about 300 bytes of heap in all) and is a little generous for
// the larger ones, so that the heap the cache takes stays near max.
const entryOverhead = 256

// size is the memory an entry takes, as the cache counts it.
func (k answerKey) size(v answer) int64 {
	return entryOverhead + int64(len(k.calculation)+len(k.query)+len(v.contentType)+len(v.body))
}

// bytes is the memory held as counted, for the metrics.
func (a *answers) bytes() float64 { return a.read(func() int64 { return a.held }) }

// evictions is the number of answers dropped to make room, for the
// metrics.
func (a *answers) evictions() float64 { return a.read(func() int64 { return a.evicted }) }

// read returns a figure of the cache under its lock; 0 with no cache.
func (a *answers) read(figure func() int64) float64 {
	if a == nil {
		return 0
	}
	a.mu.Lock()
	defer a.mu.Unlock()
	return float64(figure())
}

// get returns the answer kept for k, if any. A nil cache holds nothing.
func (a *answers) get(k answerKey) (answer, bool) {
	if a == nil {
		return answer{}, false
	}
	a.mu.Lock()
	v, ok := a.lru.Get(k)
	a.mu.Unlock()
	return v, ok
}

// put keeps a copy of body as the answer to k and reports whether it was
// kept: it is not when it would take more than a 64th of the cache.
func (a *answers) put(k answerKey, contentType string, body []byte) bool {
	if a == nil {
		return false
	}
	v := answer{contentType: contentType}
	if k.size(v)+int64(len(body)) > a.max/64 {
		// So that one answer cannot take a large share of the cache.
		return false
	}
	// The key's strings belong to the request (the query is a slice of
	// the request's URL); the cache keeps copies of its own.
	k = answerKey{calculation: k.calculation, query: strings.Clone(k.query)}
	v.body = append([]byte(nil), body...)
	n := k.size(v)
	a.mu.Lock()
	defer a.mu.Unlock()
	if a.lru.Contains(k) {
		return true // another request kept the same answer first
	}
	a.lru.Add(k, v)
	a.held += n
	for a.held > a.max {
		a.lru.RemoveOldest()
	}
	return true
}
