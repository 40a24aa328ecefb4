package units

import (
	"strings"
	"testing"
)

// The memo of parsed units must answer as the parser does, and stay
// bounded whatever callers send. (A property of this package, checked
// against its own parser: no published source.)
func TestParsedUnitsMemo(t *testing.T) {
	for _, expr := range []string{"m", "mm", "1/K", "um/(m*K)", "degC", "degF", "K", "N/mm2", "in/(in*degF)"} {
		want, err := parseUnitExpr(expr, expr)
		if err != nil {
			t.Fatalf("%q: %v", expr, err)
		}
		for i := range 2 { // the first call fills the memo, the second reads it
			got, err := parseUnit(expr, expr)
			if err != nil || got != want {
				t.Errorf("%q call %d: got %+v, %v; want %+v", expr, i+1, got, err, want)
			}
		}
	}

	// Failures are not remembered: each keeps the message of its input.
	for _, src := range []string{"3 parsecs", "4 parsecs"} {
		_, err := parseUnit("parsecs", src)
		if err == nil || !strings.Contains(err.Error(), src) {
			t.Errorf("%q: error %v does not quote the input", src, err)
		}
	}

	// Distinct spellings of one unit ("m/K", "m /K", "m  /K", ...) fill
	// the memo to its bound and no further, and are still parsed right.
	for i := range 2 * maxParsedUnits {
		expr := "m" + strings.Repeat(" ", i) + "/K"
		u, err := parseUnit(expr, expr)
		if err != nil || u.Dim != (Dim{L: 1, Theta: -1}) || u.Factor != 1 || u.Symbol != expr {
			t.Fatalf("%q: got %+v, %v", expr, u, err)
		}
	}
	if n := parsedUnits.n.Load(); n > maxParsedUnits {
		t.Errorf("memo holds %d expressions, bound %d", n, maxParsedUnits)
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
	if got := quote("30 µm"); got != `"30 µm"` {
		t.Errorf("quote(short) = %s", got)
	}
	// The cut never splits a rune: 79 ASCII bytes, then µ (2 bytes).
	if got := quote(strings.Repeat("a", 79) + "µµ"); !strings.HasPrefix(got, `"`+strings.Repeat("a", 79)+`"...`) {
		t.Errorf("quote cut inside a rune: %s", got)
	}
}
