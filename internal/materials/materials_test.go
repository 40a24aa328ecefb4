package materials

import (
	"errors"
	"math"
	"slices"
	"testing"

	"github.com/thermalmovement/service/internal/calc"
	"github.com/thermalmovement/service/internal/units"
)

func load(t *testing.T) *Catalogue {
	t.Helper()
	c, err := Load()
	if err != nil {
		t.Fatalf("Load: %v", err)
	}
	return c
}

func TestRequiredIDs(t *testing.T) {
	c := load(t)
	// The ids the service contract promises (shared/docs/contract.md).
	for _, id := range []string{"structural-steel", "stainless-steel-304", "stainless-steel-316", "aluminium-6061", "copper", "brass",
		"cast-iron", "concrete", "lightweight-concrete", "clay-masonry", "concrete-masonry", "timber-along-grain", "soda-lime-glass",
		"pvc-u", "hdpe", "invar-36", "titanium-grade-2", "water"} {
		if _, err := c.Get(id); err != nil {
			t.Errorf("Get(%q): %v", id, err)
		}
	}
	if _, err := c.Get("unobtainium"); !errors.Is(err, ErrNotFound) {
		t.Errorf("Get(unobtainium) error = %v, want ErrNotFound", err)
	}
}

func TestEveryValueCited(t *testing.T) {
	c := load(t)
	for _, m := range c.All() {
		for _, s := range []*Source{coefSource(m.Alpha), coefSource(m.Beta)} {
			if s != nil && len(c.Cite(s.Refs)) == 0 {
				t.Errorf("%s: coefficient without a citation", m.ID)
			}
			if s != nil && !slices.Equal(s.Citations, c.Cite(s.Refs)) {
				t.Errorf("%s: citations resolved at load %q, want %q", m.ID, s.Citations, c.Cite(s.Refs))
			}
		}
		for _, cv := range m.Curves {
			for _, cite := range c.Cite(cv.Refs) {
				if cite == "" {
					t.Errorf("%s: curve cites an empty reference", m.ID)
				}
			}
			if !slices.Equal(cv.Citations, c.Cite(cv.Refs)) {
				t.Errorf("%s: curve citations resolved at load %q, want %q", m.ID, cv.Citations, c.Cite(cv.Refs))
			}
		}
	}
}

func coefSource(co *Coefficient) *Source {
	if co == nil {
		return nil
	}
	return &co.Source
}

// The band the literature gives must be present where the contract asks
// for one (concrete, masonry, timber).
func TestBands(t *testing.T) {
	c := load(t)
	for _, id := range []string{"concrete", "lightweight-concrete", "clay-masonry", "concrete-masonry", "timber-along-grain"} {
		m, _ := c.Get(id)
		if m == nil || !m.Alpha.HasBand || !(m.Alpha.Low < m.Alpha.High) {
			t.Errorf("%s: no low/high band", id)
		}
	}
}

// EN 1991-1-5 Annex C Table C.1 (values from memory of EN 1991-1-5, not
// re-read): design coefficients in 1e-6/K.
func TestEN1991Coefficients(t *testing.T) {
	c := load(t)
	for id, want := range map[string]float64{
		"structural-steel": 12, "concrete": 10, "lightweight-concrete": 7, "timber-along-grain": 5,
	} {
		m, err := c.Get(id)
		if err != nil {
			t.Fatal(err)
		}
		if got := m.Alpha.Value * 1e6; math.Abs(got-want) > 1e-9 {
			t.Errorf("%s alpha = %v e-6/K, want %v", id, got, want)
		}
	}
}

// NIST cryogenic material property fits (verification.md, read):
// (L - L293)/L293 = (a + bT + cT^2 + dT^3 + eT^4) x 1e-5. The catalogue's
// curves must reproduce the published formula, and the total contraction
// from 293 K to 4 K must agree within the fits' 3 % with handbook values:
// 304 stainless 0.296 %, 6061 aluminium 0.415 %, copper 0.326 % (values
// from memory of Ekin, Experimental Techniques for Low-Temperature
// Measurements (2006), Appendix A6.4, not re-read).
func TestNISTCryogenicFits(t *testing.T) {
	c := load(t)
	fit := func(a, b, cc, d, e float64) func(float64) float64 {
		return func(T float64) float64 { return (a + b*T + cc*T*T + d*T*T*T + e*T*T*T*T) * 1e-5 }
	}
	cases := []struct {
		id      string
		formula func(float64) float64
		cut     float64 // below, NIST holds the value constant
		ekin    float64
	}{
		{"stainless-steel-304", fit(-2.9554e2, -3.9811e-1, 9.2683e-3, -2.0261e-5, 1.7127e-8), 23, -0.296e-2},
		{"aluminium-6061", fit(-4.1277e2, -3.0389e-1, 8.7696e-3, -9.9821e-6, 0), 18, -0.415e-2},
	}
	for _, tc := range cases {
		t.Run(tc.id, func(t *testing.T) {
			m, _ := c.Get(tc.id)
			cv := cryoCurve(t, m)
			for _, T := range []float64{30, 77, 150, 200, 250, 293} {
				want := (1+tc.formula(T))/(1+tc.formula(293)) - 1
				got := calc.IntervalStrain(cv, units.Temperature(293), units.Temperature(T))
				if math.Abs(got-want) > 1e-9 {
					t.Errorf("strain 293 K -> %v K = %v, want %v (NIST fit)", T, got, want)
				}
			}
			got := calc.IntervalStrain(cv, 293, 4)
			if math.Abs(got-tc.ekin) > 0.03*math.Abs(tc.ekin) {
				t.Errorf("contraction 293 -> 4 K = %v, want %v within 3 %%", got, tc.ekin)
			}
		})
	}
	// OFHC copper, log10(alpha/1e-6) = sum c_i (log10 T)^i (read).
	m, _ := c.Get("copper")
	cv := cryoCurve(t, m)
	coef := []float64{-17.9081289, 67.131914, -118.809316, 109.9845997, -53.8696089, 13.30247491, -1.30843441}
	alpha := func(T float64) float64 {
		x, s, p := math.Log10(T), 0.0, 1.0
		for _, ci := range coef {
			s += ci * p
			p *= x
		}
		return 1e-6 * math.Pow(10, s)
	}
	// The instantaneous coefficient is the derivative of ln L (ASTM E228).
	for _, T := range []float64{20, 50, 100, 200, 290} {
		h := 0.01
		num := math.Log1p(calc.IntervalStrain(cv, units.Temperature(T-h), units.Temperature(T+h))) / (2 * h)
		if math.Abs(num-alpha(T)) > 1e-4*alpha(T) {
			t.Errorf("copper alpha(%v K) = %v, want %v", T, num, alpha(T))
		}
	}
	if got, want := calc.IntervalStrain(cv, 293, 4), -0.326e-2; math.Abs(got-want) > 0.03*math.Abs(want) {
		t.Errorf("copper contraction 293 -> 4 K = %v, want %v within 3 %%", got, want)
	}
}

func cryoCurve(t *testing.T, m *Material) calc.StrainCurve {
	t.Helper()
	for _, cv := range m.Curves {
		if lo, hi := cv.Range(); lo <= 10 && hi >= 290 && hi <= 310 {
			return cv
		}
	}
	t.Fatalf("%s has no 4..300 K curve", m.ID)
	return nil
}

func TestSelection(t *testing.T) {
	c := load(t)
	steel, _ := c.Get("structural-steel")
	// Within the constant's range: the constant, EN 1993-1-1 3.2.6 12e-6/K
	// (from memory, not re-read).
	e, err := steel.Linear(units.Celsius(-15), units.Celsius(35), Auto, false)
	if err != nil || e.Kind != "constant" || math.Abs(e.Strain-12e-6*50) > 1e-15 {
		t.Errorf("steel -15..35 degC = %+v, %v; want constant 6e-4", e, err)
	}
	// A fire interval: the EN 1993-1-2 curve (read), 20 -> 600 degC:
	// 1.2e-5*600 + 0.4e-8*600^2 - 2.416e-4 = 8.3984e-3 from 20 degC.
	e, err = steel.Linear(units.Celsius(20), units.Celsius(600), Auto, false)
	if err != nil || e.Kind == "constant" || math.Abs(e.Strain-8.3984e-3) > 1e-9 {
		t.Errorf("steel 20..600 degC = %+v, %v; want the EN 1993-1-2 curve, 8.3984e-3", e, err)
	}
	// Beyond every data range: 422 unless extrapolated.
	_, err = steel.Linear(units.Celsius(20), units.Celsius(1500), Auto, false)
	var oor *OutOfRangeError
	if !errors.As(err, &oor) || !errors.Is(err, calc.ErrOutOfRange) {
		t.Errorf("steel 20..1500 degC error = %v, want OutOfRangeError", err)
	}
	e, err = steel.Linear(units.Celsius(20), units.Celsius(1500), Auto, true)
	if err != nil || len(e.Warnings) == 0 {
		t.Errorf("extrapolated = %+v, %v; want a warning", e, err)
	}
	// A material with a constant coefficient only: its range is all its
	// data, so beyond it the same rule holds. Concrete: 10e-6/K (from
	// memory of EN 1992-1-1 3.1.3(5), not re-read) over the catalogue's
	// -30..60 degC.
	concrete, _ := c.Get("concrete")
	if len(concrete.Curves) != 0 || !concrete.Alpha.HasRange {
		t.Fatalf("concrete: want a ranged constant and no curve, got %d curves", len(concrete.Curves))
	}
	if _, err = concrete.Linear(units.Celsius(20), units.Celsius(3000), Auto, false); !errors.As(err, &oor) {
		t.Errorf("concrete 20..3000 degC error = %v, want OutOfRangeError", err)
	}
	e, err = concrete.Linear(units.Celsius(20), units.Celsius(80), Auto, true)
	if err != nil || e.Kind != "constant" || len(e.Warnings) == 0 || math.Abs(e.Strain-10e-6*60) > 1e-15 {
		t.Errorf("concrete 20..80 degC extrapolated = %+v, %v; want the constant with a warning", e, err)
	}
	// Constant asked for outside its range: a warning, not an error.
	e, err = steel.Linear(units.Celsius(20), units.Celsius(300), Constant, false)
	if err != nil || e.Kind != "constant" || len(e.Warnings) == 0 {
		t.Errorf("constant beyond range = %+v, %v; want constant with a warning", e, err)
	}
	// A bare difference: the constant holds from -50 to 100 degC (the
	// catalogue's range for EN 1993-1-1 3.2.6, from memory, not re-read),
	// so 150 K may lie within it and 1000 K cannot.
	for _, tc := range []struct {
		dT   units.TemperatureDifference
		warn bool
	}{{50, false}, {150, false}, {-150, false}, {151, true}, {1000, true}, {-1000, true}} {
		e, err := steel.LinearDelta(tc.dT)
		if err != nil || (len(e.Warnings) > 0) != tc.warn || math.Abs(e.Strain-12e-6*float64(tc.dT)) > 1e-15 {
			t.Errorf("steel LinearDelta(%v K) = %+v, %v; want strain 12e-6 dT, warning %v", float64(tc.dT), e, err, tc.warn)
		}
	}
	water, _ := c.Get("water")
	if _, err := water.Linear(units.Celsius(20), units.Celsius(30), Auto, false); err == nil {
		t.Error("water has no linear coefficient, want an error")
	}
}

// TestChainedCurves checks an interval that no one curve holds but two
// whose ranges meet do: demo data, an aluminium facade mullion between
// -20 and 80 degC. The expected strain is computed here from the two
// published formulas: the NIST cryogenic fit for 6061-T6,
// (L - L293)/L293 = (a + bT + cT^2 + dT^3) x 1e-5 up to 300 K
// (../shared/docs/verification.md, read), and EN 1999-1-2 3.3.1.1,
// dl/l = 0.1e-7 theta^2 + 22.5e-6 theta - 4.5e-4 from 20 degC (from
// memory of EN 1999-1-2, not re-read), lengths multiplied at 300 K. The
// catalogue zeroes each fit at its reference (the NIST fit gives -4e-7 at
// 293 K, EN 1999-1-2 +4e-6 at 20 degC), which moves the strain by parts
// in a million: the tolerance is relative 1e-5.
func TestChainedCurves(t *testing.T) {
	c := load(t)
	al, _ := c.Get("aluminium-6061")
	nist := func(k float64) float64 { return (-4.1277e2 - 3.0389e-1*k + 8.7696e-3*k*k - 9.9821e-6*k*k*k) * 1e-5 }
	en := func(th float64) float64 { return 0.1e-7*th*th + 22.5e-6*th - 4.5e-4 }
	ratio := (1 + nist(300)) / (1 + nist(253.15)) * (1 + en(80)) / (1 + en(300-273.15))
	for _, tc := range []struct {
		t1, t2 float64
		want   float64
	}{{-20, 80, ratio - 1}, {80, -20, 1/ratio - 1}} {
		for _, model := range []Model{Auto, CurveFit} {
			e, err := al.Linear(units.Celsius(tc.t1), units.Celsius(tc.t2), model, false)
			if err != nil || !e.Joined || math.Abs(e.Strain-tc.want) > 1e-5*math.Abs(tc.want) {
				t.Errorf("aluminium-6061 %v..%v degC (%s) = %+v, %v; want joined curves, strain %.6g", tc.t1, tc.t2, model, e, err, tc.want)
				continue
			}
			if math.Abs(float64(e.Join)-300) > 1e-9 || len(e.Source.Refs) != 2 || e.Source.Confidence != "memory" || len(e.Warnings) != 0 {
				t.Errorf("aluminium-6061 %v..%v degC: join %v K, source %+v, warnings %q; want 300 K, both references, memory, no warning", tc.t1, tc.t2, float64(e.Join), e.Source, e.Warnings)
			}
		}
	}
	// Within one curve nothing is joined; beyond both, the 422 stays.
	if e, err := al.Linear(units.Celsius(-100), units.Celsius(0), Auto, false); err != nil || e.Joined {
		t.Errorf("aluminium-6061 -100..0 degC = %+v, %v; want the NIST curve alone", e, err)
	}
	var oor *OutOfRangeError
	if _, err := al.Linear(units.Celsius(-20), units.Celsius(600), Auto, false); !errors.As(err, &oor) {
		t.Errorf("aluminium-6061 -20..600 degC error = %v, want OutOfRangeError", err)
	}
	// Stainless 304 joins its NIST fit to the first curve from 20 degC,
	// its mean-coefficient table.
	ss, _ := c.Get("stainless-steel-304")
	if e, err := ss.Linear(units.Celsius(-40), units.Celsius(60), Auto, false); err != nil || !e.Joined || e.Kind != "piecewise-strain and mean-table" {
		t.Errorf("stainless-steel-304 -40..60 degC = %+v, %v; want the NIST fit joined to the mean table", e, err)
	}
}

// TestSuggest: a mistyped id gets the ids it may have meant (common
// practice of search boxes, no published source; nothing is computed
// from it).
func TestSuggest(t *testing.T) {
	c := load(t)
	for _, tc := range []struct {
		id   string
		want string // an id that must be suggested; "" for none at all
	}{{"aluminum-6061", "aluminium-6061"}, {"Structural-Steel", "structural-steel"}, {"steel", "stainless-steel-304"}, {"concret", "concrete"}, {"xyz", ""}, {"", ""}} {
		got := c.Suggest(tc.id)
		if tc.want == "" && len(got) != 0 || tc.want != "" && !slices.Contains(got, tc.want) || len(got) > 4 {
			t.Errorf("Suggest(%q) = %q, want %q among at most four", tc.id, got, tc.want)
		}
	}
}

// TestCurveStrain: the strain function a joint is sized with follows the
// curves Linear takes over the whole interval, at every temperature
// between: zero at the start, Linear's strain at the end and at points
// between, and continuous across a join (aluminium-6061, NIST fit and
// EN 1999-1-2 joined at 300 K; see TestChainedCurves), and on one curve
// (structural-steel, EN 1993-1-2 eq. (3.1a), from memory:
// 1.2e-5 T + 0.4e-8 T^2 - 2.416e-4, 5.1984e-3 at 400 degC).
func TestCurveStrain(t *testing.T) {
	c := load(t)
	for _, tc := range []struct {
		id     string
		lo, hi float64 // degC
		end    float64 // strain at hi, 0: Linear's only
	}{
		{"aluminium-6061", -20, 80, 0},
		{"structural-steel", 20, 400, 1.2e-5*400 + 0.4e-8*400*400 - 2.416e-4},
		// From -25 degC: the constant 12e-6/K (EN 1993-1-1 3.2.6, from
		// memory) to the curve's start at 20 degC, lengths multiplied there.
		{"structural-steel", -25, 400, (1+12e-6*45)*(1+1.2e-5*400+0.4e-8*400*400-2.416e-4) - 1},
		// 16Mo3: its mean table from 20 degC (13.5e-6/K to 400 degC,
		// datasheet, read), the constant 11.1e-6/K below 20 degC.
		{"pressure-vessel-steel-16mo3", -20, 400, (1+11.1e-6*40)*(1+13.5e-6*380) - 1},
	} {
		m, _ := c.Get(tc.id)
		lo, hi := units.Celsius(tc.lo), units.Celsius(tc.hi)
		e, at, ok := m.CurveStrain(lo, hi)
		if !ok {
			t.Fatalf("%s %v..%v degC: no data", tc.id, tc.lo, tc.hi)
		}
		if whole, err := m.Linear(lo, hi, CurveFit, false); err == nil && (e.Strain != whole.Strain || e.Kind != whole.Kind) {
			t.Errorf("%s: CurveStrain %+v, Linear %+v", tc.id, e, whole)
		}
		if tc.end != 0 && math.Abs(e.Strain-tc.end) > 1e-12 {
			t.Errorf("%s: strain %v, want %v", tc.id, e.Strain, tc.end)
		}
		if at(lo) != 0 || math.Abs(at(hi)-e.Strain) > 1e-15 {
			t.Errorf("%s: at(lo) = %v, at(hi) = %v, want 0 and %v", tc.id, at(lo), at(hi), e.Strain)
		}
		prev := 0.0
		for x := tc.lo + 1; x <= tc.hi; x++ {
			s := at(units.Celsius(x))
			// Under 1 K the strain moves by alpha, some 1e-5: a jump at a
			// join would be far more.
			if d := s - prev; !(d > 0 && d < 3e-5) {
				t.Errorf("%s: strain from %v to %v degC moves %v", tc.id, x-1, x, d)
			}
			prev = s
		}
	}
	concrete, _ := c.Get("concrete")
	if _, _, ok := concrete.CurveStrain(units.Celsius(-20), units.Celsius(40)); ok {
		t.Error("concrete has no curve, want ok false")
	}
}
