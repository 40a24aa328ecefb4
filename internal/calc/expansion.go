package calc

import (
	"math"

	"github.com/thermalmovement/service/internal/units"
)

// Linear is the result of a length's expansion.
type Linear struct {
	DeltaLengthM float64 // change of length, m
	FinalLengthM float64 // length at the final temperature, m
	Strain       float64 // DeltaLength / Length
	AlphaMean    float64 // mean coefficient over the interval, per K (0 when dT is 0)
}

// LinearStrain returns the expansion of lengthM under the linear strain
// e: dL = e L0, L = L0 (1 + e). With a constant mean coefficient,
// e = alpha dT (ASTM E228: the mean coefficient is (1/L0) dL/dT, L0 at
// the initial temperature), so dL = alpha L0 dT exactly.
func LinearStrain(lengthM, strain float64, dT units.TemperatureDifference) Linear {
	r := Linear{DeltaLengthM: strain * lengthM, FinalLengthM: lengthM * (1 + strain), Strain: strain}
	if dT != 0 {
		r.AlphaMean = strain / float64(dT)
	}
	return r
}

// LinearConst returns the expansion of lengthM by a constant mean
// coefficient alphaPerK over dT.
func LinearConst(lengthM, alphaPerK float64, dT units.TemperatureDifference) Linear {
	r := LinearStrain(lengthM, alphaPerK*float64(dT), dT)
	r.AlphaMean = alphaPerK
	return r
}

// Area is the result of an area's expansion.
type Area struct {
	DeltaAreaM2       float64 // exact: A ((1 + ex)(1 + ey) - 1)
	FinalAreaM2       float64
	DeltaAreaLinearM2 float64 // first-order: A (ex + ey), the familiar 2 alpha A dT
}

// AreaStrain returns the expansion of an area whose two in-plane
// directions take the linear strains ex and ey (equal for an isotropic
// material). A hole grows as the material around it: each length in the
// plane, the hole's edge included, scales by (1 + e).
func AreaStrain(areaM2, ex, ey float64) Area {
	final := areaM2 * (1 + ex) * (1 + ey)
	return Area{DeltaAreaM2: areaM2 * (ex + ey + ex*ey), FinalAreaM2: final, DeltaAreaLinearM2: areaM2 * (ex + ey)}
}

// CircleArea returns the area of a circle of diameter dM.
func CircleArea(dM float64) float64 { return math.Pi * dM * dM / 4 }

// Volume is the result of a volume's expansion.
type Volume struct {
	DeltaVolumeM3       float64 // exact
	FinalVolumeM3       float64
	DeltaVolumeLinearM3 float64 // first-order: 3 e V (solid), or beta V dT
}

// SolidVolume returns the expansion of an isotropic solid of volume
// volumeM3 under the linear strain e: V (1 + e)^3 exactly, and the
// first-order 3 e V (beta = 3 alpha) beside it.
func SolidVolume(volumeM3, e float64) Volume {
	g := e * (3 + e*(3+e)) // (1 + e)^3 - 1 without cancellation
	return Volume{DeltaVolumeM3: volumeM3 * g, FinalVolumeM3: volumeM3 * (1 + g), DeltaVolumeLinearM3: 3 * e * volumeM3}
}

// VolumeBeta returns the expansion of volumeM3 by a mean volumetric
// coefficient betaPerK over dT: dV = beta V dT (beta is the mean
// coefficient (1/V0) dV/dT, so the linear form is the definition).
func VolumeBeta(volumeM3, betaPerK float64, dT units.TemperatureDifference) Volume {
	d := betaPerK * float64(dT) * volumeM3
	return Volume{DeltaVolumeM3: d, FinalVolumeM3: volumeM3 + d, DeltaVolumeLinearM3: d}
}

// VolumeDensity returns the expansion of a mass of liquid of volume
// volumeM3 at density rho1, brought to density rho2: V2 = V1 rho1 / rho2.
// The linearised term uses the mean volumetric coefficient over the
// interval, which is the same change: it is reported equal.
func VolumeDensity(volumeM3, rho1, rho2 float64) Volume {
	final := volumeM3 * rho1 / rho2
	return Volume{DeltaVolumeM3: final - volumeM3, FinalVolumeM3: final, DeltaVolumeLinearM3: final - volumeM3}
}

// Vessel is a liquid in a container that expands with it.
type Vessel struct {
	DeltaVolumeM3 float64 // the container's change of capacity
	FinalVolumeM3 float64 // its capacity at the final temperature
	// NetOverflowM3 is the final liquid volume less the final capacity:
	// positive, that much liquid spills out (or must be taken up by an
	// expansion tank); negative, that much free space is left.
	NetOverflowM3 float64
}

// InVessel returns the container's change of capacity, capacityM3 at the
// initial temperature scaling as (1 + e)^3 for an isotropic solid wall
// with linear strain e, and the liquid's net overflow given its final
// volume.
func InVessel(capacityM3, e, liquidFinalM3 float64) Vessel {
	v := SolidVolume(capacityM3, e)
	return Vessel{DeltaVolumeM3: v.DeltaVolumeM3, FinalVolumeM3: v.FinalVolumeM3, NetOverflowM3: liquidFinalM3 - v.FinalVolumeM3}
}

// Water density by Kell (1975), J. Chem. Eng. Data 20:97, eq. for
// 0..150 degC at 1 atm (ITS-90 restated coefficients as printed there):
// rho = (999.83952 + 16.945176 t - 7.9870401e-3 t^2 - 46.170461e-6 t^3
// + 105.56302e-9 t^4 - 280.54253e-12 t^5) / (1 + 16.879850e-3 t), kg/m3.
var (
	waterLo = units.Celsius(0)
	waterHi = units.Celsius(150)
)

// WaterDensity returns the density of air-free water at t in kg/m3 by
// Kell's equation; outside 0..150 degC it returns ErrOutOfRange.
func WaterDensity(t units.Temperature) (float64, error) {
	if t < waterLo || t > waterHi {
		return 0, ErrOutOfRange
	}
	return WaterDensityAnyT(t), nil
}

// WaterDensityAnyT evaluates Kell's equation without the range check.
func WaterDensityAnyT(t units.Temperature) float64 {
	c := t.Celsius()
	num := horner(kellNumerator[:], c)
	return num / (1 + 16.879850e-3*c)
}

// WaterRange returns the range of Kell's equation.
func WaterRange() (lo, hi units.Temperature) { return waterLo, waterHi }

var kellNumerator = [...]float64{999.83952, 16.945176, -7.9870401e-3, -46.170461e-6, 105.56302e-9, -280.54253e-12}
