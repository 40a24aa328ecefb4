package units

import (
	"slices"
	"sort"
)

// symbol is one entry of the unit table: the SI value of one unit, and
// for temperature scales the offset of the scale's zero.
type symbol struct {
	factor float64 // SI value of one unit (of one interval, for temperatures)
	dim    Dim
	// offset is added to a reading on the scale before multiplying by
	// factor to obtain kelvin: K = (v + offset) * factor. It applies only
	// when the unit stands alone in an absolute-temperature field.
	offset     float64
	prefixable bool
	// note says what the symbol is, for the unit listing.
	note string
}

// Exact factors from NIST SP 811 (2008), Appendix B: 1 in = 0.0254 m,
// 1 ft = 0.3048 m, 1 yd = 0.9144 m, 1 lb = 0.45359237 kg,
// 1 lbf = 4.4482216152605 N, 1 psi = 1 lbf/in^2 = 6894.757293168 Pa,
// 1 US gallon = 231 in^3 = 3.785411784e-3 m^3, 1 degF interval = 5/9 K.
const (
	inch       = 0.0254
	foot       = 0.3048
	yard       = 0.9144
	pound      = 0.45359237
	poundForce = 4.4482216152605
	psi        = poundForce / (inch * inch)
	usGallon   = 3.785411784e-3
	fahrenheit = 5.0 / 9.0
)

// table holds every unit symbol the parser accepts without a prefix.
// Symbols in square brackets and "Cel" are the UCUM case-sensitive codes.
var table = map[string]symbol{
	// length
	"m":       {factor: 1, dim: Length, prefixable: true, note: "metre"},
	"in":      {factor: inch, dim: Length, note: "inch"},
	"[in_i]":  {factor: inch, dim: Length, note: "inch (UCUM)"},
	"ft":      {factor: foot, dim: Length, note: "foot"},
	"[ft_i]":  {factor: foot, dim: Length, note: "foot (UCUM)"},
	"yd":      {factor: yard, dim: Length, note: "yard"},
	"[yd_i]":  {factor: yard, dim: Length, note: "yard (UCUM)"},
	"mil":     {factor: inch / 1000, dim: Length, note: "thousandth of an inch"},
	"[mil_i]": {factor: inch / 1000, dim: Length, note: "thousandth of an inch (UCUM)"},

	// mass and time (for products such as kg/m3)
	"g":       {factor: 1e-3, dim: Mass, prefixable: true, note: "gram"},
	"t":       {factor: 1e3, dim: Mass, note: "tonne"},
	"lb":      {factor: pound, dim: Mass, note: "pound (avoirdupois)"},
	"[lb_av]": {factor: pound, dim: Mass, note: "pound (UCUM)"},
	"s":       {factor: 1, dim: Time, prefixable: true, note: "second"},
	"min":     {factor: 60, dim: Time, note: "minute"},
	"h":       {factor: 3600, dim: Time, note: "hour"},

	// volume
	"L":        {factor: 1e-3, dim: Volume, prefixable: true, note: "litre"},
	"l":        {factor: 1e-3, dim: Volume, prefixable: true, note: "litre"},
	"gal":      {factor: usGallon, dim: Volume, note: "US gallon"},
	"[gal_us]": {factor: usGallon, dim: Volume, note: "US gallon (UCUM)"},

	// temperature: scales and intervals
	"K":      {factor: 1, dim: Temp, note: "kelvin"},
	"degC":   {factor: 1, offset: 273.15, dim: Temp, note: "degree Celsius"},
	"°C":     {factor: 1, offset: 273.15, dim: Temp, note: "degree Celsius"},
	"℃":      {factor: 1, offset: 273.15, dim: Temp, note: "degree Celsius (the one-character sign)"},
	"Cel":    {factor: 1, offset: 273.15, dim: Temp, note: "degree Celsius (UCUM)"},
	"degF":   {factor: fahrenheit, offset: 459.67, dim: Temp, note: "degree Fahrenheit"},
	"°F":     {factor: fahrenheit, offset: 459.67, dim: Temp, note: "degree Fahrenheit"},
	"℉":      {factor: fahrenheit, offset: 459.67, dim: Temp, note: "degree Fahrenheit (the one-character sign)"},
	"[degF]": {factor: fahrenheit, offset: 459.67, dim: Temp, note: "degree Fahrenheit (UCUM)"},
	"degR":   {factor: fahrenheit, dim: Temp, note: "degree Rankine"},
	"°R":     {factor: fahrenheit, dim: Temp, note: "degree Rankine"},
	"[degR]": {factor: fahrenheit, dim: Temp, note: "degree Rankine (UCUM)"},

	// force and stress
	"N":        {factor: 1, dim: Force, prefixable: true, note: "newton"},
	"lbf":      {factor: poundForce, dim: Force, note: "pound-force"},
	"[lbf_av]": {factor: poundForce, dim: Force, note: "pound-force (UCUM)"},
	"kip":      {factor: 1000 * poundForce, dim: Force, note: "kip (1000 lbf)"},
	"kips":     {factor: 1000 * poundForce, dim: Force, note: "kip (1000 lbf)"},
	"Pa":       {factor: 1, dim: Stress, prefixable: true, note: "pascal"},
	"bar":      {factor: 1e5, dim: Stress, prefixable: true, note: "bar"},
	"psi":      {factor: psi, dim: Stress, note: "pound-force per square inch"},
	"[psi]":    {factor: psi, dim: Stress, note: "pound-force per square inch (UCUM)"},
	"ksi":      {factor: 1e3 * psi, dim: Stress, note: "kilopound-force per square inch"},
	"Msi":      {factor: 1e6 * psi, dim: Stress, note: "megapound-force per square inch"},

	// dimensionless
	"1":     {factor: 1, dim: Dimensionless, note: "one"},
	"%":     {factor: 1e-2, dim: Dimensionless, note: "per cent"},
	"ppm":   {factor: 1e-6, dim: Dimensionless, note: "part per million"},
	"[ppm]": {factor: 1e-6, dim: Dimensionless, note: "part per million (UCUM)"},
}

// prefixes are the SI prefixes allowed before a prefixable symbol.
var prefixes = map[string]float64{
	"n": 1e-9, "u": 1e-6, "µ": 1e-6, "μ": 1e-6, "m": 1e-3, "c": 1e-2, "d": 1e-1,
	"k": 1e3, "M": 1e6, "G": 1e9,
}

// hints answer symbols that are near misses of accepted ones.
var hints = map[string]string{
	"C":      `write "degC" for degrees Celsius`,
	"F":      `write "degF" for degrees Fahrenheit`,
	"R":      `write "degR" for degrees Rankine`,
	"deg":    `write "degC" or "degF"`,
	"°":      `write "degC" or "degF"`,
	"ºC":     `write "degC": the sign before C is the ordinal indicator º, not the degree sign °`,
	"ºF":     `write "degF": the sign before F is the ordinal indicator º, not the degree sign °`,
	"inch":   `write "in"`,
	"feet":   `write "ft"`,
	"foot":   `write "ft"`,
	"kgf":    "kilogram-force is not accepted; use N or kN",
	"Kelvin": `write "K"`,
	"meter":  `write "m"`,
	"metre":  `write "m"`,
}

// prefixOrder lists the prefixes for lookup, longest spelling first.
var prefixOrder = []string{"µ", "μ", "n", "u", "m", "c", "d", "k", "M", "G"}

// lookup finds a symbol directly or as prefix plus prefixable symbol.
func lookup(s string) (symbol, bool) {
	if u, ok := table[s]; ok {
		return u, true
	}
	for _, p := range prefixOrder {
		if len(s) > len(p) && s[:len(p)] == p {
			if u, ok := table[s[len(p):]]; ok && u.prefixable {
				u.factor *= prefixes[p]
				u.offset = 0
				return u, true
			}
		}
	}
	return symbol{}, false
}

// SymbolInfo describes one accepted unit symbol.
type SymbolInfo struct {
	Symbol    string  `json:"symbol"`
	Dimension string  `json:"dimension"`
	Factor    float64 `json:"si_factor"`
	Offset    float64 `json:"offset,omitempty"`
	Name      string  `json:"name"`
}

// Symbols lists every accepted simple symbol, with each SI prefix spelled
// out for the prefixable ones, sorted by dimension and then symbol.
// Products, quotients and powers of these (N/mm2, um/(m*K)) are accepted
// too.
func Symbols() []SymbolInfo { return slices.Clone(symbolList) }

// symbolList is built once, when the package loads: a bad entry of
// commonForms stops the program at start-up, never a request.
var symbolList = listSymbols()

func listSymbols() []SymbolInfo {
	var out []SymbolInfo
	for s, u := range table {
		out = append(out, SymbolInfo{Symbol: s, Dimension: u.dim.String(), Factor: u.factor, Offset: u.offset, Name: u.note})
		if !u.prefixable {
			continue
		}
		for p, f := range prefixes {
			if p == "μ" { // listed once, as µ (micro sign) and u
				continue
			}
			out = append(out, SymbolInfo{Symbol: p + s, Dimension: u.dim.String(), Factor: u.factor * f, Name: prefixName[p] + u.note})
		}
	}
	seen := map[string]bool{}
	for _, si := range out {
		seen[si.Symbol] = true
	}
	for _, f := range commonForms {
		u, err := ParseUnit(f)
		if err != nil || seen[f] {
			panic("units: common form " + f + " is not a new valid unit") // at start-up, and in the tests
		}
		out = append(out, SymbolInfo{Symbol: f, Dimension: u.Dim.String(), Factor: u.Factor, Name: "a product or quotient of listed symbols"})
	}
	// The factors as every output writes numbers, to 12 significant
	// digits: 1/degF is 1.8, not the 1.7999999999999998 that dividing by
	// the float64 of 5/9 gives, and a microbar 0.1 Pa, not 0.09999999999999999.
	for i := range out {
		out[i].Factor = Round(out[i].Factor)
	}
	sort.Slice(out, func(i, j int) bool {
		if out[i].Dimension != out[j].Dimension {
			return out[i].Dimension < out[j].Dimension
		}
		return out[i].Symbol < out[j].Symbol
	})
	return out
}

// commonForms are compound units the trade writes every day, listed
// beside the simple symbols: any other product, quotient or power of
// those is accepted as well.
var commonForms = []string{
	"m2", "cm2", "mm2", "in2", "ft2", "m^2",
	"m3", "cm3", "mm3", "in3", "ft3",
	"1/K", "1/degC", "1/degF", "ppm/K", "ppm/degC", "ppm/degF", "um/(m*K)", "in/(in*degF)",
	"N/mm2", "N/m2", "kN/m2", "kN/mm", "kN/m", "kN*m", "kg/m3",
	"mm4", "cm4", "m4", "in4",
}

var prefixName = map[string]string{
	"n": "nano", "u": "micro", "µ": "micro", "m": "milli", "c": "centi", "d": "deci",
	"k": "kilo", "M": "mega", "G": "giga",
}
