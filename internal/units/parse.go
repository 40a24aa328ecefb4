package units

import (
	"errors"
	"math"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"unicode/utf8"
)

// Errors reported by the parser, wrapped in *Error. Test them with errors.Is.
var (
	ErrSyntax      = errors.New("malformed")
	ErrNumber      = errors.New("not a finite decimal number")
	ErrNoUnit      = errors.New("missing unit")
	ErrUnknownUnit = errors.New("unknown unit")
	ErrDimension   = errors.New("wrong dimension")
	ErrBelowZero   = errors.New("below absolute zero")
)

// Error records a failed parse: what went wrong, in which input.
type Error struct {
	Input string // the text that was parsed
	Err   error  // one of the Err* sentinels
	Msg   string // the whole message, quoting the input
}

func (e *Error) Error() string { return e.Msg }

// Unwrap returns the sentinel, for errors.Is.
func (e *Error) Unwrap() error { return e.Err }

// maxQuoted bounds the input a message quotes (see Quote).
const maxQuoted = 80

// Quote quotes an input for a message, as strconv.Quote does, cut after
// 80 bytes (at a rune boundary) with its full length said: a message names
// the input, it need not echo a whole oversized one back.
func Quote(s string) string {
	if len(s) <= maxQuoted {
		return strconv.Quote(s)
	}
	cut := maxQuoted
	for cut > 0 && !utf8.RuneStart(s[cut]) {
		cut--
	}
	return strconv.Quote(s[:cut]) + "... (" + strconv.Itoa(len(s)) + " bytes)"
}

func errorf(input string, err error, msg string) *Error {
	return &Error{Input: input, Err: err, Msg: msg}
}

// Unit is a parsed unit expression: its dimension, the SI value of one
// unit and, for a single temperature symbol, the offset of its scale.
type Unit struct {
	Symbol string // the expression as written, trimmed
	Dim    Dim
	Factor float64 // SI value of one unit; for temperatures, of one interval
	// Offset is the offset of a temperature scale: K = (v + Offset) * Factor.
	// It is set only for a single temperature symbol (degC, degF, ...),
	// and used only where a field holds an absolute temperature.
	Offset float64
	scale  bool // a single temperature symbol
}

// Quantity is a number with its unit, as written by the caller.
type Quantity struct {
	Value float64
	Unit  Unit
}

// SI returns the value in SI units. A temperature is taken as an interval
// (a temperature difference); use Temperature for absolute temperatures.
func (q Quantity) SI() float64 { return q.Value * q.Unit.Factor }

// String formats the quantity as value, space, unit.
func (q Quantity) String() string {
	if q.Unit.Symbol == "" || q.Unit.Symbol == "1" {
		return FormatNumber(q.Value)
	}
	return FormatNumber(q.Value) + " " + q.Unit.Symbol
}

// Parse reads a quantity: a decimal number followed by a unit expression,
// with or without a space between them.
//
// The grammar, in which spaces are allowed around the operators:
//
//	quantity = number [" "] unit
//	number   = ["+" | "-"] (digits ["." [digits]] | "." digits) [("e" | "E") ["+" | "-"] digits]
//	unit     = ["/"] term {("*" | "." | "·" | " " | "/") term}
//	term     = symbol [exponent] | "1" | "(" unit ")" [exponent]
//	exponent = digits | "-" digits | "^" ["+" | "-"] digits | ["⁻"] ("¹" | "²" | "³" | "⁴")
//	symbol   = an entry of the unit table, optionally after an SI prefix
//
// Multiplication and division associate to the left, so "um/m/K" is
// micrometre per metre per kelvin. A space between two terms multiplies
// ("N m", "mm/(m K)") where no "/" came before it in its group: "mm/m K"
// is refused as ambiguous. A leading "/" (UCUM style, "12e-6/K")
// means one over the rest. A digit run straight after a symbol is its
// exponent ("mm2", "cm4"). Hexadecimal, NaN and infinite numbers are
// refused, as are numbers too large for a float64.
func Parse(s string) (Quantity, error) { return parse(s, parseUnit) }

// parse is Parse, reading the unit expression with unit.
func parse(s string, unit func(expr, src string) (Unit, error)) (Quantity, error) {
	in := strings.TrimSpace(s)
	n := scanNumber(in)
	if n == 0 {
		if in == "" {
			return Quantity{}, errorf(s, ErrSyntax, "empty value")
		}
		return Quantity{}, errorf(s, ErrNumber, "no number at the start of "+Quote(s)+"; write a value such as \"30 m\"")
	}
	v, err := strconv.ParseFloat(in[:n], 64)
	if err != nil || math.IsInf(v, 0) {
		return Quantity{}, errorf(s, ErrNumber, "number out of range in "+Quote(s))
	}
	rest := strings.TrimSpace(in[n:])
	if rest == "" {
		return Quantity{Value: v, Unit: Unit{Symbol: "", Dim: Dimensionless, Factor: 1}}, nil
	}
	if strings.HasPrefix(rest, ",") && n < len(in) && len(rest) > 1 && isDigit(rest[1]) {
		return Quantity{}, errorf(s, ErrNumber, "use \".\" as the decimal separator in "+Quote(s))
	}
	u, err := unit(rest, s)
	if err != nil {
		return Quantity{}, err
	}
	if math.IsInf(v*u.Factor, 0) {
		return Quantity{}, errorf(s, ErrNumber, "number out of range in "+Quote(s))
	}
	return Quantity{Value: v, Unit: u}, nil
}

// ParseUnit reads a unit expression on its own, such as "mm", "1/degF" or
// "N/mm2"; the grammar is Parse's.
func ParseUnit(s string) (Unit, error) {
	t := strings.TrimSpace(s)
	if t == "" {
		return Unit{}, errorf(s, ErrNoUnit, "empty unit")
	}
	return parseUnit(t, s)
}

// New makes a quantity from a number and a unit expression, as in the
// JSON object form {"value": 30, "unit": "m"}.
func New(value float64, unit string) (Quantity, error) {
	if math.IsNaN(value) || math.IsInf(value, 0) {
		return Quantity{}, errorf(unit, ErrNumber, "value is not a finite number")
	}
	u, err := ParseUnit(unit)
	if err != nil {
		return Quantity{}, err
	}
	if math.IsInf(value*u.Factor, 0) {
		return Quantity{}, errorf(unit, ErrNumber, "number out of range")
	}
	return Quantity{Value: value, Unit: u}, nil
}

// scanNumber returns the length of the decimal number at the start of s.
func scanNumber(s string) int {
	i := 0
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		i++
	}
	digits := 0
	for i < len(s) && isDigit(s[i]) {
		i++
		digits++
	}
	if i < len(s) && s[i] == '.' {
		j := i + 1
		frac := 0
		for j < len(s) && isDigit(s[j]) {
			j++
			frac++
		}
		if digits+frac > 0 {
			i = j
			digits += frac
		}
	}
	if digits == 0 {
		return 0
	}
	// An exponent only when e is followed by digits: "5 e" is not one.
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		j := i + 1
		if j < len(s) && (s[j] == '+' || s[j] == '-') {
			j++
		}
		k := j
		for k < len(s) && isDigit(s[k]) {
			k++
		}
		if k > j {
			i = k
		}
	}
	// A hexadecimal or otherwise glued-on number ("0x1p3") is not a number.
	if i < len(s) && (s[i] == 'x' || s[i] == 'X' || s[i] == '_') && digits > 0 {
		return 0
	}
	return i
}

func isDigit(c byte) bool { return '0' <= c && c <= '9' }

// unitParser is a recursive-descent parser over a unit expression.
type unitParser struct {
	src   string // the whole input, for messages
	s     string // the unit expression
	i     int
	depth int
	terms int
	last  symbol // the only symbol, while there is exactly one
}

// A Cache parses quantities as Parse does, remembering the unit
// expressions it has read: requests, and the rows of a batch above all,
// repeat a handful of them ("m", "1/K", "degC"). Only successes are kept
// (a message quotes the whole input), and only short expressions, at most
// maxCached of them, so that its memory is bounded whatever callers send:
// other expressions are parsed every time. The zero value is ready for
// use, by any number of goroutines; a nil *Cache parses without
// remembering.
type Cache struct {
	m sync.Map     // expression -> Unit
	n atomic.Int32 // entries stored or being stored
}

// Bounds of a Cache: some 16 KiB of expressions.
const (
	maxCached    = 512
	maxCachedLen = 32
)

// Parse is Parse through the cache.
func (c *Cache) Parse(s string) (Quantity, error) { return parse(s, c.unit) }

// ParseUnit is ParseUnit through the cache.
func (c *Cache) ParseUnit(s string) (Unit, error) {
	t := strings.TrimSpace(s)
	if t == "" {
		return Unit{}, errorf(s, ErrNoUnit, "empty unit")
	}
	return c.unit(t, s)
}

func (c *Cache) unit(expr, src string) (Unit, error) {
	if c == nil { // a nil Cache parses without remembering
		return parseUnit(expr, src)
	}
	if u, ok := c.m.Load(expr); ok {
		return u.(Unit), nil
	}
	u, err := parseUnit(expr, src)
	if err != nil || len(expr) > maxCachedLen {
		return u, err
	}
	if c.n.Add(1) > maxCached { // a slot is taken before the store, so the bound holds under races
		c.n.Add(-1)
		return u, nil
	}
	u.Symbol = strings.Clone(expr) // expr is part of a request
	if _, loaded := c.m.LoadOrStore(u.Symbol, u); loaded {
		c.n.Add(-1)
	}
	return u, nil
}

func parseUnit(expr, src string) (Unit, error) {
	p := &unitParser{src: src, s: expr}
	f, d, err := p.expr()
	if err != nil {
		return Unit{}, err
	}
	p.space()
	if p.i < len(p.s) {
		return Unit{}, p.fail(ErrSyntax, "unexpected "+Quote(p.s[p.i:]))
	}
	u := Unit{Symbol: expr, Dim: d, Factor: f}
	if p.terms == 1 && d == Temp && p.last.dim == Temp {
		u.scale = true
		u.Offset = p.last.offset
		u.Factor = p.last.factor
	}
	return u, nil
}

func (p *unitParser) fail(err error, what string) *Error {
	return errorf(p.src, err, what+" in "+Quote(p.src))
}

// maxExponent bounds each base exponent of a unit, so that no product of
// powers can overflow the int8 of Dim, and no factor leave float64 range.
const maxExponent = 12

func (p *unitParser) sane(f float64, d Dim) error {
	for _, e := range [...]int8{d.L, d.M, d.T, d.Theta} {
		if e > maxExponent || e < -maxExponent {
			return p.fail(ErrSyntax, "unit with too high a power")
		}
	}
	if !(f > 0) || math.IsInf(f, 0) || f < 1e-200 || f > 1e200 {
		return p.fail(ErrSyntax, "unit too large or too small")
	}
	return nil
}

func (p *unitParser) space() {
	for p.i < len(p.s) && p.s[p.i] == ' ' {
		p.i++
	}
}

// expr = ["/"] term {op term}
func (p *unitParser) expr() (float64, Dim, error) {
	p.space()
	factor, dim := 1.0, Dimensionless
	div := false
	if p.i < len(p.s) && p.s[p.i] == '/' {
		div = true
		p.i++
	}
	divided := div // a "/" came before, at this level
	for {
		ts := p.i
		f, d, err := p.term()
		if err != nil {
			return 0, Dim{}, err
		}
		one := strings.TrimSpace(p.s[ts:p.i]) == "1" // the unit one: "1/K"
		if div {
			factor /= f
			dim = dim.Mul(d.Pow(-1))
		} else {
			factor *= f
			dim = dim.Mul(d)
		}
		if err := p.sane(factor, dim); err != nil {
			return 0, Dim{}, err
		}
		p.space()
		if p.i >= len(p.s) {
			return factor, dim, nil
		}
		switch {
		case p.s[p.i] == '*' || p.s[p.i] == '.':
			div = false
			p.i++
		case strings.HasPrefix(p.s[p.i:], "·"):
			div = false
			p.i += len("·")
		case p.s[p.i] == '/':
			div, divided = true, true
			p.i++
		case p.s[p.i-1] == ' ' && !one && (p.s[p.i] == '(' || isSymbolByte(p.s, p.i)):
			// A space between two terms multiplies, as in "N m" and
			// "mm/(m K)"; after a "/" it would be ambiguous ("mm/m K"),
			// and after the unit one it is a stray digit ("2 1 m").
			if divided {
				return 0, Dim{}, p.fail(ErrSyntax, "a space after \"/\" is ambiguous: write the divisor in parentheses, such as \"mm/(m K)\", or use \"*\" or \".\"")
			}
			div = false
		default:
			return factor, dim, nil
		}
	}
}

// term = symbol [exponent] | "(" expr ")" [exponent]
func (p *unitParser) term() (float64, Dim, error) {
	p.space()
	if p.i >= len(p.s) {
		return 0, Dim{}, p.fail(ErrSyntax, "unit expression ends early")
	}
	var f float64
	var d Dim
	if p.s[p.i] == '(' {
		if p.depth >= 4 {
			return 0, Dim{}, p.fail(ErrSyntax, "too many nested parentheses")
		}
		p.depth++
		p.i++
		var err error
		f, d, err = p.expr()
		if err != nil {
			return 0, Dim{}, err
		}
		p.space()
		if p.i >= len(p.s) || p.s[p.i] != ')' {
			return 0, Dim{}, p.fail(ErrSyntax, "missing \")\"")
		}
		p.i++
		p.depth--
		p.terms += 2 // a group is never a bare temperature scale
	} else {
		start := p.i
		for p.i < len(p.s) && isSymbolByte(p.s, p.i) {
			p.i++
		}
		name := p.s[start:p.i]
		// Letters followed by digits: the digits are an exponent (mm2),
		// except inside a bracketed UCUM code or for the unit "1".
		if name == "" {
			if p.i < len(p.s) && p.s[p.i] == '1' && (p.i+1 == len(p.s) || !isDigit(p.s[p.i+1])) {
				// The unit one takes no exponent.
				p.i++
				p.terms++
				p.last = table["1"]
				return 1, Dimensionless, nil
			} else {
				return 0, Dim{}, p.fail(ErrSyntax, "unexpected "+Quote(p.s[p.i:]))
			}
		}
		u, ok := lookup(name)
		if !ok {
			msg := "unknown unit " + Quote(name)
			if h, ok := hints[name]; ok {
				msg += " (" + h + ")"
			}
			return 0, Dim{}, errorf(p.src, ErrUnknownUnit, msg+" in "+Quote(p.src))
		}
		f, d = u.factor, u.dim
		p.terms++
		p.last = u
	}
	n, err := p.exponent()
	if err != nil {
		return 0, Dim{}, err
	}
	if n != 1 {
		p.terms++ // a power of a temperature is an interval unit
		f = math.Pow(f, float64(n))
		d = d.Pow(n)
	}
	if err := p.sane(f, d); err != nil {
		return 0, Dim{}, err
	}
	return f, d, nil
}

// isSymbolByte reports whether the byte at i continues a unit symbol:
// letters, UTF-8 letters such as µ and °, brackets of UCUM codes, % and
// the underscore inside brackets.
func isSymbolByte(s string, i int) bool {
	c := s[i]
	switch {
	case 'a' <= c && c <= 'z', 'A' <= c && c <= 'Z', c == '%', c == '[', c == ']', c == '_':
		return true
	case c >= 0x80:
		// Superscript digits (² ³ ⁴) and the middle dot are operators or
		// exponents, not part of a symbol.
		_, n := superscript(s[i:])
		return n == 0 && !strings.HasPrefix(s[i:], "·")
	}
	return false
}

// superscript returns the exponent written in superscript at the start
// of s (¹ ² ³ ⁴, after a superscript minus ⁻ for a negative one: K⁻¹) and
// its length in bytes, or 0, 0.
func superscript(s string) (exp int8, size int) {
	sign := int8(1)
	if strings.HasPrefix(s, "⁻") {
		sign, size, s = -1, len("⁻"), s[len("⁻"):]
	}
	for _, d := range [...]struct {
		sym string
		n   int8
	}{{"¹", 1}, {"²", 2}, {"³", 3}, {"⁴", 4}} {
		if strings.HasPrefix(s, d.sym) {
			return sign * d.n, size + len(d.sym)
		}
	}
	return 0, 0 // a lone ⁻ is no exponent
}

func (p *unitParser) exponent() (int8, error) {
	if p.i >= len(p.s) {
		return 1, nil
	}
	if n, size := superscript(p.s[p.i:]); size != 0 {
		p.i += size
		return n, nil
	}
	neg := false
	start := p.i
	if p.s[p.i] == '^' {
		p.i++
		if p.i < len(p.s) && (p.s[p.i] == '-' || p.s[p.i] == '+') {
			neg = p.s[p.i] == '-'
			p.i++
		}
		if p.i >= len(p.s) || !isDigit(p.s[p.i]) {
			return 0, p.fail(ErrSyntax, "exponent without digits")
		}
	} else if p.s[p.i] == '-' && p.i+1 < len(p.s) && isDigit(p.s[p.i+1]) {
		// UCUM writes a negative power straight after the symbol: K-1, m-2.
		neg = true
		p.i++
	} else if !isDigit(p.s[p.i]) {
		return 1, nil
	}
	ds := p.i
	for p.i < len(p.s) && isDigit(p.s[p.i]) {
		p.i++
	}
	if p.i-ds > 1 {
		return 0, p.fail(ErrSyntax, "exponent "+Quote(p.s[start:p.i])+" too large")
	}
	n := int8(p.s[ds] - '0')
	if n == 0 {
		return 0, p.fail(ErrSyntax, "exponent 0")
	}
	if neg {
		n = -n
	}
	return n, nil
}
