package calc

import (
	"errors"
	"fmt"

	"github.com/thermalmovement/service/internal/units"
)

// DeckType is the bridge deck type of EN 1991-1-5 6.1.1: 1 steel deck
// (steel box girder, steel truss or plate girder), 2 composite deck,
// 3 concrete deck (slab, beam or box girder).
type DeckType int

// The deck types of EN 1991-1-5 6.1.1.
const (
	SteelDeck     DeckType = 1
	CompositeDeck DeckType = 2
	ConcreteDeck  DeckType = 3
)

// ErrOutsideFigure reports shade air temperatures outside the range the
// correlation of EN 1991-1-5 Figure 6.1 is drawn for.
var ErrOutsideFigure = errors.New("outside the range of EN 1991-1-5 Figure 6.1")

// The shade air temperatures Figure 6.1 of EN 1991-1-5 is drawn for:
// Tmin from -50 degC to 0 degC and Tmax from +20 degC to +50 degC (from
// memory of EN 1991-1-5 Figure 6.1, not re-read).
var (
	ShadeMinLow  = units.Celsius(-50)
	ShadeMinHigh = units.Celsius(0)
	ShadeMaxLow  = units.Celsius(20)
	ShadeMaxHigh = units.Celsius(50)
)

// DefaultInitial is the initial temperature T0 of a bridge element when
// nothing else is known: 10 degC (EN 1991-1-5 Annex A, A.1(3); from
// memory, not re-read).
var DefaultInitial = units.Celsius(10)

// Widening of the uniform ranges for bearings and expansion joints,
// EN 1991-1-5 6.1.3.3(3) Note 2: 20 K, or 10 K where the temperature at
// which bearings and joints are set is specified (from memory of
// EN 1991-1-5, not re-read).
const (
	WideningUnspecified units.TemperatureDifference = 20
	WideningSpecified   units.TemperatureDifference = 10
)

// BridgeTemperature is the uniform temperature component of a bridge
// deck by EN 1991-1-5 6.1.3.
type BridgeTemperature struct {
	TeMin, TeMax units.Temperature // minimum and maximum uniform bridge temperature, 6.1.3.1(3) and Figure 6.1
	T0           units.Temperature // initial temperature
	// Contraction and expansion ranges from T0, 6.1.3.3 (1) and (2):
	// dTN,con = T0 - Te,min, dTN,exp = Te,max - T0.
	Contraction, Expansion units.TemperatureDifference
	Range                  units.TemperatureDifference // overall range dTN = Te,max - Te,min, 6.1.3.3(3)
	// The ranges widened for bearings and expansion joints (6.1.3.3 Note 2)
	// and the extremes they imply, T0 - widened contraction and T0 +
	// widened expansion.
	ContractionJoints, ExpansionJoints units.TemperatureDifference
	TMinJoints, TMaxJoints             units.Temperature
	Widening                           units.TemperatureDifference
}

// EN1991Bridge returns the uniform bridge temperature component from
// the minimum and maximum shade air temperatures of the site for a deck
// of the given type, by the straight-line relations of EN 1991-1-5
// Figure 6.1:
//
//	type 1 (steel):     Te,max = Tmax + 16 K, Te,min = Tmin - 3 K
//	type 2 (composite): Te,max = Tmax + 4 K,  Te,min = Tmin + 4 K
//	type 3 (concrete):  Te,max = Tmax + 2 K,  Te,min = Tmin + 8 K
//
// and the ranges of 6.1.3.3 from the initial temperature t0. The ranges
// for bearings and expansion joints are widened by 20 K, or 10 K when
// settingSpecified (6.1.3.3 Note 2). Shade temperatures outside the
// range of Figure 6.1 give an error wrapping ErrOutsideFigure unless
// extrapolate is set, when the straight lines are extended.
func EN1991Bridge(shadeMin, shadeMax units.Temperature, deck DeckType, t0 units.Temperature, settingSpecified, extrapolate bool) (BridgeTemperature, error) {
	var dMax, dMin units.TemperatureDifference
	switch deck {
	case SteelDeck:
		dMax, dMin = 16, -3
	case CompositeDeck:
		dMax, dMin = 4, 4
	case ConcreteDeck:
		dMax, dMin = 2, 8
	default:
		return BridgeTemperature{}, fmt.Errorf("calc: deck type %d is not 1, 2 or 3", deck)
	}
	if !(shadeMin < shadeMax) {
		return BridgeTemperature{}, errors.New("calc: the minimum shade air temperature must be below the maximum")
	}
	if !extrapolate {
		if shadeMin < ShadeMinLow || shadeMin > ShadeMinHigh {
			return BridgeTemperature{}, fmt.Errorf("minimum shade air temperature %s is %w (-50 to 0 degC)", units.CelsiusText(shadeMin), ErrOutsideFigure)
		}
		if shadeMax < ShadeMaxLow || shadeMax > ShadeMaxHigh {
			return BridgeTemperature{}, fmt.Errorf("maximum shade air temperature %s is %w (+20 to +50 degC)", units.CelsiusText(shadeMax), ErrOutsideFigure)
		}
	}
	b := BridgeTemperature{TeMin: shadeMin.Add(dMin), TeMax: shadeMax.Add(dMax), T0: t0}
	if !(b.TeMin < t0 && t0 < b.TeMax) {
		return BridgeTemperature{}, fmt.Errorf("calc: the initial temperature %s is not between Te,min %s and Te,max %s", units.CelsiusText(t0), units.CelsiusText(b.TeMin), units.CelsiusText(b.TeMax))
	}
	b.Contraction = t0.Sub(b.TeMin)
	b.Expansion = b.TeMax.Sub(t0)
	b.Range = b.TeMax.Sub(b.TeMin)
	b.Widening = WideningUnspecified
	if settingSpecified {
		b.Widening = WideningSpecified
	}
	b.ContractionJoints = b.Contraction + b.Widening
	b.ExpansionJoints = b.Expansion + b.Widening
	b.TMinJoints = t0.Add(-b.ContractionJoints)
	b.TMaxJoints = t0.Add(b.ExpansionJoints)
	return b, nil
}

// Climate is an AASHTO LRFD climate for Procedure A: "moderate" where
// there are fewer than 14 freezing days a year (a freezing day having an
// average temperature below 32 degF), else "cold" (AASHTO LRFD 3.12.2.1.1;
// from memory, not re-read).
type Climate string

// The climates of AASHTO LRFD Procedure A.
const (
	Moderate Climate = "moderate"
	Cold     Climate = "cold"
)

// DeckMaterial is the superstructure material of AASHTO LRFD Table
// 3.12.2.1.1-1.
type DeckMaterial string

// The deck materials of AASHTO LRFD Procedure A.
const (
	DeckSteel     DeckMaterial = "steel"
	DeckAluminium DeckMaterial = "aluminium"
	DeckConcrete  DeckMaterial = "concrete"
	DeckWood      DeckMaterial = "wood"
)

// ProcedureA returns the design temperature range of AASHTO LRFD
// 3.12.2.1.1, Procedure A, Table 3.12.2.1.1-1 (degF):
//
//	climate    steel or aluminium  concrete   wood
//	moderate   0 to 120            10 to 80   10 to 75
//	cold       -30 to 120          0 to 80    0 to 75
//
// Values from memory of AASHTO LRFD Table 3.12.2.1.1-1, not re-read.
func ProcedureA(c Climate, m DeckMaterial) (tMin, tMax units.Temperature, err error) {
	var lo, hi float64
	switch m {
	case DeckSteel, DeckAluminium:
		lo, hi = 0, 120
		if c == Cold {
			lo = -30
		}
	case DeckConcrete:
		lo, hi = 10, 80
		if c == Cold {
			lo = 0
		}
	case DeckWood:
		lo, hi = 10, 75
		if c == Cold {
			lo = 0
		}
	default:
		return 0, 0, fmt.Errorf("calc: deck material %q is not steel, aluminium, concrete or wood", m)
	}
	if c != Moderate && c != Cold {
		return 0, 0, fmt.Errorf("calc: climate %q is not moderate or cold", c)
	}
	return fahrenheit(lo), fahrenheit(hi), nil
}

// fahrenheit returns the absolute temperature of f degF, T(K) =
// (f + 459.67) / 1.8 (NIST SP 811).
func fahrenheit(f float64) units.Temperature { return units.Temperature((f + 459.67) / 1.8) }
