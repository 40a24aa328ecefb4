package handlers

import (
	"math"
	"slices"
	"strings"
	"testing"
)

func TestDifferentialHTTP(t *testing.T) {
	r := newTestHandler(t).Router()
	tests := []struct {
		name   string
		query  string
		result string
		want   float64
		unit   string
	}{
		// Demo data: an aluminium mullion on the concrete frame of a demo office
		// facade. Coefficients of EN 1991-1-5 Table C.1 (aluminium 24e-6/K,
		// concrete 10e-6/K; from memory, not re-read):
		// 6 m x (24e-6 x 45 K - 10e-6 x 15 K) = 5.58 mm.
		{"mullion on frame", q("length", "6 m", "alpha_a", "24e-6/K", "alpha_b", "10e-6/K", "delta_t_a", "45 K", "delta_t_b", "15 K"), "differential_movement", 5.58, "mm"},
		// Same coefficients, one change of 30 K: 6 m x 14e-6 x 30 K = 2.52 mm.
		{"one delta_t", q("length", "6 m", "alpha_a", "24e-6/K", "alpha_b", "10e-6/K", "delta_t", "30 K"), "differential_movement", 2.52, "mm"},
		// Absolute temperatures: 10 degC to 40 degC is the same 30 K.
		{"absolute", q("length", "6 m", "alpha_a", "24e-6/K", "alpha_b", "10e-6/K", "t_initial", "10 degC", "t_final", "40 degC"), "differential_movement", 2.52, "mm"},
		// Timoshenko (1925) equal layers: 3 (a2 - a1) dT / (2 h) [read]:
		// 3 x 17e-6 x 50 / (2 x 1e-3 m) = 1.275 1/m.
		{"equal layers curvature", q("length", "60 mm", "alpha_a", "18.5e-6/K", "alpha_b", "1.5e-6/K", "delta_t", "50 K", "thickness_a", "0.5 mm", "thickness_b", "0.5 mm", "modulus_a", "170 GPa", "modulus_b", "170 GPa"), "curvature", 1.275, "1/m"},
		// ASTM B106 flexivity t (1/R2 - 1/R1)/(T2 - T1) [read] for equal layers
		// with Timoshenko's reduction: 3 (a2 - a1) / 2 = 2.55e-5 1/K.
		{"equal layers flexivity", q("length", "60 mm", "alpha_a", "18.5e-6/K", "alpha_b", "1.5e-6/K", "delta_t", "50 K", "thickness_a", "0.5 mm", "thickness_b", "0.5 mm", "modulus_a", "170 GPa", "modulus_b", "170 GPa"), "flexivity", 2.55e-5, "1/K"},
		// Circle geometry: tip of a 60 mm cantilever on radius 1/1.275 m is
		// 2 sin^2(kappa L / 2) / kappa.
		{"tip deflection", q("length", "60 mm", "alpha_a", "18.5e-6/K", "alpha_b", "1.5e-6/K", "delta_t", "50 K", "thickness_a", "0.5 mm", "thickness_b", "0.5 mm", "modulus_a", "170 GPa", "modulus_b", "170 GPa", "span", "60 mm"), "tip_deflection", 2 * math.Pow(math.Sin(1.275*0.06/2), 2) / 1.275 * 1e3, "mm"},
		{"midspan deflection", q("length", "60 mm", "alpha_a", "18.5e-6/K", "alpha_b", "1.5e-6/K", "delta_t", "50 K", "thickness_a", "0.5 mm", "thickness_b", "0.5 mm", "modulus_a", "170 GPa", "modulus_b", "170 GPa", "span", "60 mm"), "midspan_deflection", 2 * math.Pow(math.Sin(1.275*0.06/4), 2) / 1.275 * 1e3, "mm"},
		// Stoney (1909) biaxial [read]: a 1 um film, 525 um substrate of
		// E = 130 GPa, nu = 0.28, measured curvature 0.02 1/m with the film
		// concave (film a, so curvature -0.02 in this service's sign):
		// 130e9 x 525e-6^2 x 0.02 / (6 x 1e-6 x 0.72) = 165.885 MPa tension.
		{"stoney from curvature", q("length", "100 mm", "alpha_a", "3e-6/K", "alpha_b", "2.6e-6/K", "delta_t", "1 K", "thickness_a", "1 um", "thickness_b", "525 um", "modulus_a", "70 GPa", "modulus_b", "130 GPa", "film", "a", "poisson_a", "0.2", "poisson_b", "0.28", "measured_curvature", "-0.02 1/m"), "film_stress_from_curvature", 130e9 * 525e-6 * 525e-6 * 0.02 / (6 * 1e-6 * 0.72) / 1e6, "MPa"},
		// Biaxial Hooke's law (Timoshenko and Goodier, from memory): film a
		// grows 0.4e-6 x 100 K more than b: sigma = -70e9/(1 - 0.2) x 4e-5 = -3.5 MPa.
		{"film stress", q("length", "100 mm", "alpha_a", "3e-6/K", "alpha_b", "2.6e-6/K", "delta_t", "100 K", "thickness_a", "1 um", "thickness_b", "525 um", "modulus_a", "70 GPa", "modulus_b", "130 GPa", "film", "a", "poisson_a", "0.2", "poisson_b", "0.28"), "film_stress", -3.5, "MPa"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			d := decode(t, do(t, r, "GET", "/v1/differential?"+tt.query, "", ""))
			checkResult(t, d, tt.result, tt.want, tt.unit, 1e-9, 4)
		})
	}
}

// TestThinFilmBeamAndPlate: for a film 1/500 of its substrate, Timoshenko's
// (1925) bimetal curvature tends to the beam form 6 E_f t_f de / (E_s t_s^2)
// and Stoney's (1909) to the plate form with biaxial moduli, 6 E_f t_f de
// (1 - nu_s) / ((1 - nu_f) E_s t_s^2) (both read): their quotient is
// (1 - nu_s) / (1 - nu_f) = 0.72 / 0.66 = 1.0909 to within the film's
// 1/500 share, and the method says so with that figure. Demo data: a
// 1 um copper film on a 500 um silicon wafer heated 100 K.
func TestThinFilmBeamAndPlate(t *testing.T) {
	r := newTestHandler(t).Router()
	d := decode(t, do(t, r, "GET", "/v1/differential?"+q("length", "100 mm", "alpha_a", "17e-6/K", "alpha_b", "2.6e-6/K", "delta_t", "100 K", "thickness_a", "1 um", "thickness_b", "500 um",
		"modulus_a", "117 GPa", "modulus_b", "130 GPa", "poisson_a", "0.34", "poisson_b", "0.28", "span", "100 mm", "film", "a"), "", ""))
	beam, plate := d.Results["curvature"].Value, d.Results["stoney_curvature"].Value
	if q := plate / beam; math.Abs(q-0.72/0.66) > 0.72/0.66*0.01 {
		t.Errorf("stoney_curvature / curvature = %v, want (1 - 0.28)/(1 - 0.34) = %v within 1 %%", q, 0.72/0.66)
	}
	if !strings.Contains(d.Method, "(1 - nu_s) / (1 - nu_f), here 1.091") {
		t.Errorf("method does not give the factor between the two curvatures: %s", d.Method)
	}
}

func TestDifferentialSwapLayers(t *testing.T) {
	// Swapping a and b describes the same strip: every signed result flips
	// (Timoshenko 1925: the formula is symmetric in the layers).
	r := newTestHandler(t).Router()
	ab := decode(t, do(t, r, "GET", "/v1/differential?"+q("length", "1 m", "material_a", "aluminium-6061", "material_b", "structural-steel", "delta_t", "60 K", "thickness_a", "3 mm", "thickness_b", "5 mm", "span", "1 m"), "", ""))
	ba := decode(t, do(t, r, "GET", "/v1/differential?"+q("length", "1 m", "material_a", "structural-steel", "material_b", "aluminium-6061", "delta_t", "60 K", "thickness_a", "5 mm", "thickness_b", "3 mm", "span", "1 m"), "", ""))
	for _, name := range []string{"differential_movement", "curvature", "tip_deflection", "midspan_deflection", "flexivity"} {
		if x, y := ab.Results[name].Value, ba.Results[name].Value; x == 0 || !closeTo(-y, x, 1e-12) {
			t.Errorf("%s: a/b %v, b/a %v; want opposite", name, x, y)
		}
	}
	if x, y := ab.Results["stress_a_interface"].Value, ba.Results["stress_b_interface"].Value; !closeTo(y, x, 1e-12) {
		t.Errorf("interface stress of aluminium: %v and %v; want equal", x, y)
	}
	// The catalogue moduli were used and said so.
	if from, _ := ab.Inputs["modulus_a"]["from"].(string); !strings.Contains(from, "aluminium-6061") {
		t.Errorf("modulus_a from %q, want the catalogue entry", from)
	}
}

func TestDifferentialProperties(t *testing.T) {
	r := newTestHandler(t).Router()
	base := []string{"length", "1 m", "alpha_a", "23e-6/K", "alpha_b", "12e-6/K", "thickness_a", "2 mm", "thickness_b", "4 mm", "modulus_a", "70 GPa", "modulus_b", "210 GPa"}
	one := decode(t, do(t, r, "GET", "/v1/differential?"+q(append(base, "delta_t", "20 K")...), "", ""))
	two := decode(t, do(t, r, "GET", "/v1/differential?"+q(append(base, "delta_t", "40 K")...), "", ""))
	// Doubling the temperature change doubles the curvature (linear theory;
	// common practice, no published source).
	if c1, c2 := one.Results["curvature"].Value, two.Results["curvature"].Value; c1 == 0 || !closeTo(c2, 2*c1, 1e-12) {
		t.Errorf("curvature %v at 20 K, %v at 40 K; want double", c1, c2)
	}
	// Zero mismatch: no curvature, no radius (it would be infinite), a warning.
	z := decode(t, do(t, r, "GET", "/v1/differential?"+q("length", "1 m", "alpha_a", "12e-6/K", "alpha_b", "12e-6/K", "thickness_a", "2 mm", "thickness_b", "4 mm", "modulus_a", "70 GPa", "modulus_b", "210 GPa", "delta_t", "20 K"), "", ""))
	if c := z.Results["curvature"].Value; c != 0 {
		t.Errorf("zero mismatch curvature = %v, want 0", c)
	}
	if _, ok := z.Results["radius"]; ok || len(z.Warnings) == 0 {
		t.Errorf("zero mismatch: radius %v, warnings %v; want no radius and a warning", z.Results["radius"], z.Warnings)
	}
}

func TestRestraintHTTP(t *testing.T) {
	r := newTestHandler(t).Router()
	pipe := []string{"material", "structural-steel", "delta_t", "40 K"}
	tests := []struct {
		name   string
		query  string
		result string
		want   float64
		unit   string
	}{
		// Hibbeler, Mechanics of Materials, thermal stress example (A-36 bar
		// 0.5 in square between rigid supports, 60 degF to 120 degF,
		// alpha 6.60e-6/degF, E = 29e3 ksi): sigma = 11.5 ksi compression,
		// F = 2.87 kip. Values from memory of Hibbeler, not re-read;
		// 29e6 x 6.6e-6 x 60 = 11484 psi exactly by the formula.
		{"hibbeler stress", q("alpha", "6.60e-6 1/degF", "modulus", "29000 ksi", "t_initial", "60 degF", "t_final", "120 degF", "area", "0.25 in2", "units", "us"), "stress", -11484, "psi"},
		{"hibbeler force", q("alpha", "6.60e-6 1/degF", "modulus", "29000 ksi", "t_initial", "60 degF", "t_final", "120 degF", "area", "0.25 in2", "units", "us"), "force", -2.871, "kip"},
		// Catalogue steel (EN 1993-1-1 3.2.6: 12e-6/K, 210 GPa; alpha from
		// memory): sigma = -210e9 x 12e-6 x 40 = -100.8 MPa.
		{"catalogue steel", q(pipe...), "stress", -100.8, "MPa"},
		// Half restraint halves it (property: linear in R).
		{"half restraint", q(append(pipe, "restraint", "0.5")...), "stress", -50.4, "MPa"},
		// Spring equal to the member's axial stiffness E A / L:
		// 210e9 x 3600e-6 / 24 = 31.5e6 N/m gives R = 1/2 (springs in series).
		{"spring restraint", q(append(pipe, "area", "3600 mm2", "length", "24 m", "support_stiffness", "31.5 kN/mm")...), "restraint", 0.5, "1"},
		{"spring movement", q(append(pipe, "area", "3600 mm2", "length", "24 m", "support_stiffness", "31.5 kN/mm")...), "movement", 0.5 * 12e-6 * 40 * 24e3, "mm"},
		// Euler, fully restrained pinned strut: dT_cr = pi^2 r^2 / (alpha L^2)
		// [memory, any stability text]: r = 57 mm, L = 24 m, alpha = 12e-6/K.
		{"critical delta_t", q(append(pipe, "length", "24 m", "radius_of_gyration", "57 mm", "end_condition", "pinned")...), "critical_delta_t", math.Pi * math.Pi * 0.057 * 0.057 / (12e-6 * 24 * 24), "K"},
		// Cantilever K = 2 quarters it (Timoshenko and Gere, from memory).
		{"cantilever", q(append(pipe, "length", "24 m", "radius_of_gyration", "57 mm", "end_condition", "cantilever")...), "critical_delta_t", math.Pi * math.Pi * 0.057 * 0.057 / (12e-6 * 48 * 48), "K"},
		// From I and A: r = sqrt(I/A); P_cr = pi^2 E I / (K L)^2 with K = 0.5.
		{"critical force", q(append(pipe, "length", "12 m", "area", "3600 mm2", "second_moment", "1170 cm4", "end_condition", "fixed")...), "critical_force", math.Pi * math.Pi * 210e9 * 1170e-8 / 36 / 1e3, "kN"},
		// Gradient (Gere, from memory): kappa = alpha (dTtop - dTbottom)/depth =
		// 10e-6 x 20 / 0.4 = 5e-4 1/m; fixed-fixed M = E I kappa =
		// 33e9 x 2.1e-3 x 5e-4 = 34.65 kN m.
		{"gradient curvature", q("alpha", "10e-6/K", "modulus", "33 GPa", "delta_t_top", "25 K", "delta_t_bottom", "5 K", "depth", "400 mm", "second_moment", "2.1e-3 m4"), "gradient_curvature", 5e-4, "1/m"},
		{"gradient moment", q("alpha", "10e-6/K", "modulus", "33 GPa", "delta_t_top", "25 K", "delta_t_bottom", "5 K", "depth", "400 mm", "second_moment", "2.1e-3 m4"), "end_moment", 34.65, "kN*m"},
		// The uniform part of the gradient is the mean, 15 K.
		{"gradient uniform", q("alpha", "10e-6/K", "modulus", "33 GPa", "delta_t_top", "25 K", "delta_t_bottom", "5 K", "depth", "400 mm"), "stress", -33e9 * 10e-6 * 15 / 1e6, "MPa"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			d := decode(t, do(t, r, "GET", "/v1/restraint?"+tt.query, "", ""))
			checkResult(t, d, tt.result, tt.want, tt.unit, 1e-9, 4)
		})
	}
}

// TestRestraintUncheckedStress: a stress with no strength to compare it
// with says so, so that no warning does not read as "fine". Concrete in
// the catalogue (10e-6/K and Ecm 33 GPa, from memory of EN 1992-1-1) has
// no strength: cooled 40 K it is in tension at 33e9 x 10e-6 x 40 =
// 13.2 MPa, far above the 2 to 4 MPa it cracks at (EN 1992-1-1 Table 3.1
// fctm, from memory). Steel has its yield strength, and a given
// yield_strength counts too.
func TestRestraintUncheckedStress(t *testing.T) {
	r := newTestHandler(t).Router()
	const unchecked = "is not checked against any strength"
	for _, tc := range []struct {
		name  string
		query string
		want  string // in a warning; "" for none of this kind
	}{
		{"concrete in tension", q("material", "concrete", "delta_t", "-40 K"), "13.2 MPa (tension)"},
		{"alpha and modulus only", q("alpha", "12e-6/K", "modulus", "210 GPa", "delta_t", "30 K"), "75.6 MPa (compression)"},
		{"steel has a yield strength", q("material", "structural-steel", "delta_t", "30 K"), ""},
		{"given yield strength", q("alpha", "12e-6/K", "modulus", "210 GPa", "delta_t", "30 K", "yield_strength", "355 MPa"), ""},
		{"no restraint, no stress", q("material", "concrete", "delta_t", "-40 K", "restraint", "0"), ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			d := decode(t, do(t, r, "GET", "/v1/restraint?"+tc.query, "", ""))
			var got string
			for _, w := range d.Warnings {
				if strings.Contains(w, unchecked) {
					got = w
				}
			}
			if (tc.want == "") != (got == "") || !strings.Contains(got, tc.want) {
				t.Errorf("warnings %q; want one %q naming %q", d.Warnings, unchecked, tc.want)
			}
		})
	}
}

func TestRestraintCautions(t *testing.T) {
	r := newTestHandler(t).Router()
	// A hot steel pipe, fully restrained: 210e9 x 12e-6 x 200 K = 504 MPa > 355 MPa
	// (S355, EN 1993-1-1 Table 3.1, from memory): the yield warning.
	d := decode(t, do(t, r, "GET", "/v1/restraint?"+q("material", "structural-steel", "delta_t", "200 K", "length", "24 m", "radius_of_gyration", "57 mm", "end_condition", "pinned"), "", ""))
	if !anyContains(d.Warnings, "yield strength") {
		t.Errorf("no yield warning: %v", d.Warnings)
	}
	if !anyContains(d.Cautions, "perfectly straight elastic strut") {
		t.Errorf("no Euler caution: %v", d.Cautions)
	}
	// dT_cr = pi^2 r^2 / (alpha L^2) (Euler, any structural stability text,
	// from memory) = pi^2 x 0.057^2 / (12e-6 x 24^2) = 4.6 K, far below 200 K:
	// a concern of these inputs, so a warning that every format carries.
	if !anyContains(d.Warnings, "the restrained member buckles") {
		t.Errorf("200 K is beyond the critical rise, but no buckling warning: %v", d.Warnings)
	}
	if from, _ := d.Inputs["yield_strength"]["from"].(string); !strings.Contains(from, "structural-steel") {
		t.Errorf("yield_strength from %q, want the catalogue", from)
	}
	// An explicit yield strength wins.
	d = decode(t, do(t, r, "GET", "/v1/restraint?"+q("material", "structural-steel", "delta_t", "200 K", "yield_strength", "600 MPa"), "", ""))
	if anyContains(d.Warnings, "yield strength") {
		t.Errorf("yield warning with fy = 600 MPa > 504 MPa: %v", d.Warnings)
	}
}

func anyContains(list []string, s string) bool {
	for _, x := range list {
		if strings.Contains(x, s) {
			return true
		}
	}
	return false
}

func TestDifferentialRestraintErrors(t *testing.T) {
	r := newTestHandler(t).Router()
	layers := []string{"length", "1 m", "alpha_a", "23e-6/K", "alpha_b", "12e-6/K", "delta_t", "20 K"}
	tests := []struct {
		name, target string
		status       int
		params       []string
	}{
		{"negative thickness", "/v1/differential?" + q(append(layers, "thickness_a", "-2 mm", "thickness_b", "4 mm", "modulus_a", "70 GPa", "modulus_b", "210 GPa")...), 422, []string{"thickness_a"}},
		{"zero thickness", "/v1/differential?" + q(append(layers, "thickness_a", "2 mm", "thickness_b", "0 mm", "modulus_a", "70 GPa", "modulus_b", "210 GPa")...), 422, []string{"thickness_b"}},
		{"zero modulus", "/v1/differential?" + q(append(layers, "thickness_a", "2 mm", "thickness_b", "4 mm", "modulus_a", "0 GPa", "modulus_b", "210 GPa")...), 422, []string{"modulus_a"}},
		{"negative modulus", "/v1/restraint?" + q("alpha", "12e-6/K", "modulus", "-210 GPa", "delta_t", "10 K"), 422, []string{"modulus"}},
		{"thickness wrong dimension", "/v1/differential?" + q(append(layers, "thickness_a", "2 kg", "thickness_b", "4 mm", "modulus_a", "70 GPa", "modulus_b", "210 GPa")...), 400, []string{"thickness_a"}},
		{"modulus wrong dimension", "/v1/differential?" + q(append(layers, "thickness_a", "2 mm", "thickness_b", "4 mm", "modulus_a", "70 m", "modulus_b", "210 GPa")...), 400, []string{"modulus_a"}},
		{"modulus missing", "/v1/differential?" + q(append(layers, "thickness_a", "2 mm", "thickness_b", "4 mm", "modulus_a", "70 GPa")...), 400, []string{"modulus_b"}},
		{"one thickness", "/v1/differential?" + q(append(layers, "thickness_a", "2 mm", "modulus_a", "70 GPa", "modulus_b", "210 GPa")...), 400, []string{"thickness_b"}},
		{"modulus without layers", "/v1/differential?" + q(append(layers, "modulus_a", "70 GPa")...), 400, []string{"modulus_a"}},
		{"delta_t_a alone", "/v1/differential?" + q("length", "1 m", "alpha_a", "23e-6/K", "alpha_b", "12e-6/K", "delta_t_a", "20 K"), 400, []string{"delta_t_b"}},
		{"delta_t and delta_t_a", "/v1/differential?" + q("length", "1 m", "alpha_a", "23e-6/K", "alpha_b", "12e-6/K", "delta_t", "20 K", "delta_t_a", "20 K", "delta_t_b", "5 K"), 422, []string{"delta_t"}},
		{"bad poisson", "/v1/differential?" + q(append(layers, "thickness_a", "2 um", "thickness_b", "4 mm", "modulus_a", "70 GPa", "modulus_b", "210 GPa", "film", "a", "poisson_a", "0.7", "poisson_b", "0.3")...), 422, []string{"poisson_a"}},
		{"unknown film", "/v1/differential?" + q(append(layers, "thickness_a", "2 um", "thickness_b", "4 mm", "modulus_a", "70 GPa", "modulus_b", "210 GPa", "film", "c")...), 400, []string{"film"}},
		{"unknown material_b", "/v1/differential?" + q("length", "1 m", "alpha_a", "23e-6/K", "material_b", "unobtainium", "delta_t", "20 K"), 404, []string{"material_b"}},
		{"restraint above 1", "/v1/restraint?" + q("alpha", "12e-6/K", "modulus", "210 GPa", "delta_t", "10 K", "restraint", "1.5"), 422, []string{"restraint"}},
		{"restraint below 0", "/v1/restraint?" + q("alpha", "12e-6/K", "modulus", "210 GPa", "delta_t", "10 K", "restraint", "-0.1"), 422, []string{"restraint"}},
		{"restraint and spring", "/v1/restraint?" + q("alpha", "12e-6/K", "modulus", "210 GPa", "delta_t", "10 K", "restraint", "0.5", "support_stiffness", "10 kN/mm", "area", "1000 mm2", "length", "3 m"), 422, []string{"support_stiffness"}},
		{"spring without area", "/v1/restraint?" + q("alpha", "12e-6/K", "modulus", "210 GPa", "delta_t", "10 K", "support_stiffness", "10 kN/mm", "length", "3 m"), 400, []string{"area"}},
		{"spring wrong dimension", "/v1/restraint?" + q("alpha", "12e-6/K", "modulus", "210 GPa", "delta_t", "10 K", "support_stiffness", "10 kN", "area", "1000 mm2", "length", "3 m"), 400, []string{"support_stiffness"}},
		{"unknown end condition", "/v1/restraint?" + q("alpha", "12e-6/K", "modulus", "210 GPa", "delta_t", "10 K", "length", "3 m", "radius_of_gyration", "20 mm", "end_condition", "hinged"), 400, []string{"end_condition"}},
		{"buckling without length", "/v1/restraint?" + q("alpha", "12e-6/K", "modulus", "210 GPa", "delta_t", "10 K", "radius_of_gyration", "20 mm", "end_condition", "pinned"), 400, []string{"length"}},
		{"second_moment without area", "/v1/restraint?" + q("alpha", "12e-6/K", "modulus", "210 GPa", "delta_t", "10 K", "length", "3 m", "second_moment", "100 cm4", "end_condition", "pinned"), 400, []string{"area"}},
		{"second_moment wrong dimension", "/v1/restraint?" + q("alpha", "12e-6/K", "modulus", "210 GPa", "delta_t", "10 K", "length", "3 m", "area", "10 cm2", "second_moment", "100 cm2", "end_condition", "pinned"), 400, []string{"second_moment"}},
		{"gradient without depth", "/v1/restraint?" + q("alpha", "12e-6/K", "modulus", "210 GPa", "delta_t_top", "10 K", "delta_t_bottom", "0 K"), 400, []string{"depth"}},
		{"gradient and delta_t", "/v1/restraint?" + q("alpha", "12e-6/K", "modulus", "210 GPa", "delta_t", "5 K", "delta_t_top", "10 K", "delta_t_bottom", "0 K", "depth", "300 mm"), 422, []string{"delta_t"}},
		{"modulus missing", "/v1/restraint?" + q("alpha", "12e-6/K", "delta_t", "10 K"), 400, []string{"modulus"}},
		{"liquid", "/v1/restraint?" + q("material", "water", "delta_t", "10 K"), 422, []string{"material"}},
		// K L / r = 3e303, whose square overflows: an Euler stress of 0.
		{"slenderness beyond any member", "/v1/restraint?" + q("alpha", "12e-6/K", "modulus", "210 GPa", "delta_t", "40 K", "length", "3 m", "radius_of_gyration", "1e-300 mm", "end_condition", "pinned"), 422, []string{"radius_of_gyration"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			w := do(t, r, "GET", tt.target, "", "")
			if w.Code != tt.status {
				t.Fatalf("status %d, want %d: %s", w.Code, tt.status, w.Body.String())
			}
			p := decodeProblem(t, w)
			checkNames(t, p, tt.params...)
		})
	}
}

func TestDifferentialPOSTEqualsGET(t *testing.T) {
	r := newTestHandler(t).Router()
	get := do(t, r, "GET", "/v1/restraint?"+q("alpha", "12e-6/K", "modulus", "210 GPa", "delta_t", "40 K", "restraint", "0.8"), "", "")
	post := do(t, r, "POST", "/v1/restraint", "application/json", `{"alpha": "12e-6/K", "modulus": {"value": 210, "unit": "GPa"}, "delta_t": "40 K", "restraint": 0.8}`)
	if g, p := decode(t, get).Results["stress"], decode(t, post).Results["stress"]; g != p || !closeTo(g.Value, -0.8*210e3*12e-6*40, 1e-12) {
		t.Errorf("GET stress %v, POST %v", g, p)
	}
}

// TestBilayerNoMismatch: equal layers heated alike stay straight and
// unstressed (Timoshenko 1925: the curvature and the layer forces are
// proportional to the mismatch strain, from memory). The stresses are 0,
// so a spreadsheet cell asking for one gets 0, not a 422; only the radius
// of a straight strip does not exist.
func TestBilayerNoMismatch(t *testing.T) {
	r := newTestHandler(t).Router()
	base := []string{"length", "60 mm", "alpha_a", "18.5e-6/K", "alpha_b", "18.5e-6/K", "delta_t", "50 K",
		"thickness_a", "0.5 mm", "thickness_b", "0.5 mm", "modulus_a", "170 GPa", "modulus_b", "170 GPa"}
	for _, name := range []string{"stress_a_interface", "stress_a_outer", "stress_b_interface", "stress_b_outer", "curvature"} {
		w := do(t, r, "GET", "/v1/differential?"+q(append(base, "format", "text", "result", name)...), "", "")
		if w.Code != 200 || strings.TrimSpace(w.Body.String()) != "0" {
			t.Errorf("%s: %d %q, want 200 and 0", name, w.Code, w.Body.String())
		}
	}
	d := decode(t, do(t, r, "GET", "/v1/differential?"+q(base...), "", ""))
	if _, ok := d.Results["radius"]; ok {
		t.Errorf("a straight strip has a radius: %v", d.Results["radius"])
	}
}

// TestRestraintWarningsInAnswerUnits: the warnings that quote stresses use
// the unit of the answer's stress. sigma = E alpha dT (Hooke's law with
// the thermal strain, from memory of Timoshenko and Goodier): 29000 ksi x
// 12e-6/K x 100 degF (55.56 K, NIST SP 811: 1 degF = 5/9 K) = 19333 psi,
// quoted to four digits. A yield strength under 1 MPa (355 mPa for
// 355 MPa) warns to check the unit, and the stress warning after it is
// still rewritten.
func TestRestraintWarningsInAnswerUnits(t *testing.T) {
	r := newTestHandler(t).Router()
	for _, tc := range []struct{ query, want, not string }{
		{"alpha=12e-6/K&modulus=29000%20ksi&delta_t=100%20degF&units=us", "the restrained stress 19330 psi (compression)", "MPa (compression)"},
		{"alpha=12e-6/K&modulus=29000%20ksi&delta_t=100%20degF&stress_unit=ksi", "the restrained stress 19.33 ksi (compression)", "MPa (compression)"},
		{"alpha=12e-6/K&modulus=29000%20ksi&delta_t=100%20degF", "the restrained stress 133.3 MPa (compression)", "psi"},
		{"material=structural-steel&delta_t=40%20K&yield_strength=355%20mPa&units=us", "exceeds the yield strength 0.00005149 psi", "MPa exceeds"},
	} {
		d := decode(t, do(t, r, "GET", "/v1/restraint?"+tc.query, "", ""))
		if !anyContains(d.Warnings, tc.want) || anyContains(d.Warnings, tc.not) {
			t.Errorf("%s: warnings %q; want %q and not %q", tc.query, d.Warnings, tc.want, tc.not)
		}
	}
	d := decode(t, do(t, r, "GET", "/v1/restraint?material=structural-steel&delta_t=40%20K&yield_strength=355%20mPa", "", ""))
	if len(d.Warnings) != 2 || !strings.Contains(d.Warnings[0], "yield_strength is 0.000355 kPa, under 1 MPa") {
		t.Errorf("355 mPa: warnings %q; want the unit check first, then the stress", d.Warnings)
	}
}

// TestRestraintHotCatalogueProperties: a restrained member heated past
// 100 degC with the catalogue's room-temperature modulus or yield
// strength warns, naming which; EN 1993-1-2 Table 3.1 (from memory, not
// re-read) reduces the modulus of carbon steel above 100 degC and its
// effective yield strength above 400 degC. Given at the temperature, or
// below 100 degC, nothing is said.
func TestRestraintHotCatalogueProperties(t *testing.T) {
	r := newTestHandler(t).Router()
	const hint = "room-temperature value"
	for _, tc := range []struct {
		query string
		warn  bool
	}{
		{"material=structural-steel&t_initial=20%20degC&t_final=600%20degC", true},
		{"material=structural-steel&t_initial=20%20degC&t_final=80%20degC", false},
		{"material=structural-steel&t_initial=20%20degC&t_final=600%20degC&modulus=65%20GPa&yield_strength=167%20MPa", false},
		{"alpha=12e-6/K&modulus=210%20GPa&t_initial=20%20degC&t_final=600%20degC", false},
		{"material=structural-steel&t_initial=20%20degC&t_final=600%20degC&modulus=65%20GPa", true}, // the catalogue's yield strength still
	} {
		d := decode(t, do(t, r, "GET", "/v1/restraint?"+tc.query, "", ""))
		if anyContains(d.Warnings, hint) != tc.warn {
			t.Errorf("%s: warnings %q; want the room-temperature warning: %v", tc.query, d.Warnings, tc.warn)
		}
	}
	d := decode(t, do(t, r, "GET", "/v1/restraint?material=structural-steel&t_initial=20%20degC&t_final=600%20degC&modulus=65%20GPa", "", ""))
	if !anyContains(d.Warnings, "the catalogue's yield strength is a room-temperature value") {
		t.Errorf("modulus given: warnings %q; want only the yield strength named", d.Warnings)
	}
}

// TestRestraintGradientFaceStresses: the README's roof slab (demo data):
// concrete E = 33 GPa, alpha 10e-6/K (the catalogue's, from memory of
// EN 1992-1-1), 250 mm deep, top +18 K, soffit +2 K, 60 % restrained
// axially, fixed at both ends. Axial -0.6 E alpha 10 K = -1.98 MPa; the
// held curvature adds -/+ E alpha (18 - 2) / 2 = 2.64 MPa at the faces
// (M c / I, Timoshenko and Goodier, from memory): top -4.62 MPa, soffit
// +0.66 MPa in tension.
func TestRestraintGradientFaceStresses(t *testing.T) {
	r := newTestHandler(t).Router()
	d := decode(t, do(t, r, "GET", "/v1/restraint?material=concrete&delta_t_top=18%20K&delta_t_bottom=2%20K&depth=250%20mm&second_moment=1.3e-3%20m4&restraint=0.6", "", ""))
	checkResult(t, d, "stress_top", -4.62, "MPa", 1e-9, 3)
	checkResult(t, d, "stress_bottom", 0.66, "MPa", 1e-9, 3)
	if !anyContains(d.Warnings, "bottom face 0.66 MPa") {
		t.Errorf("warnings %q: want the face stresses in the unchecked-stress warning", d.Warnings)
	}
	// Ends that turn (pinned, fixed-pinned, cantilever) let the member
	// curve: no end moment, no face stresses, and a warning says why;
	// end_condition=fixed holds it as the default does.
	for cond, held := range map[string]bool{"pinned": false, "cantilever": false, "fixed-pinned": false, "fixed": true} {
		d := decode(t, do(t, r, "GET", "/v1/restraint?material=structural-steel&delta_t_top=150%20K&delta_t_bottom=-10%20K&depth=500%20mm&second_moment=1e-3%20m4&area=0.02%20m2&length=6%20m&end_condition="+cond, "", ""))
		_, top := d.Results["stress_top"]
		_, moment := d.Results["end_moment"]
		if top != held || moment != held || anyContains(d.Warnings, "lets the ends turn") == held {
			t.Errorf("end_condition=%s: stress_top %v, end_moment %v, warnings %q; want both given: %v", cond, top, moment, d.Warnings, held)
		}
	}
	// Without second_moment the member's ends are not known to hold it:
	// no face stresses.
	d = decode(t, do(t, r, "GET", "/v1/restraint?material=concrete&delta_t_top=18%20K&delta_t_bottom=2%20K&depth=250%20mm&restraint=0.6", "", ""))
	if _, ok := d.Results["stress_top"]; ok {
		t.Errorf("stress_top given without second_moment: %+v", d.Results)
	}
}

// TestRestraintCatalogueYield: the catalogue holds one grade's yield
// strength, so using it is named in a warning. structural-steel is S355
// (EN 1993-1-1 Table 3.1, from memory: fy 355 N/mm2 for S355, 235 for
// S235, t <= 40 mm); with E = 210 GPa and alpha = 12e-6/K (clause 3.2.6,
// E read, alpha from memory) a fully restrained member yields at
// dT = fy / (E alpha) (sigma = E alpha dT, Gere and Timoshenko, thermal
// stress of a restrained bar): 140.87 K for S355, 93.25 K for S235.
func TestRestraintCatalogueYield(t *testing.T) {
	r := newTestHandler(t).Router()
	const named = "is the catalogue's for structural-steel (grade S355"
	for _, tc := range []struct {
		name, query string
		warned      bool
		yieldDT     float64 // K
	}{
		{"catalogue S355", q("material", "structural-steel", "delta_t", "40 K"), true, 355e6 / (210e9 * 12e-6)},
		{"given S235", q("material", "structural-steel", "delta_t", "40 K", "yield_strength", "235 MPa"), false, 235e6 / (210e9 * 12e-6)},
		{"no material", q("alpha", "12e-6/K", "modulus", "210 GPa", "delta_t", "40 K", "yield_strength", "355 MPa"), false, 355e6 / (210e9 * 12e-6)},
	} {
		t.Run(tc.name, func(t *testing.T) {
			d := decode(t, do(t, r, "GET", "/v1/restraint?"+tc.query, "", ""))
			if got := anyContains(d.Warnings, named); got != tc.warned {
				t.Errorf("warning naming the catalogue's grade: %v, want %v; warnings %q", got, tc.warned, d.Warnings)
			}
			if got := d.Results["yield_delta_t"].Value; math.Abs(got-tc.yieldDT) > 1e-6 {
				t.Errorf("yield_delta_t = %v K, want %v", got, tc.yieldDT)
			}
		})
	}
	// With units=us the warning quotes psi: 355 MPa / 6894.757 Pa/psi
	// (NIST SP 811, B.8) = 51,488 psi, to four digits 51490.
	d := decode(t, do(t, r, "GET", "/v1/restraint?"+q("material", "structural-steel", "delta_t", "40 K", "units", "us"), "", ""))
	if !anyContains(d.Warnings, "yield_strength 51490 psi "+named) {
		t.Errorf("units=us: warnings %q, want the yield strength in psi", d.Warnings)
	}
	// Heated 200 K the member yields (210e9 x 12e-6 x 200 = 504 MPa > 355):
	// that warning comes before the note on the grade.
	d = decode(t, do(t, r, "GET", "/v1/restraint?"+q("material", "structural-steel", "delta_t", "200 K"), "", ""))
	exceeds := slices.IndexFunc(d.Warnings, func(w string) bool { return strings.Contains(w, "exceeds the yield strength 355 MPa") })
	grade := slices.IndexFunc(d.Warnings, func(w string) bool { return strings.Contains(w, named) })
	if exceeds < 0 || grade < 0 || exceeds > grade {
		t.Errorf("200 K: warnings %q; want the stress over the yield strength, then the grade", d.Warnings)
	}
}

// TestRestraintBucklingNegativeAlpha: with a negative coefficient a fall
// in temperature lengthens the member, so a restrained one cooled enough
// buckles. dT_cr = pi^2 r^2 / (R alpha (K L)^2) (Euler; any structural
// stability text, from memory), negative here: pi^2 x 0.005^2 /
// (-0.38e-6 x 3^2) = -72.15 K for a 3 m pinned strut, r = 5 mm. Cooled by
// 80 K: utilisation 80 / 72.15 = 1.109, and the Euler stress
// pi^2 E (r / K L)^2 = 4.11 MPa against E alpha dT = 4.56 MPa.
func TestRestraintBucklingNegativeAlpha(t *testing.T) {
	r := newTestHandler(t).Router()
	strut := []string{"modulus", "150 GPa", "area", "100 mm2", "length", "3 m", "radius_of_gyration", "5 mm", "end_condition", "pinned", "yield_strength", "1000 MPa"}
	wantCr := math.Pi * math.Pi * 0.005 * 0.005 / (-0.38e-6 * 9)
	d := decode(t, do(t, r, "GET", "/v1/restraint?"+q(append(strut, "alpha", "-0.38e-6/K", "delta_t", "-80 K")...), "", ""))
	if got := d.Results["critical_delta_t"].Value; math.Abs(got-wantCr) > 1e-6 {
		t.Errorf("critical_delta_t = %v K, want %v", got, wantCr)
	}
	if got := d.Results["buckling_utilisation"].Value; math.Abs(got-(-80/wantCr)) > 1e-9 {
		t.Errorf("buckling_utilisation = %v, want %v", got, -80/wantCr)
	}
	if !anyContains(d.Warnings, "the temperature fall reaches the Euler critical fall") {
		t.Errorf("no buckling warning: %q", d.Warnings)
	}
	if !anyContains(d.Warnings, "alpha is negative") {
		t.Errorf("a given negative alpha: no warning to check its sign: %q", d.Warnings)
	}
	if anyContains(d.Warnings, "cannot buckle") {
		t.Errorf("says it cannot buckle: %q", d.Warnings)
	}
	// Warmed instead, the member shortens and is in tension: no utilisation.
	d = decode(t, do(t, r, "GET", "/v1/restraint?"+q(append(strut, "alpha", "-0.38e-6/K", "delta_t", "80 K")...), "", ""))
	if _, ok := d.Results["buckling_utilisation"]; ok || anyContains(d.Warnings, "buckles") {
		t.Errorf("a member in tension: results %v, warnings %q", d.Results, d.Warnings)
	}
}

// TestRestraintGradientLessRestraint: a held gradient bends the faces by
// -/+ E kappa h/2 (M c / I; Timoshenko and Goodier, thermal stresses in
// beams), and axial compression takes from the cool face's tension. The
// README's roof slab (concrete, E 33 GPa, alpha 10e-6/K, both from memory
// of EN 1992-1-1): kappa = 10e-6 x 16 K / 0.25 m = 6.4e-4 /m, bending
// 33e9 x 6.4e-4 x 0.125 = 2.64 MPa. At R = 0.6 the soffit is at
// -1.98 + 2.64 = 0.66 MPa; with less restraint it rises to 2.64 MPa, which
// the warning gives. At R = 0 there is no axial compression to warn of.
func TestRestraintGradientLessRestraint(t *testing.T) {
	r := newTestHandler(t).Router()
	slab := []string{"material", "concrete", "delta_t_top", "18 K", "delta_t_bottom", "2 K", "depth", "250 mm", "second_moment", "1.3e-3 m4"}
	const warned = "lowers the bottom face's tension from the held gradient: with less axial restraint that face's stress rises to 2.64 MPa in tension"
	for _, tc := range []struct {
		restraint string
		want      bool
	}{{"0.6", true}, {"1", true}, {"0", false}} {
		d := decode(t, do(t, r, "GET", "/v1/restraint?"+q(append(slab, "restraint", tc.restraint)...), "", ""))
		if got := anyContains(d.Warnings, warned); got != tc.want {
			t.Errorf("restraint %s: warned %v, want %v: %q", tc.restraint, got, tc.want, d.Warnings)
		}
	}
	// In psi with units=us: 2.64e6 / 6894.757 (NIST SP 811) = 382.9 psi.
	d := decode(t, do(t, r, "GET", "/v1/restraint?"+q(append(slab, "restraint", "0.6", "units", "us")...), "", ""))
	if !anyContains(d.Warnings, "rises to 382.9 psi in tension") {
		t.Errorf("units=us: %q", d.Warnings)
	}
}
