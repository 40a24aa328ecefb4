package calc

import "math"

// Restrained members: stress and force where a member cannot move freely,
// Euler thermal buckling, and temperature gradients through the depth.
//
// Sign convention: stresses and forces are positive in tension, so a
// restrained member that is heated is in compression (negative).

// EffectiveRestraint returns the degree of restraint of a member of axial
// stiffness E A / L held between a rigid support and a spring of
// stiffness k, N/m: R = k / (k + E A / L).
//
// Derivation (equilibrium and compatibility of a statically indeterminate
// axial member, as in Gere and Timoshenko, Mechanics of Materials; the
// member and the spring act as two springs in series): the member's free
// expansion e L is shared between the spring's shortening d_s = F / k
// and the member's own elastic shortening F L / (E A), so
// e L = F / k + F L / (E A), F = E A e k / (k + E A / L) = R E A e.
// R runs from 0 (k = 0: free) to 1 (k infinite: rigid).
func EffectiveRestraint(stiffnessNPerM, modulusPa, areaM2, lengthM float64) float64 {
	axial := modulusPa * areaM2 / lengthM
	return stiffnessNPerM / (stiffnessNPerM + axial)
}

// Restrained is the state of a member whose free thermal strain is partly
// or wholly prevented.
type Restrained struct {
	StressPa float64 // -R E e_free, tension positive
	// ElasticStrain is the strain the restraint imposes, -R e_free.
	ElasticStrain float64
	// MovementM is the movement the member still makes at its free or
	// spring end, (1 - R) e_free L; zero when the length is not given.
	MovementM float64
}

// Restraint returns the stress of a member of modulus modulusPa whose
// free strain is freeStrain, restrained to the degree restraint (0 free,
// 1 fully restrained): sigma = -R E e_free. With R = 1 this is the
// fully restrained bar of the mechanics-of-materials texts (Gere and
// Timoshenko; Hibbeler): sigma = -E alpha dT. Linear-elastic: it does
// not hold once the member yields or buckles.
func Restraint(freeStrain, modulusPa, restraint, lengthM float64) Restrained {
	return Restrained{
		StressPa:      -restraint * modulusPa * freeStrain,
		ElasticStrain: -restraint * freeStrain,
		MovementM:     (1 - restraint) * freeStrain * lengthM,
	}
}

// EffectiveLengthFactor returns the theoretical effective-length factor K
// of an ideal strut for the end condition named: pinned 1, fixed 0.5,
// fixed-pinned 0.7, cantilever (fixed-free) 2 (Timoshenko and Gere,
// Theory of Elastic Stability, ch. 2; the theoretical K values tabulated
// in the AISC Specification commentary). It reports false for an
// unknown name.
func EffectiveLengthFactor(endCondition string) (float64, bool) {
	switch endCondition {
	case "pinned":
		return 1, true
	case "fixed":
		return 0.5, true
	case "fixed-pinned":
		return 0.7, true
	case "cantilever":
		return 2, true
	}
	return 0, false
}

// EndConditions lists the names EffectiveLengthFactor knows.
func EndConditions() []string { return []string{"pinned", "fixed", "fixed-pinned", "cantilever"} }

// EulerLoad returns the Euler critical load, N, of a straight elastic
// strut: P_cr = pi^2 E I / (K L)^2.
func EulerLoad(modulusPa, secondMomentM4, k, lengthM float64) float64 {
	kl := k * lengthM
	return math.Pi * math.Pi * modulusPa * secondMomentM4 / (kl * kl)
}

// EulerStress returns the Euler critical stress, Pa, pi^2 E / (K L / r)^2,
// with r the radius of gyration.
func EulerStress(modulusPa, radiusM, k, lengthM float64) float64 {
	s := k * lengthM / radiusM
	return math.Pi * math.Pi * modulusPa / (s * s)
}

// CriticalDeltaT returns the temperature rise, K, at which a strut of
// radius of gyration radiusM, restrained to the degree restraint, reaches
// its Euler load: R E A alpha dT = pi^2 E I / (K L)^2, so
// dT_cr = pi^2 r^2 / (R alpha (K L)^2) (any structural stability text;
// for R = 1 the familiar pi^2 r^2 / (alpha (K L)^2)). It returns +Inf
// when nothing restrains the member or alpha is zero.
func CriticalDeltaT(alphaPerK, radiusM, k, lengthM, restraint float64) float64 {
	d := restraint * alphaPerK
	if d == 0 {
		return math.Inf(1)
	}
	kl := k * lengthM
	return math.Pi * math.Pi * radiusM * radiusM / (d * kl * kl)
}

// GradientCurvature returns the free curvature, 1/m, of a member of depth
// depthM whose temperature changes linearly through the depth, by
// dTtop at the top face and dTbottom at the bottom:
// kappa = alpha (dT_top - dT_bottom) / depth (Timoshenko and Goodier,
// Theory of Elasticity, thermal stresses in beams; Gere, Mechanics of
// Materials, beams with temperature effects). Positive when the top is
// warmer: the top face lengthens and the member bows upward (hogs).
func GradientCurvature(alphaPerK, dTtopK, dTbottomK, depthM float64) float64 {
	return alphaPerK * (dTtopK - dTbottomK) / depthM
}

// FixedEndMoment returns the moment, N m, that the ends of a fixed-fixed
// member apply to hold straight a free thermal curvature kappa:
// M = E I kappa, the same all along the member (the restraining moment
// cancels the free curvature, M / (E I) = kappa). Positive when it
// compresses the top face, i.e. for a warmer top.
func FixedEndMoment(modulusPa, secondMomentM4, kappa float64) float64 {
	return modulusPa * secondMomentM4 * kappa
}

// HeldCurvatureStress returns the bending stress, Pa, at the faces of a
// member of depth depthM, symmetric about mid-depth, whose free thermal
// curvature kappa is held by its end moment: sigma = M (h/2) / I =
// E kappa h / 2, compression at the top for a positive (warmer top)
// kappa, tension at the bottom. With the axial part of full restraint
// added, the stress at a face is -E alpha dT there, the fully restrained
// thermal stress of Timoshenko and Goodier (Theory of Elasticity, thermal
// stresses in beams; from memory, not re-read).
func HeldCurvatureStress(modulusPa, kappa, depthM float64) float64 {
	return modulusPa * kappa * depthM / 2
}
