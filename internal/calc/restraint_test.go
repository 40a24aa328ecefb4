package calc_test

import (
	"math"
	"testing"

	"github.com/thermalmovement/service/internal/calc"
)

func TestRestraintWorkedExample(t *testing.T) {
	// Hibbeler, Mechanics of Materials, thermal stress example: an A-36
	// steel bar 0.5 in x 0.5 in fits snugly between two rigid supports at
	// 60 degF and is heated to 120 degF; alpha = 6.60e-6/degF,
	// E = 29e3 ksi; F = 2.87 kip, sigma = 11.5 ksi (compression).
	// Values from memory of Hibbeler, not re-read.
	const psi, lbf, in = 6894.757293168, 4.4482216152605, 0.0254 // NIST SP 811 [read]
	alpha := 6.60e-6 * 1.8                                       // per K
	dT := 60 / 1.8                                               // K
	e := 29e6 * psi
	area := 0.25 * in * in
	r := calc.Restraint(alpha*dT, e, 1, 2*12*in)
	if got := r.StressPa / (1000 * psi); math.Abs(got-(-11.5)) > 0.05 {
		t.Errorf("Restraint stress = %v ksi, want -11.5 ksi", got)
	}
	if got := r.StressPa * area / (1000 * lbf); math.Abs(got-(-2.87)) > 0.005 {
		t.Errorf("Restraint force = %v kip, want -2.87 kip", got)
	}
	if r.MovementM != 0 {
		t.Errorf("fully restrained movement = %v, want 0", r.MovementM)
	}
}

func TestRestraintLinear(t *testing.T) {
	// sigma = -R E alpha dT: partial restraint scales the stress linearly
	// (fully restrained bar of Gere and Timoshenko scaled by R; property test,
	// common practice, no published source for the scaling itself).
	e, strain := 200e9, 12e-6*35
	full := calc.Restraint(strain, e, 1, 10).StressPa
	if want := -e * strain; !near(full, want, 1e-12) {
		t.Errorf("full restraint stress = %v, want %v", full, want)
	}
	for _, r := range []float64{0, 0.25, 0.5, 0.9} {
		got := calc.Restraint(strain, e, r, 10)
		if !near(got.StressPa, r*full, 1e-12) && !(r == 0 && got.StressPa == 0) {
			t.Errorf("Restraint(R=%v) stress = %v, want %v", r, got.StressPa, r*full)
		}
		if want := (1 - r) * strain * 10; !near(got.MovementM, want, 1e-12) {
			t.Errorf("Restraint(R=%v) movement = %v, want %v", r, got.MovementM, want)
		}
	}
}

func TestEffectiveRestraint(t *testing.T) {
	// Springs in series (Gere and Timoshenko, statically indeterminate axial
	// members): the force in a member of free expansion d between a rigid
	// support and a spring k is F = d / (1/k + L/(E A)). Solve it that way
	// and compare R E A e with it.
	e, a, l, strain := 210e9, 4.5e-3, 12.0, 12e-6*40
	axial := e * a / l
	for _, k := range []float64{1e5, axial, 10 * axial, 1e12} {
		r := calc.EffectiveRestraint(k, e, a, l)
		f := strain * l / (1/k + l/(e*a))
		if got := r * e * a * strain; !near(got, f, 1e-12) {
			t.Errorf("k=%v: R E A e = %v, want %v", k, got, f)
		}
		if r <= 0 || r >= 1 {
			t.Errorf("k=%v: R = %v, want within (0, 1)", k, r)
		}
	}
	if r := calc.EffectiveRestraint(axial, e, a, l); !near(r, 0.5, 1e-15) {
		t.Errorf("k = EA/L: R = %v, want 0.5", r)
	}
}

func TestEffectiveLengthFactor(t *testing.T) {
	// Theoretical K of ideal struts: AISC Specification commentary table of
	// effective length factors (0.5 fixed-fixed, 0.7 fixed-pinned, 1.0
	// pinned-pinned, 2.0 fixed-free); Timoshenko and Gere, Theory of Elastic
	// Stability. Values from memory, not re-read.
	for name, want := range map[string]float64{"pinned": 1, "fixed": 0.5, "fixed-pinned": 0.7, "cantilever": 2} {
		if got, ok := calc.EffectiveLengthFactor(name); !ok || got != want {
			t.Errorf("EffectiveLengthFactor(%q) = %v, %v; want %v", name, got, ok, want)
		}
	}
	if _, ok := calc.EffectiveLengthFactor("hinged"); ok {
		t.Errorf("EffectiveLengthFactor(hinged) ok, want unknown")
	}
}

func TestCriticalDeltaT(t *testing.T) {
	// Euler: P_cr = pi^2 E I / (K L)^2 and the thermal force R E A alpha dT
	// (any structural stability text, e.g. Timoshenko and Gere; [memory]).
	// A 168.3 x 7.1 mm steel pipe (demo data): A and I from the annulus.
	do, wall := 0.1683, 0.0071
	di := do - 2*wall
	a := math.Pi / 4 * (do*do - di*di)
	i := math.Pi / 64 * (do*do*do*do - di*di*di*di)
	rg := math.Sqrt(i / a)
	e, alpha := 210e9, 12e-6
	for _, c := range []struct {
		end string
		l   float64
		r   float64
	}{{"pinned", 8, 1}, {"fixed", 8, 1}, {"fixed-pinned", 6, 0.6}, {"cantilever", 3, 1}} {
		k, _ := calc.EffectiveLengthFactor(c.end)
		dt := calc.CriticalDeltaT(alpha, rg, k, c.l, c.r)
		// At dT_cr the restrained thermal force equals the Euler load.
		if f, p := c.r*e*a*alpha*dt, calc.EulerLoad(e, i, k, c.l); !near(f, p, 1e-12) {
			t.Errorf("%s: force at dT_cr = %v, Euler load %v", c.end, f, p)
		}
		// Euler stress pi^2 E / (KL/r)^2 = P_cr / A.
		if s, p := calc.EulerStress(e, rg, k, c.l), calc.EulerLoad(e, i, k, c.l)/a; !near(s, p, 1e-12) {
			t.Errorf("%s: EulerStress = %v, want %v", c.end, s, p)
		}
	}
	// Fully restrained pinned strut: dT_cr = pi^2 r^2 / (alpha L^2) [memory, verification.md].
	if got, want := calc.CriticalDeltaT(alpha, rg, 1, 8, 1), math.Pi*math.Pi*rg*rg/(alpha*64); !near(got, want, 1e-12) {
		t.Errorf("CriticalDeltaT = %v, want %v", got, want)
	}
	if !math.IsInf(calc.CriticalDeltaT(alpha, rg, 1, 8, 0), 1) {
		t.Errorf("an unrestrained member never buckles thermally: want +Inf")
	}
}

func TestGradient(t *testing.T) {
	// kappa = alpha (dT_top - dT_bottom) / depth (Gere, Mechanics of
	// Materials, beams with temperature differentials; from memory, not re-read).
	alpha, depth := 10e-6, 0.4
	k := calc.GradientCurvature(alpha, 15, -5, depth)
	if want := alpha * 20 / depth; !near(k, want, 1e-12) {
		t.Errorf("GradientCurvature = %v, want %v", k, want)
	}
	if k2 := calc.GradientCurvature(alpha, 30, -10, depth); !near(k2, 2*k, 1e-12) {
		t.Errorf("doubling the gradient: %v, want %v", k2, 2*k)
	}
	if z := calc.GradientCurvature(alpha, 12, 12, depth); z != 0 {
		t.Errorf("uniform temperature: curvature %v, want 0", z)
	}
	// Fixed-fixed member: M / (E I) cancels the free curvature (same source).
	e, i := 33e9, 2.1e-3
	if m := calc.FixedEndMoment(e, i, k); !near(m/(e*i), k, 1e-12) {
		t.Errorf("FixedEndMoment / EI = %v, want %v", m/(e*i), k)
	}
	// Fully restrained (axially and against rotation), the stress at a
	// face is -E alpha dT there (Timoshenko and Goodier, thermal stresses
	// in beams; from memory, not re-read): top 15 K, bottom -5 K, mean 5 K.
	axial := -e * alpha * 5
	b := calc.HeldCurvatureStress(e, k, depth)
	if top, bottom := axial-b, axial+b; !near(top, -e*alpha*15, 1e-12) || !near(bottom, -e*alpha*-5, 1e-12) {
		t.Errorf("face stresses %v, %v; want %v, %v", top, bottom, -e*alpha*15, e*alpha*5)
	}
	// And it is M c / I with M the end moment, c = depth/2 (same source).
	m := calc.FixedEndMoment(e, i, k)
	if !near(b, m*(depth/2)/i, 1e-12) {
		t.Errorf("HeldCurvatureStress = %v, want M c / I = %v", b, m*(depth/2)/i)
	}
}
