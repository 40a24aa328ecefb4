package units

import (
	"strings"
	"sync"
	"testing"
)

// A Cache must answer as Parse does, and stay bounded, in entries and in
// bytes, whatever callers send, from any number of goroutines. (A
// property of this package, checked against its own parser: no
// published source.)
func TestCache(t *testing.T) {
	var c Cache
	for _, in := range []string{"30 m", "12 mm", "12e-6/K", "12 um/(m*K)", "20 degC", "68 degF", "293.15 K", "205 N/mm2", "6.5e-6 in/(in*degF)"} {
		want, err := Parse(in)
		if err != nil {
			t.Fatalf("%q: %v", in, err)
		}
		for i := range 2 { // the first call fills the cache, the second reads it
			got, err := c.Parse(in)
			if err != nil || got != want {
				t.Errorf("%q call %d: got %+v, %v; want %+v", in, i+1, got, err, want)
			}
		}
	}

	// Failures are not remembered: each keeps the message of its input.
	for _, src := range []string{"3 parsecs", "4 parsecs"} {
		_, err := c.Parse(src)
		if err == nil || !strings.Contains(err.Error(), src) {
			t.Errorf("%q: error %v does not quote the input", src, err)
		}
	}

	// A long expression is parsed but not kept: 1 MiB of spaces between
	// m and /K must not stay in memory.
	long := "1 m" + strings.Repeat(" ", 1<<20) + "/K"
	if q, err := c.Parse(long); err != nil || q.Unit.Dim != (Dim{L: 1, Theta: -1}) {
		t.Fatalf("long spelling: %+v, %v", q, err)
	}
	c.m.Range(func(k, _ any) bool {
		if len(k.(string)) > maxCachedLen {
			t.Errorf("the cache keeps an expression of %d bytes", len(k.(string)))
		}
		return true
	})

	// Some 3,000 distinct short spellings ("m/K", "m /K", "mm / K", ...),
	// from 8 goroutines at once, fill it to its bound and no further, and
	// are still parsed right.
	var wg sync.WaitGroup
	for _, base := range []string{"m", "mm", "cm", "km", "um", "in", "ft", "yd"} {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range 27 {
				for j := range 27 - i {
					expr := base + strings.Repeat(" ", i) + "/" + strings.Repeat(" ", j) + "K"
					want, _ := ParseUnit(expr)
					u, err := c.ParseUnit(expr)
					if err != nil || u != want || u.Dim != (Dim{L: 1, Theta: -1}) {
						t.Errorf("%q: got %+v, %v; want %+v", expr, u, err, want)
						return
					}
				}
			}
		}()
	}
	wg.Wait()
	stored := 0
	c.m.Range(func(_, _ any) bool { stored++; return true })
	if stored != maxCached || c.n.Load() > maxCached {
		t.Errorf("cache holds %d expressions (counter %d), want its bound %d", stored, c.n.Load(), maxCached)
	}
}

// A message quotes an oversized input shortened, with its length (common
// practice, no published source).
func TestQuoteShortensLongInputs(t *testing.T) {
	long := strings.Repeat("4", 7000) + " mtr"
	_, err := Parse(long)
	if err == nil {
		t.Fatal("no error")
	}
	if msg := err.Error(); len(msg) > 300 || !strings.Contains(msg, "(7004 bytes)") {
		t.Errorf("message of %d bytes: %.200s", len(msg), msg)
	}
	if got := Quote("30 µm"); got != `"30 µm"` {
		t.Errorf("Quote(short) = %s", got)
	}
	// The cut never splits a rune: 79 ASCII bytes, then µ (2 bytes).
	if got := Quote(strings.Repeat("a", 79) + "µµ"); !strings.HasPrefix(got, `"`+strings.Repeat("a", 79)+`"...`) {
		t.Errorf("quote cut inside a rune: %s", got)
	}
}

func TestNilCacheParses(t *testing.T) {
	var c *Cache
	if q, err := c.Parse("30 m"); err != nil || q.Value != 30 || q.Unit.Factor != 1 {
		t.Errorf("nil Cache: %+v, %v", q, err)
	}
}
