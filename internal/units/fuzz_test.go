package units_test

import (
	"errors"
	"math"
	"testing"

	"github.com/google/go-cmp/cmp"

	"github.com/thermalmovement/service/internal/units"
)

// smallestNormal is the smallest positive normal float64. Below it a
// product carries fewer than 53 bits, so relative comparisons are void.
const smallestNormal = 0x1p-1022

// FuzzParse: Parse never panics; an accepted quantity has a finite SI
// value, and reads back from its String with the same dimension and the
// same SI value to 1e-9 (package contract: Parse, String, FormatNumber
// docs; 12 significant digits are kept).
func FuzzParse(f *testing.F) {
	for _, s := range allSeeds() {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		q, err := units.Parse(s)
		if err != nil {
			var pe *units.Error
			if !errors.As(err, &pe) || pe.Input != s {
				t.Fatalf("Parse(%q) error %#v, want *units.Error with Input %q", s, err, s)
			}
			return
		}
		si := q.SI()
		if math.IsNaN(si) || math.IsInf(si, 0) {
			t.Fatalf("Parse(%q) = %v, SI value %v, want finite", s, q, si)
		}
		str := q.String()
		back, err := units.Parse(str)
		if err != nil {
			t.Fatalf("Parse(%q) = %v, but Parse(%q) fails: %v", s, q, str, err)
		}
		if back.Unit.Dim != q.Unit.Dim {
			t.Fatalf("Parse(%q) dimension %v, Parse(%q) dimension %v, want equal", s, q.Unit.Dim, str, back.Unit.Dim)
		}
		b := back.SI()
		if !near(b, si, 1e-9) && !(math.Abs(b) < smallestNormal && math.Abs(si) < smallestNormal) {
			t.Fatalf("Parse(%q).SI() = %v, Parse(%q).SI() = %v, want within 1e-9 relative", s, si, str, b)
		}
		if back.Unit.IsScale() != q.Unit.IsScale() {
			t.Fatalf("Parse(%q) scale %v, Parse(%q) scale %v, want equal", s, q.Unit.IsScale(), str, back.Unit.IsScale())
		}
		if _, err := q.Temperature(); err == nil && !q.Unit.IsScale() {
			t.Fatalf("Parse(%q).Temperature() succeeded for a unit that is not a scale", s)
		}
	})
}

// FuzzParseUnit: ParseUnit never panics; an accepted unit has a finite,
// positive factor, and its Symbol parses to the same unit (package
// contract: ParseUnit, Unit docs).
func FuzzParseUnit(f *testing.F) {
	for _, s := range allSeeds() {
		f.Add(s)
		// The unit part of each seed as well.
		if q, err := units.Parse(s); err == nil && q.Unit.Symbol != "" {
			f.Add(q.Unit.Symbol)
		}
	}
	f.Fuzz(func(t *testing.T, s string) {
		u, err := units.ParseUnit(s)
		if err != nil {
			return
		}
		if math.IsNaN(u.Factor) || math.IsInf(u.Factor, 0) || u.Factor <= 0 {
			t.Fatalf("ParseUnit(%q).Factor = %v, want finite and positive", s, u.Factor)
		}
		back, err := units.ParseUnit(u.Symbol)
		if err != nil {
			t.Fatalf("ParseUnit(%q) = %+v, but ParseUnit(%q) fails: %v", s, u, u.Symbol, err)
		}
		if d := cmp.Diff(u, back, cmp.AllowUnexported(units.Unit{})); d != "" {
			t.Fatalf("ParseUnit(%q) and ParseUnit(%q) differ (-first +second):\n%s", s, u.Symbol, d)
		}
		// As part of a quantity the unit means the same.
		q, err := units.Parse("1 " + u.Symbol)
		if err != nil {
			t.Fatalf("ParseUnit(%q) succeeds, Parse(%q) fails: %v", s, "1 "+u.Symbol, err)
		}
		if d := cmp.Diff(u, q.Unit, cmp.AllowUnexported(units.Unit{})); d != "" {
			t.Fatalf("ParseUnit(%q) and Parse(%q).Unit differ (-ParseUnit +Parse):\n%s", s, "1 "+u.Symbol, d)
		}
	})
}
