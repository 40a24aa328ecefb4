package handlers

import (
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/thermalmovement/service/internal/calc"
	"github.com/thermalmovement/service/internal/materials"
	"github.com/thermalmovement/service/internal/units"
)

// differentialCalcs lists /v1/differential and /v1/restraint.
func (h *Handler) differentialCalcs() []calcSpec {
	return []calcSpec{
		{name: "differential", results: (*DifferentialResults)(nil), fn: h.differential},
		{name: "restraint", results: (*RestraintResults)(nil), fn: h.restraint},
	}
}

// References of the methods, cited in responses.
const (
	refTimoshenko1925 = "Timoshenko, S. (1925), Analysis of bi-metal thermostats, J. Opt. Soc. Am. 11(3):233-255: curvature of a bonded two-layer strip, 1/rho = 6 (a2 - a1) dT (1 + m)^2 / (h [3 (1 + m)^2 + (1 + m n)(m^2 + 1/(m n))]), and the equilibrium P h/2 = (E1 I1 + E2 I2)/rho of its layer forces"
	refASTMB106       = "ASTM B106, Standard Test Methods for Flexivity of Thermostat Metals: flexivity F = t (1/R2 - 1/R1) / (T2 - T1)"
	refStoney1909     = "Stoney, G. G. (1909), The tension of metallic films deposited by electrolysis, Proc. R. Soc. Lond. A 82:172-175: film stress = E_s t_s^2 kappa / (6 t_f (1 - nu_s)) (biaxial form)"
	refArcGeometry    = "Circular-arc geometry of a strip of uniform curvature: cantilever tip R (1 - cos(L/R)), midspan rise of a simply supported strip R (1 - cos(L/(2R))), L measured along the strip; small-deflection forms kappa L^2/2 and kappa L^2/8 (beam theory, e.g. Roark's Formulas for Stress and Strain)"
	refRestrained     = "Fully or partly restrained member: sigma = -R E alpha dT, F = sigma A (Gere and Timoshenko, Mechanics of Materials, thermal effects in statically indeterminate axial members)"
	refSpring         = "Member between a rigid support and a spring k: member and spring act in series, R = k / (k + E A / L) (equilibrium and compatibility; Gere and Timoshenko, Mechanics of Materials)"
	refEuler          = "Euler buckling of an ideal strut: P_cr = pi^2 E I / (K L)^2 with theoretical effective-length factors K = 1 pinned, 0.5 fixed, 0.7 fixed-pinned, 2 cantilever (Timoshenko and Gere, Theory of Elastic Stability); thermal: R E A alpha dT_cr = P_cr"
	refGradient       = "Linear temperature gradient through the depth: free curvature alpha (dT_top - dT_bottom) / depth; a fixed-fixed member is held straight by the moment M = E I kappa (Timoshenko and Goodier, Theory of Elasticity, thermal stresses in beams)"
)

// DifferentialResults are the results of /v1/differential.
type DifferentialResults struct {
	DifferentialMovement *Value `json:"differential_movement" kind:"movement"`
	FreeStrainA          *Value `json:"free_strain_a" kind:"strain"`
	FreeStrainB          *Value `json:"free_strain_b" kind:"strain"`
	MismatchStrain       *Value `json:"mismatch_strain" kind:"strain"`
	Curvature            *Value `json:"curvature,omitempty" kind:"curvature"`
	Radius               *Value `json:"radius,omitempty" kind:"length"`
	TipDeflection        *Value `json:"tip_deflection,omitempty" kind:"movement"`
	MidspanDeflection    *Value `json:"midspan_deflection,omitempty" kind:"movement"`
	Flexivity            *Value `json:"flexivity,omitempty" kind:"flexivity"`
	StressAInterface     *Value `json:"stress_a_interface,omitempty" kind:"stress"`
	StressAOuter         *Value `json:"stress_a_outer,omitempty" kind:"stress"`
	StressBInterface     *Value `json:"stress_b_interface,omitempty" kind:"stress"`
	StressBOuter         *Value `json:"stress_b_outer,omitempty" kind:"stress"`
	FilmStress           *Value `json:"film_stress,omitempty" kind:"stress"`
	StoneyCurvature      *Value `json:"stoney_curvature,omitempty" kind:"curvature"`
	FilmStressMeasured   *Value `json:"film_stress_from_curvature,omitempty" kind:"stress"`
}

// layerParams are the parameters that only a bonded strip reads.
var layerParams = []string{"modulus_a", "modulus_b", "span", "film", "poisson_a", "poisson_b", "measured_curvature"}

// differential godoc
//
//	@Summary		Differential movement of two materials; bonded layers and thin films
//	@Description	Free differential movement L (e_a - e_b) over a common length, with one temperature change for both (delta_t), each its own (delta_t_a, delta_t_b: sunlit cladding on a shaded frame) or absolute temperatures (t_initial, t_final) with the materials' temperature-dependent data. Sign: positive when a grows more than b. With thickness_a and thickness_b the layers are bonded: curvature by Timoshenko's (1925) general bilayer formula (moduli from modulus_a/modulus_b or the catalogue), radius, exact circular-arc deflections over span (tip of a cantilever, midspan of a simply supported strip, span measured along the strip), ASTM B106 flexivity, and the layer stresses at the centre of a long strip (tension positive). A positive curvature bows the strip with layer a on the convex face, deflecting towards the b face. With film=a or film=b that layer is a thin film on the other: biaxial film stress E_f/(1 - nu_f)(e_s - e_f) and Stoney's (1909) curvature; measured_curvature (same sign convention) gives the film stress by Stoney. Demo example: a 6 m aluminium mullion (aluminium-6061) on the concrete frame of a demo office facade, the mullion warming by 45 K in sun, the frame by 15 K.
//	@Tags			differential
//	@Produce		json,plain,text/csv,application/xml
//	@Param			length				query		string	true	"common length, e.g. 6 m"
//	@Param			alpha_a				query		string	false	"coefficient of a, e.g. 23e-6/K; wins over material_a"
//	@Param			material_a			query		string	false	"catalogue id of a, e.g. aluminium-6061 (coefficient, and modulus and Poisson's ratio where needed)"
//	@Param			alpha_b				query		string	false	"coefficient of b, e.g. 10e-6/K; wins over material_b"
//	@Param			material_b			query		string	false	"catalogue id of b, e.g. concrete"
//	@Param			delta_t				query		string	false	"one temperature difference for both, e.g. 40 K"
//	@Param			delta_t_a			query		string	false	"temperature difference of a (with delta_t_b), e.g. 45 K"
//	@Param			delta_t_b			query		string	false	"temperature difference of b (with delta_t_a), e.g. 15 K"
//	@Param			t_initial			query		string	false	"absolute initial temperature of both, e.g. 10 degC"
//	@Param			t_final				query		string	false	"absolute final temperature of both, e.g. 55 degC"
//	@Param			thickness_a			query		string	false	"thickness of bonded layer a (with thickness_b), e.g. 0.5 mm"
//	@Param			thickness_b			query		string	false	"thickness of bonded layer b, e.g. 0.5 mm"
//	@Param			modulus_a			query		string	false	"Young's modulus of a, e.g. 70 GPa; wins over material_a"
//	@Param			modulus_b			query		string	false	"Young's modulus of b, e.g. 200 GPa; wins over material_b"
//	@Param			span				query		string	false	"length of the bonded strip for the deflections, measured along it, e.g. 60 mm"
//	@Param			film				query		string	false	"the layer that is a thin film on the other (Stoney)"	Enums(a, b)
//	@Param			poisson_a			query		string	false	"Poisson's ratio of a (with film), e.g. 0.3; wins over material_a"
//	@Param			poisson_b			query		string	false	"Poisson's ratio of b (with film), e.g. 0.28; wins over material_b"
//	@Param			measured_curvature	query		string	false	"with film: a measured curvature, e.g. 0.02 1/m (positive: a on the convex face)"
//	@Param			alpha_model			query		string	false	"auto (default), constant or curve"	Enums(auto, constant, curve)
//	@Param			extrapolate			query		bool	false	"allow temperatures beyond a curve's range"
//	@Param			units				query		string	false	"si (default) or us"	Enums(si, us)
//	@Param			format				query		string	false	"json (default), text, csv or xml"	Enums(json, text, csv, xml)
//	@Param			result				query		string	false	"with format=text: the result to return"
//	@Param			on_error			query		string	false	"inline: errors as a 200 #ERROR line for text, csv, xml"	Enums(problem, inline)
//	@Success		200					{object}	Response{results=DifferentialResults}
//	@Failure		400					{object}	Problem
//	@Failure		404					{object}	Problem
//	@Failure		422					{object}	Problem
//	@Router			/v1/differential [get]
//	@Router			/v1/differential [post]
func (h *Handler) differential(p *params) (*Response, error) {
	p.require("length")
	length, lok := p.positive("length", units.Length)

	// Temperatures: one interval for both, or a difference for each.
	var ivA, ivB interval
	var ivOK bool
	single := true
	if p.has("delta_t_a") || p.has("delta_t_b") {
		single = false
		for _, n := range []string{"delta_t", "t_initial", "t_final"} {
			if p.has(n) {
				p.take(n)
				p.unprocessable(n, "contradicts delta_t_a/delta_t_b: give delta_t, or delta_t_a and delta_t_b, or t_initial and t_final")
			}
		}
		da, okA := p.difference("delta_t_a")
		db, okB := p.difference("delta_t_b")
		if !p.has("delta_t_a") {
			p.invalid("delta_t_a", "required with delta_t_b")
		}
		if !p.has("delta_t_b") {
			p.invalid("delta_t_b", "required with delta_t_a")
		}
		ivA, ivB, ivOK = interval{dT: da}, interval{dT: db}, okA && okB
	} else {
		ivA, ivOK = p.interval("delta_t", "t_initial", "t_final")
		ivB = ivA
	}
	model, extra := p.readModel()
	coA, okA := p.strain("alpha_a", "material_a", ivA, ivOK, model, extra)
	coB, okB := p.strain("alpha_b", "material_b", ivB, ivOK, model, extra)

	resp := &Response{}
	layered := p.has("thickness_a") || p.has("thickness_b")
	var strip calc.Bilayer
	layOK := true
	film := ""
	var nuA, nuB float64
	var measured, spanM float64
	hasMeasured := false
	if layered {
		var ok1, ok2, ok3, ok4 bool
		strip.ThicknessAM, ok1 = p.positive("thickness_a", units.Length)
		strip.ThicknessBM, ok2 = p.positive("thickness_b", units.Length)
		if !p.has("thickness_a") {
			p.invalid("thickness_a", "required with thickness_b")
		}
		if !p.has("thickness_b") {
			p.invalid("thickness_b", "required with thickness_a")
		}
		strip.ModulusAPa, ok3 = h.modulusFrom(p, resp, "modulus_a", "material_a")
		strip.ModulusBPa, ok4 = h.modulusFrom(p, resp, "modulus_b", "material_b")
		layOK = ok1 && ok2 && ok3 && ok4
		if p.has("span") {
			var ok bool
			spanM, ok = p.positive("span", units.Length)
			layOK = layOK && ok
		}
		if f, ok := p.choice("film", "a", "b"); ok {
			film = f
			var okPa, okPb bool
			nuA, okPa = h.poissonFrom(p, resp, "poisson_a", "material_a")
			nuB, okPb = h.poissonFrom(p, resp, "poisson_b", "material_b")
			layOK = layOK && okPa && okPb
			if p.has("measured_curvature") {
				measured, hasMeasured = p.dim("measured_curvature", units.Curvature)
				layOK = layOK && hasMeasured
			}
		} else {
			for _, n := range []string{"poisson_a", "poisson_b", "measured_curvature"} {
				if p.has(n) {
					p.take(n)
					p.invalid(n, "goes with film (a or b): the layer that is a thin film")
				}
			}
		}
	} else {
		for _, n := range layerParams {
			if p.has(n) {
				p.take(n)
				p.invalid(n, "goes with thickness_a and thickness_b (a bonded strip)")
			}
		}
	}
	if err := p.done(); err != nil || !(lok && okA && okB && layOK) {
		if err == nil {
			err = newError(errUnprocessable, "the inputs cannot be computed")
		}
		return nil, err
	}

	mismatch := coA.Strain - coB.Strain
	res := &DifferentialResults{
		DifferentialMovement: si(calc.DifferentialMovement(length, coA.Strain, coB.Strain)),
		FreeStrainA:          si(coA.Strain),
		FreeStrainB:          si(coB.Strain),
		MismatchStrain:       si(mismatch),
	}
	resp.Results = res
	method := []string{"differential_movement = L (e_a - e_b), e = the free linear strain of each member over its temperature change (a " + coA.from + ", b " + coB.from + "); positive when a grows more than b"}
	resp.References = append(resp.References, refASTME228)
	if coA.Kind != "constant" || coB.Kind != "constant" {
		resp.References = append(resp.References, refASMEIID)
	}
	resp.References = appendNew(resp.References, coA.Source.Citations...)
	resp.References = appendNew(resp.References, coB.Source.Citations...)
	resp.Warnings = append(resp.Warnings, coA.Warnings...)
	resp.Warnings = append(resp.Warnings, coB.Warnings...)
	resp.Cautions = append(resp.Cautions, "Differential movement must be taken up by the fixings or a movement joint; a fixing that blocks it loads both members and the fixing itself.")

	if layered {
		kappa := strip.Curvature(mismatch)
		res.Curvature = si(kappa)
		method = append(method, "bonded strip (beam theory, each layer at a uniform temperature): Timoshenko (1925) 1/rho = 6 (e_a - e_b)(1 + m)^2 / (h [3 (1 + m)^2 + (1 + m n)(m^2 + 1/(m n))]), m = t_b/t_a, n = E_b/E_a, h = t_a + t_b; positive curvature bows the strip with layer a on the convex face (it deflects towards the b face)")
		resp.References = append(resp.References, refTimoshenko1925)
		st := strip.Stresses(kappa)
		res.StressAInterface, res.StressAOuter = si(st.AInterface), si(st.AOuter)
		res.StressBInterface, res.StressBOuter = si(st.BInterface), si(st.BOuter)
		method = append(method, "layer stresses at the centre of a long strip, tension positive: axial force per width P = (E_a t_a^3 + E_b t_b^3) kappa / (6 h) from Timoshenko's equilibrium P h/2 = (E1 I1 + E2 I2)/rho, plus each layer's bending stress E kappa y")
		if kappa == 0 {
			resp.Warnings = append(resp.Warnings, "the layers have no mismatch strain: the strip stays straight and unstressed, so it has no radius")
		} else {
			res.Radius = si(1 / math.Abs(kappa))
			resp.Cautions = append(resp.Cautions, "Layer stresses hold at the centre of a long strip; near its free ends the interface shear and peeling stresses concentrate, are not given here, and can debond the layers.")
		}
		if spanM > 0 {
			res.TipDeflection = si(calc.CantileverTip(kappa, spanM))
			res.MidspanDeflection = si(calc.MidspanRise(kappa, spanM))
			method = append(method, "deflections by exact circular-arc geometry, span measured along the strip: cantilever tip R (1 - cos(L/R)), midspan of a simply supported strip R (1 - cos(L/(2R))) (small-deflection forms kappa L^2/2 and kappa L^2/8)")
			resp.References = append(resp.References, refArcGeometry)
			if math.Abs(kappa)*spanM > math.Pi {
				resp.Warnings = append(resp.Warnings, "the strip bends beyond a semicircle over its span: the arc geometry still holds, but the strip turns back on itself")
			}
		}
		if single && ivA.dT != 0 {
			res.Flexivity = si(calc.Flexivity(strip.Thickness(), kappa, float64(ivA.dT)))
			method = append(method, "flexivity = h kappa / dT (ASTM B106 definition, curvature change per unit temperature change times the total thickness)")
			resp.References = append(resp.References, refASTMB106)
		}
		if film != "" {
			h.stoney(resp, res, strip, film, coA.Strain, coB.Strain, nuA, nuB, measured, hasMeasured, &method)
		}
	}
	resp.Method = strings.Join(method, "; ")
	return resp, nil
}

// stoney adds the thin-film results: film stress from the mismatch,
// Stoney's curvature, and the film stress from a measured curvature.
func (h *Handler) stoney(resp *Response, res *DifferentialResults, strip calc.Bilayer, film string, eA, eB, nuA, nuB, measured float64, hasMeasured bool, method *[]string) {
	tf, ts, ef, es, nuF, nuS, eF, eS := strip.ThicknessAM, strip.ThicknessBM, strip.ModulusAPa, strip.ModulusBPa, nuA, nuB, eA, eB
	sign := -1.0 // Stoney's curvature is positive with the film concave; ours with a convex
	if film == "b" {
		tf, ts, ef, es, nuF, nuS, eF, eS = ts, tf, es, ef, nuS, nuF, eS, eF
		sign = 1
	}
	sigma := calc.FilmMismatchStress(eF, eS, ef, nuF)
	res.FilmStress = si(sigma)
	res.StoneyCurvature = si(sign * calc.StoneyCurvature(sigma, tf, ts, es, nuS))
	*method = append(*method, "thin film "+film+": biaxial film stress E_f/(1 - nu_f)(e_s - e_f), tension positive; Stoney (1909) curvature 6 sigma_f t_f (1 - nu_s) / (E_s t_s^2), signed as curvature",
		"curvature treats the strip as a beam (stress along its length only) and stoney_curvature as a plate under equal stress both ways, so for a thin film they differ by about the factor (1 - nu_s) / (1 - nu_f), here "+
			units.FormatNumber(math.Round((1-nuS)/(1-nuF)*1000)/1000)+": curvature for a narrow strip, stoney_curvature for a wafer or a wide panel")
	if hasMeasured {
		res.FilmStressMeasured = si(calc.StoneyStress(sign*measured, tf, ts, es, nuS))
		*method = append(*method, "film_stress_from_curvature = E_s t_s^2 kappa / (6 t_f (1 - nu_s)) (Stoney 1909)")
	}
	resp.References = append(resp.References, refStoney1909)
	if r := tf / ts; r > 0.1 {
		resp.Warnings = append(resp.Warnings, "Stoney's equation assumes a film much thinner than its substrate; here t_film/t_substrate = "+units.FormatNumber(math.Round(r*1000)/1000)+", so Timoshenko's curvature (curvature) is the better estimate")
	}
}

// peekMaterial returns the catalogue entry named by the parameter
// matName without reading it (p.strain reads and echoes it), or nil.
func peekMaterial(p *params, matName string) *materials.Material {
	r, ok := p.vals[matName]
	if !ok || r.kind != rawString {
		return nil
	}
	m, err := p.cat.Get(r.str)
	if err != nil {
		return nil
	}
	return m
}

// property reads a material property: the explicit parameter name wins
// over the catalogue entry of matName; the value used is echoed with
// where it came from.
func (h *Handler) property(p *params, resp *Response, name, matName, what, example string, get func(*materials.Material) *materials.Property, read func() (float64, bool), echo func(v float64) (float64, string)) (float64, bool) {
	m := peekMaterial(p, matName)
	if p.has(name) {
		v, ok := read()
		if ok && m != nil && get(m) != nil {
			resp.Warnings = append(resp.Warnings, name+" was given, so it was used instead of the catalogue "+what+" of "+m.ID)
		}
		return v, ok
	}
	if m == nil {
		if !p.has(matName) {
			p.invalid(name, "required: give "+name+" (such as "+strconv.Quote(example)+") or "+matName+" (a catalogue id)")
		}
		return 0, false // an unknown material is reported by its own reader
	}
	prop := get(m)
	if prop == nil {
		p.unprocessable(name, m.ID+" has no "+what+" in the catalogue: give "+name)
		return 0, false
	}
	v, unit := echo(prop.Value)
	p.inputs.addUsed(name, v, unit, "catalogue "+m.ID)
	resp.References = appendNew(resp.References, prop.Citations...)
	return prop.Value, true
}

// modulusFrom reads a Young's modulus, Pa.
func (h *Handler) modulusFrom(p *params, resp *Response, name, matName string) (float64, bool) {
	return h.property(p, resp, name, matName, "modulus", "70 GPa",
		func(m *materials.Material) *materials.Property { return m.Modulus },
		func() (float64, bool) {
			v, ok := p.positive(name, units.Stress)
			if ok {
				p.checkSoft(name, v, "as soft as a sealant or a foam; if a metal, concrete, glass or timber is meant, check the unit (GPa?)")
			}
			return v, ok
		},
		func(v float64) (float64, string) { return v / 1e9, "GPa" })
}

// poissonFrom reads a Poisson's ratio, which must lie in (-1, 0.5).
func (h *Handler) poissonFrom(p *params, resp *Response, name, matName string) (float64, bool) {
	return h.property(p, resp, name, matName, "Poisson's ratio", "0.3",
		func(m *materials.Material) *materials.Property { return m.Poisson },
		func() (float64, bool) {
			v, ok := p.number(name)
			if ok && !(v > -1 && v < 0.5) {
				p.unprocessable(name, "must lie between -1 and 0.5")
				return 0, false
			}
			return v, ok
		},
		func(v float64) (float64, string) { return v, "1" })
}

// appendNew appends the strings of add that list does not hold yet.
func appendNew(list []string, add ...string) []string {
	for _, a := range add {
		if !contains(list, a) {
			list = append(list, a)
		}
	}
	return list
}

// RestraintResults are the results of /v1/restraint.
type RestraintResults struct {
	FreeStrain          *Value `json:"free_strain" kind:"strain"`
	Stress              *Value `json:"stress" kind:"stress"`
	Force               *Value `json:"force,omitempty" kind:"force"`
	Restraint           *Value `json:"restraint" kind:"ratio"`
	FreeMovement        *Value `json:"free_movement,omitempty" kind:"movement"`
	Movement            *Value `json:"movement,omitempty" kind:"movement"`
	YieldDeltaT         *Value `json:"yield_delta_t,omitempty" kind:"difference"`
	CriticalDeltaT      *Value `json:"critical_delta_t,omitempty" kind:"difference"`
	CriticalForce       *Value `json:"critical_force,omitempty" kind:"force"`
	CriticalStress      *Value `json:"critical_stress,omitempty" kind:"stress"`
	Slenderness         *Value `json:"slenderness,omitempty" kind:"ratio"`
	BucklingUtilisation *Value `json:"buckling_utilisation,omitempty" kind:"ratio"`
	GradientCurvature   *Value `json:"gradient_curvature,omitempty" kind:"curvature"`
	EndMoment           *Value `json:"end_moment,omitempty" kind:"moment"`
	StressTop           *Value `json:"stress_top,omitempty" kind:"stress"`
	StressBottom        *Value `json:"stress_bottom,omitempty" kind:"stress"`

	// stressNotes are the warnings that quote stresses, written in MPa
	// and rewritten by render in the answer's stress unit.
	stressNotes []stressNote
}

// maxAbs is the largest magnitude of xs.
func maxAbs(xs []float64) float64 {
	m := 0.0
	for _, x := range xs {
		m = max(m, math.Abs(x))
	}
	return m
}

// stressNote is a warning that quotes stresses: si is its text in MPa,
// as the response's warnings hold it (other warnings may come before it
// later), text writes it with a stress formatter.
type stressNote struct {
	si   string
	text func(stress func(pa float64) string) string
}

// warnStress adds a warning that quotes stresses, in MPa until render
// writes it in the unit of the answer's stress.
func (r *RestraintResults) warnStress(resp *Response, text func(stress func(pa float64) string) string) {
	n := stressNote{si: text(mpa), text: text}
	r.stressNotes = append(r.stressNotes, n)
	resp.Warnings = append(resp.Warnings, n.si)
}

// render writes the warnings that quote stresses in the unit of the
// answer's stress (psi with units=us, or stress_unit), and leaves the body
// to the generic formats.
func (r *RestraintResults) render(out *outputOptions, resp *Response) ([]byte, string, error) {
	u := out.unitFor(resultField{name: "stress", kind: units.StressKind})
	stress := func(pa float64) string { return formatRounded(units.FromSI(pa, u)) + " " + u.Symbol }
	for _, n := range r.stressNotes {
		if i := slices.Index(resp.Warnings, n.si); i >= 0 {
			resp.Warnings[i] = n.text(stress)
		}
	}
	return nil, "", nil
}

// restraint godoc
//
//	@Summary		Stress and force in a restrained member; thermal buckling; gradient through the depth
//	@Description	Free strain e = alpha dT; stress = -R E e (tension positive, so a heated restrained member is in compression, negative); force = stress x area. Degree of restraint R from restraint (0 free .. 1 rigid, default 1) or from support_stiffness k, N/m, of a spring at one end with the other end rigid: R = k / (k + E A / L) (needs area and length). Buckling (end_condition with radius_of_gyration, or second_moment and area, and length): the temperature rise at which R E A alpha dT reaches the Euler load pi^2 E I / (K L)^2, K = 1 pinned, 0.5 fixed, 0.7 fixed-pinned, 2 cantilever (negative, a fall, for a negative alpha such as carbon fibre's along its fibres; a given negative alpha warns, as a likely sign slip). A warning when the stress or the Euler stress exceeds the yield strength (yield_strength or the catalogue's), when the yield strength is the catalogue's (it names the grade held, for structural-steel S355: give yield_strength for another grade), and when there is no strength to check the stress against (none given, none in the catalogue: concrete, masonry, glass). Gradient (delta_t_top, delta_t_bottom, depth): free curvature alpha (dT_top - dT_bottom)/depth, positive for a warmer top (the member hogs); uniform part the mean of the two; with second_moment the end moment E I kappa of a fixed-fixed member, positive when it compresses the top face, and the face stresses stress_top and stress_bottom = stress -/+ E kappa depth / 2 (tension positive); neither with an end_condition that lets the ends turn (pinned, fixed-pinned, cantilever); with axial compression, a warning gives the tension the cool face reaches with less axial restraint (the bending alone, at restraint 0). Demo example: a 168.3 x 7.1 mm steel pipe (A = 3600 mm2, r = 57 mm) held between anchors in a demo plant trench, guided every 6 m, warmed by 40 K.
//	@Tags			restraint
//	@Produce		json,plain,text/csv,application/xml
//	@Param			alpha				query		string	false	"coefficient, e.g. 12e-6/K; wins over material"
//	@Param			material			query		string	false	"catalogue id for alpha, modulus and yield strength, e.g. structural-steel"
//	@Param			modulus				query		string	false	"Young's modulus, e.g. 210 GPa; wins over material"
//	@Param			delta_t				query		string	false	"temperature difference, e.g. 40 K"
//	@Param			t_initial			query		string	false	"absolute initial temperature, e.g. 10 degC"
//	@Param			t_final				query		string	false	"absolute final temperature, e.g. 50 degC"
//	@Param			delta_t_top			query		string	false	"temperature difference at the top face (with delta_t_bottom and depth), e.g. 25 K"
//	@Param			delta_t_bottom		query		string	false	"temperature difference at the bottom face, e.g. 5 K"
//	@Param			depth				query		string	false	"depth of the section for a gradient, e.g. 400 mm"
//	@Param			area				query		string	false	"cross-section area, e.g. 3600 mm2"
//	@Param			restraint			query		number	false	"degree of restraint 0..1 (default 1)"
//	@Param			support_stiffness	query		string	false	"stiffness of the end spring, e.g. 50 kN/mm (instead of restraint)"
//	@Param			length				query		string	false	"member length (with support_stiffness or buckling), e.g. 24 m"
//	@Param			second_moment		query		string	false	"second moment of area, e.g. 1170 cm4"
//	@Param			radius_of_gyration	query		string	false	"radius of gyration (instead of second_moment), e.g. 57 mm"
//	@Param			end_condition		query		string	false	"end condition for buckling"	Enums(pinned, fixed, fixed-pinned, cantilever)
//	@Param			yield_strength		query		string	false	"yield strength, e.g. 355 MPa; wins over material"
//	@Param			alpha_model			query		string	false	"auto (default), constant or curve"	Enums(auto, constant, curve)
//	@Param			extrapolate			query		bool	false	"allow temperatures beyond a curve's range"
//	@Param			units				query		string	false	"si (default) or us"	Enums(si, us)
//	@Param			format				query		string	false	"json (default), text, csv or xml"	Enums(json, text, csv, xml)
//	@Param			result				query		string	false	"with format=text: the result to return"
//	@Param			on_error			query		string	false	"inline: errors as a 200 #ERROR line for text, csv, xml"	Enums(problem, inline)
//	@Success		200					{object}	Response{results=RestraintResults}
//	@Failure		400					{object}	Problem
//	@Failure		404					{object}	Problem
//	@Failure		422					{object}	Problem
//	@Router			/v1/restraint [get]
//	@Router			/v1/restraint [post]
func (h *Handler) restraint(p *params) (*Response, error) {
	resp := &Response{}
	// Temperatures: uniform, or a linear gradient whose mean is the uniform part.
	gradient := p.has("delta_t_top") || p.has("delta_t_bottom") || p.has("depth")
	var iv interval
	var ivOK bool
	var dTop, dBottom units.TemperatureDifference
	var depth float64
	if gradient {
		for _, n := range []string{"delta_t", "t_initial", "t_final"} {
			if p.has(n) {
				p.take(n)
				p.unprocessable(n, "contradicts a gradient (delta_t_top, delta_t_bottom and depth): with a gradient the uniform change is the mean of delta_t_top and delta_t_bottom")
			}
		}
		var ok1, ok2, ok3 bool
		dTop, ok1 = p.difference("delta_t_top")
		dBottom, ok2 = p.difference("delta_t_bottom")
		depth, ok3 = p.positive("depth", units.Length)
		for _, n := range []string{"delta_t_top", "delta_t_bottom", "depth"} {
			if !p.has(n) {
				p.invalid(n, "required for a gradient: give delta_t_top, delta_t_bottom and depth")
			}
		}
		ivOK = ok1 && ok2 && ok3
		iv = interval{dT: (dTop + dBottom) / 2}
	} else {
		iv, ivOK = p.interval("delta_t", "t_initial", "t_final")
	}
	model, extra := p.readModel()
	co, cok := p.strain("alpha", "material", iv, ivOK, model, extra)
	e, eok := h.modulusFrom(p, resp, "modulus", "material")

	area, hasArea := 0.0, p.has("area")
	aok := true
	if hasArea {
		area, aok = p.positive("area", units.Area)
	}
	length, hasLength := 0.0, p.has("length")
	lok := true
	if hasLength {
		length, lok = p.positive("length", units.Length)
	}

	// Degree of restraint.
	r, rok := 1.0, true
	p.exclusive("restraint", "support_stiffness")
	spring := p.has("support_stiffness") && !p.has("restraint")
	var k float64
	switch {
	case p.has("restraint"):
		r, rok = p.number("restraint")
		if rok && !(r >= 0 && r <= 1) {
			p.unprocessable("restraint", "must lie between 0 (free) and 1 (fully restrained)")
			rok = false
		}
		if p.has("support_stiffness") {
			p.take("support_stiffness")
			rok = false
		}
	case spring:
		k, rok = p.nonNegative("support_stiffness", units.Stiffness)
		if !hasArea {
			p.invalid("area", "required with support_stiffness: the member's axial stiffness is E A / L")
		}
		if !hasLength {
			p.invalid("length", "required with support_stiffness: the member's axial stiffness is E A / L")
		}
	}

	// Buckling and gradient section data.
	buckling := p.has("end_condition")
	var kFactor, radius, inertia float64
	hasInertia := p.has("second_moment")
	bok := true
	// A gradient's end moment and face stresses hold for ends fixed
	// against rotation: without end_condition, as the gradient case
	// assumes, or with end_condition=fixed. Pinned, fixed-pinned or
	// cantilever ends let the member curve (fully or in part).
	rotationHeld := true
	if buckling {
		if name, ok := p.choice("end_condition", calc.EndConditions()...); ok {
			kFactor, _ = calc.EffectiveLengthFactor(name)
			rotationHeld = name == "fixed"
		} else {
			bok = false
		}
		if !hasLength {
			p.invalid("length", "required with end_condition: the buckling length is K L")
		}
		if !p.has("second_moment") && !p.has("radius_of_gyration") {
			p.invalid("second_moment", "required with end_condition: give second_moment (with area) or radius_of_gyration")
		}
		p.exclusive("second_moment", "radius_of_gyration")
	} else {
		if p.has("radius_of_gyration") {
			p.take("radius_of_gyration")
			p.invalid("radius_of_gyration", "goes with end_condition (buckling)")
		}
		if hasInertia && !gradient {
			p.take("second_moment")
			p.invalid("second_moment", "goes with end_condition (buckling) or a gradient (delta_t_top, delta_t_bottom, depth)")
			hasInertia = false
		}
	}
	if hasInertia {
		var ok bool
		inertia, ok = p.positive("second_moment", units.SecondMoment)
		bok = bok && ok
		if buckling && !hasArea {
			p.invalid("area", "required with second_moment for buckling: the radius of gyration is sqrt(I / A)")
		}
		if ok && hasArea && aok {
			radius = math.Sqrt(inertia / area)
		}
	}
	if p.has("radius_of_gyration") && buckling {
		var ok bool
		radius, ok = p.positive("radius_of_gyration", units.Length)
		bok = bok && ok
	}
	fy, hasFy := 0.0, false
	fyFrom, fyGrade := "", ""
	if p.has("yield_strength") {
		fy, hasFy = p.positive("yield_strength", units.Stress)
		if hasFy {
			p.checkSoft("yield_strength", fy, "weaker than any structural material; check the unit (MPa?)")
		}
		fyFrom = "request"
	} else if m := peekMaterial(p, "material"); m != nil && m.Yield != nil {
		fy, hasFy, fyFrom = m.Yield.Value, true, "catalogue "+m.ID
		fyGrade = m.ID
		if grade, _, _ := strings.Cut(m.Yield.Note, ";"); grade != "" {
			fyGrade += " (" + grade + ")"
		}
		p.inputs.addUsed("yield_strength", fy/1e6, "MPa", fyFrom)
		resp.References = appendNew(resp.References, m.Yield.Citations...)
	}
	if buckling && bok && eok && lok && radius > 0 && kFactor > 0 {
		// A slenderness whose square overflows has an Euler stress of 0:
		// no member is that slender, so a unit is wrong. (An infinite one,
		// of a strut too short, is the not-finite result refused later.)
		if calc.EulerStress(e, radius, kFactor, length) == 0 {
			name := "radius_of_gyration"
			if !p.has(name) {
				name = "second_moment"
			}
			p.unprocessable(name, "with length gives a slenderness K L / r of "+formatRounded(kFactor*length/radius)+", beyond any member: check the units")
		}
	}
	if err := p.done(); err != nil || !(cok && eok && aok && lok && rok && bok) {
		if err == nil {
			err = newError(errUnprocessable, "the inputs cannot be computed")
		}
		return nil, err
	}

	if hot := max(iv.t1, iv.t2); iv.absolute && hot > units.Celsius(100) && peekMaterial(p, "material") != nil {
		// Catalogue properties are at room temperature; EN 1993-1-2
		// Table 3.1 (from memory, not re-read) keeps the modulus of carbon
		// steel to 100 degC and its effective yield strength to 400 degC.
		var from []string
		if !p.has("modulus") {
			from = append(from, "modulus")
		}
		if hasFy && fyFrom != "request" {
			from = append(from, "yield strength")
		}
		if len(from) > 0 {
			are := " are room-temperature values, which fall"
			if len(from) == 1 {
				are = " is a room-temperature value, which falls"
			}
			resp.Warnings = append(resp.Warnings, "the interval reaches "+units.CelsiusText(hot)+", but the catalogue's "+strings.Join(from, " and ")+are+" when a material is heated (for carbon steel EN 1993-1-2 Table 3.1 reduces the modulus above 100 degC and the effective yield strength above 400 degC): give "+strings.Join(from, " and ")+" at the temperature")
		}
	}
	method := []string{"free_strain e = alpha dT (" + co.from + "); stress = -R E e, tension positive (a heated restrained member is in compression, negative)"}
	resp.References = append(resp.References, refRestrained, refASTME228)
	if co.Kind != "constant" {
		resp.References = append(resp.References, refASMEIID)
	}
	resp.References = appendNew(resp.References, co.Source.Citations...)
	resp.Warnings = append(resp.Warnings, co.Warnings...)
	if spring {
		r = calc.EffectiveRestraint(k, e, area, length)
		method = append(method, "R = k / (k + E A / L) for a member between a rigid support and a spring k")
		resp.References = append(resp.References, refSpring)
	}
	st := calc.Restraint(co.Strain, e, r, length)
	res := &RestraintResults{FreeStrain: si(co.Strain), Stress: si(st.StressPa), Restraint: si(r)}
	resp.Results = res
	// The stresses to check: the axial one, and with a held gradient the
	// two faces'.
	checked := []float64{st.StressPa}
	var kappa, top, bottom float64
	faces := gradient && hasInertia && rotationHeld
	if gradient {
		kappa = calc.GradientCurvature(co.AlphaMean, float64(dTop), float64(dBottom), depth)
	}
	if faces {
		b := calc.HeldCurvatureStress(e, kappa, depth)
		top, bottom = st.StressPa-b, st.StressPa+b
		res.StressTop, res.StressBottom = si(top), si(bottom)
		checked = append(checked, top, bottom)
		// Axial compression takes from a face's bending tension; with less
		// axial restraint than assumed (rarely known) that face's tension
		// grows to the bending stress alone, at R = 0.
		if face, tension := "bottom", b; st.StressPa < 0 && math.Abs(b) > 0 {
			if b < 0 {
				face, tension = "top", -b
			}
			res.warnStress(resp, func(f func(float64) string) string {
				return "the axial compression (restraint " + formatRounded(r) + ") lowers the " + face + " face's tension from the held gradient: with less axial restraint that face's stress rises to " + f(tension) + " in tension (at restraint 0, the bending alone); check the face against cracking over the range of restraint the supports can give"
			})
		}
	}
	if hasArea {
		res.Force = si(st.StressPa * area)
		method = append(method, "force = stress x area")
	}
	if hasLength {
		res.FreeMovement, res.Movement = si(co.Strain*length), si(st.MovementM)
		method = append(method, "movement = (1 - R) e L at the free or spring end")
	}
	resp.Cautions = append(resp.Cautions, "A restrained member pushes or pulls on its supports with the force of the calculation: check the supports, anchors and their fixings for it.")
	if r > 0 && co.Strain != 0 {
		resp.Cautions = append(resp.Cautions, "The stress is linear-elastic: creep, relaxation, slip at the supports and yielding change it; the degree of restraint of real supports is rarely exactly known.")
	}
	if hasFy {
		if d := r * e * co.AlphaMean; d != 0 {
			res.YieldDeltaT = si(fy / math.Abs(d))
		}
		if s := maxAbs(checked); s > fy {
			res.warnStress(resp, func(f func(float64) string) string {
				return "the restrained stress " + f(s) + " exceeds the yield strength " + f(fy) + " (" + fyFrom + "): the member yields, the elastic stress and force are upper bounds, and an Euler buckling temperature overestimates the real one"
			})
		}
		if fyFrom != "request" {
			// The catalogue holds one grade's minimum (structural-steel is
			// S355, EN 1993-1-1 Table 3.1); S235 yields at two thirds of it.
			res.warnStress(resp, func(f func(float64) string) string {
				return "yield_strength " + f(fy) + " is the catalogue's for " + fyGrade + ": a member of a lower grade, another temper or a thicker section may yield at less, and yield_delta_t and the yield checks are then unconservative; give yield_strength for the member"
			})
		}
	} else if maxAbs(checked) != 0 {
		// No capacity to compare with: an empty list of warnings must not
		// read as a stress that is fine. Concrete, masonry and glass have no
		// yield strength and crack in tension at a few MPa.
		kind := "compression"
		if st.StressPa > 0 {
			kind = "tension"
		}
		none := "no material was named"
		if m := peekMaterial(p, "material"); m != nil {
			none = "the catalogue has none for " + m.ID
		}
		s := math.Abs(st.StressPa)
		res.warnStress(resp, func(f func(float64) string) string {
			what := "the restrained stress " + f(s) + " (" + kind + ")"
			if faces {
				what = "the restrained stresses (axial " + f(st.StressPa) + ", top face " + f(top) + ", bottom face " + f(bottom) + ", tension positive) are"
			} else {
				what += " is"
			}
			return what + " not checked against any strength: no yield_strength was given and " + none + "; compare with the member's capacity (a brittle material such as concrete, masonry or glass cracks in tension at a few MPa)"
		})
	}

	if buckling {
		res.Slenderness = si(kFactor * length / radius)
		res.CriticalStress = si(calc.EulerStress(e, radius, kFactor, length))
		if hasArea {
			res.CriticalForce = si(calc.EulerStress(e, radius, kFactor, length) * area)
		}
		dtcr := calc.CriticalDeltaT(co.AlphaMean, radius, kFactor, length, r)
		method = append(method, "buckling: dT_cr = pi^2 r^2 / (R alpha (K L)^2) where R E A alpha dT reaches the Euler load pi^2 E I / (K L)^2, K = "+units.FormatNumber(kFactor)+" (theoretical effective-length factor)")
		resp.References = append(resp.References, refEuler)
		resp.Cautions = append(resp.Cautions, "Euler buckling assumes a perfectly straight elastic strut; imperfections and yielding lower the critical temperature rise: check the member with the column curves of the governing code.")
		if math.IsInf(dtcr, 0) {
			resp.Warnings = append(resp.Warnings, "with no restraint (R = 0) or no expansion, heating puts no force in the member: it cannot buckle thermally, so critical_delta_t is not given")
		} else {
			// dT_cr takes the sign of alpha: with a negative coefficient
			// (carbon fibre along its fibres) a fall in temperature is what
			// lengthens the member and buckles it.
			res.CriticalDeltaT = si(dtcr)
			if co.AlphaMean < 0 {
				method = append(method, "alpha is negative, so dT_cr is a fall in temperature")
			}
			if co.Strain > 0 {
				u := float64(iv.dT) / dtcr
				res.BucklingUtilisation = si(u)
				if u >= 1 {
					// A concern of these inputs: a warning, which every format carries.
					change := "rise"
					if dtcr < 0 {
						change = "fall"
					}
					resp.Warnings = append(resp.Warnings, "the temperature "+change+" reaches the Euler critical "+change+" (buckling_utilisation "+formatRounded(u)+"): the restrained member buckles (a rail or pipeline can snake out of line); provide expansion joints, loops or lateral restraint")
				}
			}
			if hasFy && calc.EulerStress(e, radius, kFactor, length) > fy {
				res.warnStress(resp, func(f func(float64) string) string {
					return "the Euler critical stress exceeds the yield strength " + f(fy) + ": the strut yields before it buckles elastically, so critical_delta_t overestimates the real critical rise (inelastic buckling)"
				})
			}
		}
		if co.Kind != "constant" {
			method = append(method, "alpha in dT_cr is the mean coefficient over the interval")
		}
	}

	if gradient {
		res.GradientCurvature = si(kappa)
		method = append(method, "gradient: linear through the depth, uniform part (dT_top + dT_bottom)/2 (section symmetric about mid-depth); free curvature alpha (dT_top - dT_bottom)/depth, positive for a warmer top (the member hogs)")
		resp.References = append(resp.References, refGradient)
		if hasInertia && !rotationHeld {
			resp.Warnings = append(resp.Warnings, "end_condition lets the ends turn, so the gradient's curvature is free (fully or in part): no end_moment or face stresses are given, which assume both ends fixed against rotation")
		}
		if faces {
			res.EndMoment = si(calc.FixedEndMoment(e, inertia, kappa))
			method = append(method, "end_moment = E I kappa, the moment that holds a fixed-fixed member straight, positive when it compresses the top face",
				"stress_top, stress_bottom = stress -/+ E kappa depth / 2, the axial stress with the bending stress of the held curvature at each face (M (h/2) / I)")
			resp.Cautions = append(resp.Cautions, "A fixed-fixed member under a temperature gradient carries the end moment at its supports and along its length: check the connections for it.")
		}
	}
	resp.Method = strings.Join(method, "; ")
	return resp, nil
}

// mpa writes a stress in MPa to four significant digits, for messages.
func mpa(pa float64) string { return formatRounded(pa/1e6) + " MPa" }
