package calc

import (
	"errors"
	"math"

	"github.com/thermalmovement/service/internal/units"
)

// Movement returns the free thermal movement of an expansion length,
// dL = alpha L dT: AASHTO LRFD eq. 3.12.2.3-1, design thermal movement
// range = alpha L (TMaxDesign - TMinDesign) (from memory of AASHTO LRFD,
// not re-read), and the first-order linear expansion of any physics text.
func Movement(lengthM, alphaPerK float64, dT units.TemperatureDifference) float64 {
	return alphaPerK * lengthM * float64(dT)
}

// Joint is a movement joint closed by an expansion length that warms and
// opened as it cools, between the design extremes TMin and TMax. The
// coefficient may be a band: AlphaHigh is used for closing (the smallest
// gap when hot) and AlphaLow for opening; without a band both are equal.
//
// Strain, when set, is the free strain of the member from TMin to t on
// temperature-dependent data: every movement is then the larger, in the
// direction of the temperature change, of L (Strain(t2) - Strain(t1))
// (dL = alpha L dT with the data's mean coefficient over t1..t2, ASTM
// E228 / E831) and alpha L dT with the constant (AlphaHigh, or AlphaLow
// for the low opening), so that neither is relied on where the other
// moves more.
type Joint struct {
	LengthM             float64 // expansion length served by the joint
	AlphaLow, AlphaHigh float64 // per kelvin
	TMin, TMax          units.Temperature
	Strain              func(t units.Temperature) float64
}

// Move is the movement of the length from t1 to t2 with AlphaHigh (or
// on Strain, where that moves more), positive when it lengthens.
func (j Joint) Move(t1, t2 units.Temperature) float64 { return j.move(j.AlphaHigh, t1, t2) }

// moveLow is Move with AlphaLow.
func (j Joint) moveLow(t1, t2 units.Temperature) float64 { return j.move(j.AlphaLow, t1, t2) }

func (j Joint) move(alpha float64, t1, t2 units.Temperature) float64 {
	m := Movement(j.LengthM, alpha, t2.Sub(t1))
	if j.Strain == nil {
		return m
	}
	// A curve may dip (steel's at 750 degC): the larger movement is the
	// one in the direction the temperature goes, never one against it.
	c := j.LengthM * (j.Strain(t2) - j.Strain(t1))
	if t2 >= t1 {
		return math.Max(c, m)
	}
	return math.Min(c, m)
}

// Validate reports a joint that cannot be computed.
func (j Joint) Validate() error {
	switch {
	case !(j.LengthM > 0):
		return errors.New("calc: expansion length must be greater than zero")
	case !(j.AlphaLow > 0 && j.AlphaLow <= j.AlphaHigh):
		return errors.New("calc: coefficient band must be positive with low <= high")
	case !(j.TMin < j.TMax):
		return errors.New("calc: t_min must be below t_max")
	}
	return nil
}

// Range is the movement range alpha_high L (TMax - TMin), the largest the
// band allows (AASHTO LRFD eq. 3.12.2.3-1).
func (j Joint) Range() float64 { return j.Move(j.TMin, j.TMax) }

// Setting is the state of a joint set at one installation temperature.
// Gaps are measured across the joint: warming closes it.
type Setting struct {
	ClosingM      float64 // installation to TMax, with AlphaHigh
	OpeningM      float64 // installation to TMin, with AlphaLow
	OpeningHighM  float64 // installation to TMin, with AlphaHigh (the widest the band allows)
	GapInstallM   float64
	GapAtTMaxM    float64 // GapInstall - Closing
	GapAtTMinM    float64 // GapInstall + Opening
	GapAtTMinHigh float64 // GapInstall + OpeningHigh
}

// At returns the setting of a joint built with gap gapInstallM at
// tInstall: closing = alpha_high L (TMax - tInstall), opening = alpha_low
// L (tInstall - TMin) (AASHTO LRFD eq. 3.12.2.3-1 split at the
// installation temperature).
func (j Joint) At(tInstall units.Temperature, gapInstallM float64) Setting {
	s := Setting{
		ClosingM:     j.Move(tInstall, j.TMax),
		OpeningM:     j.moveLow(j.TMin, tInstall),
		OpeningHighM: j.Move(j.TMin, tInstall),
		GapInstallM:  gapInstallM,
	}
	s.fill()
	return s
}

// ForMinGap returns the setting at tInstall that leaves minGapM at TMax:
// gap_install = min_gap + closing.
func (j Joint) ForMinGap(tInstall units.Temperature, minGapM float64) Setting {
	return j.At(tInstall, minGapM+j.Move(tInstall, j.TMax))
}

// Envelope returns the conservative setting when the installation
// temperature is unknown: it may be either extreme, so closing and
// opening are each the full range (closing with AlphaHigh, opening with
// AlphaLow, OpeningHigh with AlphaHigh).
func (j Joint) Envelope(gapInstallM float64) Setting {
	s := Setting{
		ClosingM:     j.Move(j.TMin, j.TMax),
		OpeningM:     j.moveLow(j.TMin, j.TMax),
		OpeningHighM: j.Move(j.TMin, j.TMax),
		GapInstallM:  gapInstallM,
	}
	s.fill()
	return s
}

// EnvelopeForMinGap is Envelope with the gap that leaves minGapM at TMax
// even when the joint is built at TMin: gap_install = min_gap + range.
func (j Joint) EnvelopeForMinGap(minGapM float64) Setting {
	return j.Envelope(minGapM + j.Range())
}

func (s *Setting) fill() {
	s.GapAtTMaxM = s.GapInstallM - s.ClosingM
	s.GapAtTMinM = s.GapInstallM + s.OpeningM
	s.GapAtTMinHigh = s.GapInstallM + s.OpeningHighM
}

// Sealant is the movement capability of a field-moulded sealant, as
// fractions of the joint width at installation: Extension (joint opening)
// and Compression (joint closing). ASTM C920 classes are symmetric
// (class 25: +/-25 %) or asymmetric (class 100/50: +100 %, -50 %) (from
// memory of ASTM C920 and C719, not re-read).
type Sealant struct {
	Extension, Compression float64
}

// SealantWidth returns the joint width a sealant needs when the joint
// closes by closingM and opens by openingM after installation: the width
// at which neither the compression closing/W nor the extension opening/W
// exceeds the capability, plus the construction tolerance,
//
//	W = max(closing / compression, opening / extension) + tolerance.
//
// This is the approach of ASTM C1472 (joint width = movement /
// capability plus tolerances, with the installation temperature deciding
// how the movement splits into extension and compression; scope read,
// the arithmetic is first principles). With the installation temperature
// unknown pass the full range as both closing and opening, which gives
// W = range / min(extension, compression) + tolerance.
func SealantWidth(closingM, openingM float64, s Sealant, toleranceM float64) float64 {
	return math.Max(math.Max(closingM, 0)/s.Compression, math.Max(openingM, 0)/s.Extension) + toleranceM
}

// SealantStrains returns the extension and compression of a sealant in a
// joint built widthM wide, as fractions of the width, after the
// construction tolerance is taken off the width (the joint may be built
// that much narrower). A width at or below the tolerance gives +Inf, as
// does one above it by no more than rounding (a billionth of the width:
// a tolerance in inches that just misses the gap in mm).
func SealantStrains(closingM, openingM, widthM, toleranceM float64) (extension, compression float64) {
	w := widthM - toleranceM
	if !(w > 1e-9*math.Abs(widthM)) {
		return math.Inf(1), math.Inf(1)
	}
	return math.Max(openingM, 0) / w, math.Max(closingM, 0) / w
}

// ErrTooManyRows reports an installation table longer than allowed.
var ErrTooManyRows = errors.New("too many rows")

// InstallTemperatures returns from, from + step, ... up to to, and to
// itself when the steps do not land on it: the rows of an installation
// table. It refuses a step that is not positive, from above to, and more
// than maxRows rows (an error wrapping ErrTooManyRows).
func InstallTemperatures(from, to units.Temperature, step units.TemperatureDifference, maxRows int) ([]units.Temperature, error) {
	if !(step > 0) {
		return nil, errors.New("calc: step must be greater than zero")
	}
	if from > to {
		return nil, errors.New("calc: the first installation temperature is above the last")
	}
	span := float64(to.Sub(from))
	n := math.Floor(span/float64(step)+1e-9) + 1
	last := from.Add(units.TemperatureDifference((n - 1) * float64(step)))
	extra := math.Abs(float64(to.Sub(last))) > 1e-9*math.Max(1, span)
	if extra {
		n++
	}
	if n > float64(maxRows) {
		return nil, ErrTooManyRows
	}
	ts := make([]units.Temperature, 0, int(n))
	for i := 0; i < int(n); i++ {
		t := from.Add(units.TemperatureDifference(float64(i) * float64(step)))
		if t > to || (extra && i == int(n)-1) {
			t = to
		}
		ts = append(ts, t)
	}
	return ts, nil
}

// SlabJointSpacing returns the rule-of-thumb range of contraction-joint
// spacing for a concrete slab on ground of the given thickness: 24 to 36
// times the thickness (ACI 302.1R, Guide to Concrete Floor and Slab
// Construction, as quoted in secondary sources; a rule of thumb).
func SlabJointSpacing(thicknessM float64) (minM, maxM float64) {
	return 24 * thicknessM, 36 * thicknessM
}
