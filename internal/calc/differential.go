package calc

import "math"

// Differential movement, bonded bilayers and thin films.
//
// Sign convention throughout: the mismatch strain is e_a - e_b, the free
// strain of layer (or member) a less that of b. A positive curvature
// bends the strip with layer a on the convex face: a strip whose layer a
// grows more than b bows away from a, towards b. Deflections take the
// sign of the curvature.

// DifferentialMovement returns the free differential movement of two
// members of common length lengthM whose free linear strains are strainA
// and strainB: L (e_a - e_b), positive when a grows more than b.
func DifferentialMovement(lengthM, strainA, strainB float64) float64 {
	return lengthM * (strainA - strainB)
}

// Bilayer is a strip of two bonded layers a and b: thicknesses in metres,
// Young's moduli in pascals.
type Bilayer struct {
	ThicknessAM, ThicknessBM float64
	ModulusAPa, ModulusBPa   float64
}

// Thickness returns the total thickness h = t_a + t_b.
func (b Bilayer) Thickness() float64 { return b.ThicknessAM + b.ThicknessBM }

// Curvature returns the curvature, 1/m, of the free bonded strip under
// the mismatch strain e_a - e_b, by Timoshenko (1925), "Analysis of
// bi-metal thermostats", J. Opt. Soc. Am. 11:233, general formula:
//
//	1/rho = 6 (a2 - a1) dT (1 + m)^2 / (h [3 (1 + m)^2 + (1 + m n)(m^2 + 1/(m n))])
//
// with m = t1/t2, n = E1/E2, h = t1 + t2. Layer 1 here is b and layer 2
// is a, and (a2 - a1) dT is the mismatch strain, so that each layer may
// take its own uniform temperature change. Beam theory (a strip in
// uniaxial bending): for a wide plate use the biaxial moduli E/(1 - nu).
// For equal thickness and modulus it reduces to 3 (e_a - e_b) / (2 h).
func (b Bilayer) Curvature(mismatch float64) float64 {
	m := b.ThicknessBM / b.ThicknessAM
	n := b.ModulusBPa / b.ModulusAPa
	h := b.Thickness()
	p := (1 + m) * (1 + m)
	return 6 * mismatch * p / (h * (3*p + (1+m*n)*(m*m+1/(m*n))))
}

// LayerStresses are the axial stresses, Pa, in the layers of a long free
// bonded strip away from its ends (where the interface shear has built
// up the whole layer force), tension positive.
type LayerStresses struct {
	// ForcePerWidth is the axial force in each layer per unit width of
	// the strip, N/m: tension in b and compression in a when the
	// curvature is positive. It is also the force the interface shear
	// passes between the layers from a free end to the centre.
	ForcePerWidth      float64
	AInterface, AOuter float64 // layer a at the interface and at its free face
	BInterface, BOuter float64 // layer b at the interface and at its free face
}

// Stresses returns the layer stresses of the strip bent to curvature
// kappa (from Curvature). Timoshenko (1925) writes the equilibrium of a
// cross-section of the free strip: the layer forces are equal and
// opposite, P1 = P2 = P, and their couple balances the layers' bending
// moments, P h / 2 = (E1 I1 + E2 I2) / rho; per unit width I = t^3 / 12,
// so P = (E1 t1^3 + E2 t2^3) kappa / (6 h). Each layer's stress is its
// axial force over its thickness plus its own bending stress
// E kappa y about its mid-thickness. (The equilibrium is from memory of
// Timoshenko 1925, not re-read; the tests check the interface strain
// compatibility that his derivation imposes.)
func (b Bilayer) Stresses(kappa float64) LayerStresses {
	ta, tb := b.ThicknessAM, b.ThicknessBM
	ea, eb := b.ModulusAPa, b.ModulusBPa
	p := (ea*ta*ta*ta + eb*tb*tb*tb) * kappa / (6 * b.Thickness())
	// The centre of curvature lies beyond the b face: b's interface
	// fibre is on the outside of b's own bending, a's on the inside.
	return LayerStresses{
		ForcePerWidth: p,
		BInterface:    p/tb + eb*kappa*tb/2,
		BOuter:        p/tb - eb*kappa*tb/2,
		AInterface:    -p/ta - ea*kappa*ta/2,
		AOuter:        -p/ta + ea*kappa*ta/2,
	}
}

// CantileverTip returns the tip deflection of a strip of length spanM,
// clamped at one end, bent into a circular arc of curvature kappa:
// exactly R (1 - cos(L/R)) = 2 sin^2(kappa L / 2) / kappa, measured
// perpendicular to the clamped tangent (plane geometry of a circle).
// For small kappa L it is kappa L^2 / 2.
func CantileverTip(kappa, spanM float64) float64 {
	if kappa == 0 {
		return 0
	}
	s := math.Sin(kappa * spanM / 2)
	return 2 * s * s / kappa
}

// MidspanRise returns the midspan deflection, relative to the supports,
// of a strip of length spanM (measured along the strip) resting on two
// end supports, one free to slide, bent into a circular arc of curvature
// kappa: exactly R (1 - cos(L / (2R))) = 2 sin^2(kappa L / 4) / kappa.
// For small kappa L it is kappa L^2 / 8.
func MidspanRise(kappa, spanM float64) float64 {
	if kappa == 0 {
		return 0
	}
	s := math.Sin(kappa * spanM / 4)
	return 2 * s * s / kappa
}

// Flexivity returns the flexivity of a thermostat strip as ASTM B106
// defines it, F = t (1/R2 - 1/R1) / (T2 - T1): total thickness times the
// change of curvature per unit temperature change, 1/K. For equal layers
// Timoshenko's reduction gives F = 3 (a_a - a_b) / 2.
func Flexivity(thicknessM, deltaCurvature, deltaK float64) float64 {
	return thicknessM * deltaCurvature / deltaK
}

// BiaxialModulus returns E / (1 - nu), the modulus of a thin plate under
// equal in-plane strains in every direction.
func BiaxialModulus(modulusPa, poisson float64) float64 { return modulusPa / (1 - poisson) }

// StoneyStress returns the stress, Pa, of a thin film of thickness filmM
// on a substrate of thickness substrateM from the curvature kappa it
// gives the substrate, by Stoney (1909), "The tension of metallic films
// deposited by electrolysis", Proc. R. Soc. Lond. A 82:172, in its
// biaxial form: sigma_f = E_s t_s^2 kappa / (6 t_f (1 - nu_s)). kappa is
// positive when the film lies on the concave face (film in tension).
// It holds for a film much thinner than the substrate.
func StoneyStress(kappa, filmM, substrateM, substrateModulusPa, substratePoisson float64) float64 {
	return BiaxialModulus(substrateModulusPa, substratePoisson) * substrateM * substrateM * kappa / (6 * filmM)
}

// StoneyCurvature is the inverse of StoneyStress: the curvature a film
// stress gives the substrate, positive with the film on the concave face.
func StoneyCurvature(filmStressPa, filmM, substrateM, substrateModulusPa, substratePoisson float64) float64 {
	return 6 * filmStressPa * filmM / (BiaxialModulus(substrateModulusPa, substratePoisson) * substrateM * substrateM)
}

// FilmMismatchStress returns the equi-biaxial stress, Pa, of a thin film
// held by a thick substrate to the substrate's strain: the film is
// strained by e_s - e_f, so sigma_f = E_f / (1 - nu_f) (e_s - e_f);
// negative (compression) when the film would grow more than the
// substrate (Hooke's law for equal biaxial strain; the film term of
// Stoney's analysis).
func FilmMismatchStress(filmStrain, substrateStrain, filmModulusPa, filmPoisson float64) float64 {
	return BiaxialModulus(filmModulusPa, filmPoisson) * (substrateStrain - filmStrain)
}
