package calc_test

import (
	"math"
	"testing"

	"github.com/thermalmovement/service/internal/calc"
)

func near(got, want, rel float64) bool {
	if want == 0 {
		return math.Abs(got) < 1e-300+rel*1e-30
	}
	return math.Abs(got-want) <= rel*math.Abs(want)
}

// timoshenkoBySystem solves the bilayer from the equations Timoshenko
// (1925) writes down before he reduces them to his closed form: equal and
// opposite layer forces, moment equilibrium P h/2 = (E1 I1 + E2 I2) kappa
// and continuity of strain at the interface. Layer 1 is b, layer 2 is a.
// It is an independent route to the curvature: a linear 2x2 system in
// (P, kappa) per unit width.
func timoshenkoBySystem(b calc.Bilayer, mismatch float64) float64 {
	t1, t2, e1, e2 := b.ThicknessBM, b.ThicknessAM, b.ModulusBPa, b.ModulusAPa
	h := t1 + t2
	// Interface strain continuity: e1 + P/(E1 t1) + kappa t1/2 = e2 - P/(E2 t2) - kappa t2/2
	//   => P (1/(E1 t1) + 1/(E2 t2)) + kappa h/2 = e2 - e1 = mismatch
	// Moment equilibrium: P h/2 - kappa (E1 t1^3 + E2 t2^3)/12 = 0
	a11, a12 := 1/(e1*t1)+1/(e2*t2), h/2
	a21, a22 := h/2, -(e1*t1*t1*t1+e2*t2*t2*t2)/12
	det := a11*a22 - a12*a21
	return (a11*0 - a21*mismatch) / det
}

func TestBilayerCurvature(t *testing.T) {
	cases := []struct {
		name string
		b    calc.Bilayer
		mis  float64
	}{
		{"equal", calc.Bilayer{ThicknessAM: 0.5e-3, ThicknessBM: 0.5e-3, ModulusAPa: 200e9, ModulusBPa: 200e9}, 1e-3},
		{"thin a stiff b", calc.Bilayer{ThicknessAM: 0.2e-3, ThicknessBM: 1.3e-3, ModulusAPa: 70e9, ModulusBPa: 210e9}, 4e-4},
		{"thick soft a", calc.Bilayer{ThicknessAM: 6e-3, ThicknessBM: 2e-3, ModulusAPa: 3e9, ModulusBPa: 200e9}, -2e-3},
		{"coating", calc.Bilayer{ThicknessAM: 50e-6, ThicknessBM: 3e-3, ModulusAPa: 110e9, ModulusBPa: 70e9}, 1e-4},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			got := c.b.Curvature(c.mis)
			// Timoshenko (1925) equilibrium and compatibility, solved as a
			// linear system (see timoshenkoBySystem) [read: formula in
			// verification.md; the system is the mechanics it reduces].
			if want := timoshenkoBySystem(c.b, c.mis); !near(got, want, 1e-9) {
				t.Errorf("Curvature(%v) = %v, want %v (Timoshenko 1925 equations)", c.mis, got, want)
			}
			// Swapping the layers describes the same strip: the mismatch
			// a - b changes sign and so does the curvature, which is
			// signed by layer a (Timoshenko 1925: the formula is symmetric
			// under m -> 1/m, n -> 1/n, so only the sign flips).
			sw := calc.Bilayer{ThicknessAM: c.b.ThicknessBM, ThicknessBM: c.b.ThicknessAM, ModulusAPa: c.b.ModulusBPa, ModulusBPa: c.b.ModulusAPa}
			if s := sw.Curvature(-c.mis); !near(s, -got, 1e-12) {
				t.Errorf("swapped Curvature(%v) = %v, want %v", -c.mis, s, -got)
			}
			// Property: linear in the mismatch (common practice, no published source).
			if d := c.b.Curvature(2 * c.mis); !near(d, 2*got, 1e-12) {
				t.Errorf("Curvature(2 x %v) = %v, want %v", c.mis, d, 2*got)
			}
			if z := c.b.Curvature(0); z != 0 {
				t.Errorf("Curvature(0) = %v, want 0", z)
			}
		})
	}
}

func TestBilayerEqualReduction(t *testing.T) {
	// Timoshenko (1925): equal thickness and modulus give
	// 1/rho = 3 (a2 - a1) dT / (2 h) [read, verification.md].
	for _, h := range []float64{0.2e-3, 1e-3, 12e-3} {
		b := calc.Bilayer{ThicknessAM: h / 2, ThicknessBM: h / 2, ModulusAPa: 150e9, ModulusBPa: 150e9}
		da, dT := 18.5e-6-1.2e-6, 40.0
		if got, want := b.Curvature(da*dT), 3*da*dT/(2*h); !near(got, want, 1e-12) {
			t.Errorf("h=%v: Curvature = %v, want %v", h, got, want)
		}
	}
}

func TestBilayerThinFilmLimit(t *testing.T) {
	// As t_a/t_b -> 0, Timoshenko's formula tends to Stoney's (1909)
	// uniaxial result kappa = 6 E_f t_f (e_f - e_s) / (E_s t_s^2) [read,
	// verification.md gives Stoney's equation]: the relative difference
	// falls like the thickness ratio.
	ef, es, ts := 110e9, 70e9, 2e-3
	mis := 3e-4
	for _, tf := range []float64{2e-6, 2e-7} {
		b := calc.Bilayer{ThicknessAM: tf, ThicknessBM: ts, ModulusAPa: ef, ModulusBPa: es}
		want := 6 * ef * tf * mis / (es * ts * ts)
		if got := b.Curvature(mis); !near(got, want, 10*tf/ts) {
			t.Errorf("tf=%v: Curvature = %v, want Stoney %v", tf, got, want)
		}
	}
}

func TestFlexivityEqualLayers(t *testing.T) {
	// ASTM B106 defines F = t (1/R2 - 1/R1) / (T2 - T1) [read]; with
	// Timoshenko's equal-layer curvature 3 (a2 - a1) dT / (2 t) this is
	// F = 3 (a2 - a1) / 2, whatever the thickness and the interval.
	aHigh, aLow := 20e-6, 1.5e-6
	for _, c := range []struct{ t, dT float64 }{{1e-3, 50}, {0.3e-3, 10}, {2e-3, -30}} {
		b := calc.Bilayer{ThicknessAM: c.t / 2, ThicknessBM: c.t / 2, ModulusAPa: 170e9, ModulusBPa: 170e9}
		k := b.Curvature((aHigh - aLow) * c.dT)
		if got, want := calc.Flexivity(c.t, k, c.dT), 1.5*(aHigh-aLow); !near(got, want, 1e-12) {
			t.Errorf("Flexivity(t=%v, dT=%v) = %v, want %v", c.t, c.dT, got, want)
		}
	}
}

func TestLayerStresses(t *testing.T) {
	b := calc.Bilayer{ThicknessAM: 0.4e-3, ThicknessBM: 1.1e-3, ModulusAPa: 70e9, ModulusBPa: 200e9}
	ea, eb := 23e-6*60, 12e-6*60
	k := b.Curvature(ea - eb)
	s := b.Stresses(k)
	// Strain continuity at the interface, the compatibility condition of
	// Timoshenko (1925): free strain plus elastic strain equal in both layers.
	if a, bb := ea+s.AInterface/b.ModulusAPa, eb+s.BInterface/b.ModulusBPa; !near(a, bb, 1e-9) {
		t.Errorf("interface strain a = %v, b = %v; want equal", a, bb)
	}
	// No net force and no net moment on a free strip's cross-section
	// (statics; linear stress through each layer, per unit width).
	fa := (s.AInterface + s.AOuter) / 2 * b.ThicknessAM
	fb := (s.BInterface + s.BOuter) / 2 * b.ThicknessBM
	if math.Abs(fa+fb) > 1e-9*math.Abs(fa) {
		t.Errorf("net force %v + %v, want 0", fa, fb)
	}
	if !near(fb, s.ForcePerWidth, 1e-12) || s.ForcePerWidth <= 0 {
		t.Errorf("force in b = %v, ForcePerWidth = %v; want equal and tension", fb, s.ForcePerWidth)
	}
	// Moment about the interface (y measured into a positive): each layer's
	// linear stress integrated times y.
	mom := func(sInt, sOut, t, sign float64) float64 {
		// integral over y in [0, t] of (sInt + (sOut - sInt) y/t) y dy
		return sign * (sInt*t*t/2 + (sOut-sInt)*t*t/3)
	}
	if m := mom(s.AInterface, s.AOuter, b.ThicknessAM, 1) + mom(s.BInterface, s.BOuter, b.ThicknessBM, -1); math.Abs(m) > 1e-9*math.Abs(fa)*b.Thickness() {
		t.Errorf("net moment %v, want 0", m)
	}
}

func TestDeflections(t *testing.T) {
	// Plane geometry of a circular arc of radius R = 1/kappa.
	r := 0.8
	k := 1 / r
	// Arc length pi R clamped at one end: a semicircle, tip 2R off the tangent.
	if got := calc.CantileverTip(k, math.Pi*r); !near(got, 2*r, 1e-12) {
		t.Errorf("CantileverTip(semicircle) = %v, want %v", got, 2*r)
	}
	// Arc length pi R between supports: a semicircle, midspan R from the chord.
	if got := calc.MidspanRise(k, math.Pi*r); !near(got, r, 1e-12) {
		t.Errorf("MidspanRise(semicircle) = %v, want %v", got, r)
	}
	// Small deflections: kappa L^2 / 2 and kappa L^2 / 8 (beam theory, e.g.
	// Roark's Formulas for Stress and Strain, uniform moment cases; value
	// from memory of Roark, not re-read).
	k, L := 1e-4, 2.0
	if got, want := calc.CantileverTip(k, L), k*L*L/2; !near(got, want, 1e-7) {
		t.Errorf("CantileverTip small = %v, want %v", got, want)
	}
	if got, want := calc.MidspanRise(-k, L), -k*L*L/8; !near(got, want, 1e-7) {
		t.Errorf("MidspanRise small = %v, want %v", got, want)
	}
	if calc.CantileverTip(0, L) != 0 || calc.MidspanRise(0, L) != 0 {
		t.Errorf("zero curvature must give zero deflection")
	}
}

func TestStoney(t *testing.T) {
	// Stoney (1909): sigma_f = Es ts^2 kappa / (6 tf (1 - nu_s)) [read, verification.md].
	// A 1 um film on a 525 um silicon wafer, Es = 130 GPa, nu = 0.28 (values
	// from memory of Si(100) in-plane data, not re-read; the check is the formula).
	es, nu, ts, tf, kappa := 130e9, 0.28, 525e-6, 1e-6, 1/50.0
	want := es * ts * ts * kappa / (6 * tf * (1 - nu))
	got := calc.StoneyStress(kappa, tf, ts, es, nu)
	if !near(got, want, 1e-12) {
		t.Errorf("StoneyStress = %v, want %v", got, want)
	}
	if !near(want, 1.658854e8, 1e-6) { // hand arithmetic of the formula above
		t.Errorf("Stoney arithmetic %v, want about 165.89 MPa", want)
	}
	if back := calc.StoneyCurvature(got, tf, ts, es, nu); !near(back, kappa, 1e-12) {
		t.Errorf("StoneyCurvature(StoneyStress(k)) = %v, want %v", back, kappa)
	}
	// Biaxial Hooke's law: equal in-plane strains e give sigma = E e / (1 - nu)
	// (Timoshenko and Goodier, Theory of Elasticity, plane stress; value from
	// memory, not re-read). A film growing more than its substrate is compressed.
	if s := calc.FilmMismatchStress(2e-4, 1e-4, 100e9, 0.25); !near(s, -100e9*1e-4/0.75, 1e-12) {
		t.Errorf("FilmMismatchStress = %v, want %v", s, -100e9*1e-4/0.75)
	}
}

func TestDifferentialMovement(t *testing.T) {
	// Free movement L (a_a dT_a - a_b dT_b): definition of the mean
	// coefficient (ASTM E228) applied to each member.
	if got, want := calc.DifferentialMovement(6, 23e-6*40, 10e-6*15), 6*(23e-6*40-10e-6*15); !near(got, want, 1e-12) {
		t.Errorf("DifferentialMovement = %v, want %v", got, want)
	}
}
