package handlers

import (
	"math"
	"slices"

	"github.com/thermalmovement/service/internal/calc"
	"github.com/thermalmovement/service/internal/materials"
	"github.com/thermalmovement/service/internal/units"
)

func (h *Handler) expansionCalcs() []calcSpec {
	return []calcSpec{
		{name: "expansion/linear", results: (*LinearResults)(nil), fn: h.linear},
		{name: "expansion/area", results: (*AreaResults)(nil), fn: h.area},
		{name: "expansion/volume", results: (*VolumeResults)(nil), fn: h.volume},
	}
}

// References of the methods, cited in responses.
const (
	refASTME228  = "ASTM E228 / E831: mean coefficient of linear thermal expansion = (1/L0)(dL/dT), L0 at the initial temperature"
	refASMEIID   = "ASME BPVC Section II Part D, tables TE: strain over T1..T2 from mean coefficients referenced to T0 = [a2 (T2 - T0) - a1 (T1 - T0)] / [1 + a1 (T1 - T0)]"
	refKell1975  = "Kell, G. S. (1975), Density, thermal expansivity, and compressibility of liquid water from 0 to 150 degC, J. Chem. Eng. Data 20(1):97-105"
	refIsotropic = "Isotropic solid: each length scales by (1 + e), an area by (1 + e)^2, a volume by (1 + e)^3 (any physics or materials handbook)"
)

// LinearResults are the results of /v1/expansion/linear.
type LinearResults struct {
	DeltaLength *Value `json:"delta_length" kind:"movement"`
	FinalLength *Value `json:"final_length" kind:"length"`
	Strain      *Value `json:"strain" kind:"strain"`
	AlphaMean   *Value `json:"alpha_mean" kind:"coefficient"`
}

// linear godoc
//
//	@Summary		Linear thermal expansion of a length
//	@Description	dL = alpha L0 dT with a constant mean coefficient, or the strain of the material's temperature-dependent data between t_initial and t_final. Every dimensional input carries its unit ("50 m", "12e-6/K"). Demo example: a 48 m steel footbridge girder warming from -15 degC to 35 degC.
//	@Tags			expansion
//	@Produce		json,plain,text/csv,application/xml
//	@Param			length		query		string	true	"length at the initial temperature, e.g. 48 m"
//	@Param			alpha		query		string	false	"mean coefficient of linear expansion, e.g. 12e-6/K, 6.5e-6 1/degF, 11.7 ppm/K; wins over material"
//	@Param			material	query		string	false	"catalogue id instead of alpha, e.g. structural-steel"
//	@Param			delta_t		query		string	false	"temperature difference, e.g. 50 K or 90 degF (a difference: 90 degF = 50 K)"
//	@Param			t_initial	query		string	false	"absolute initial temperature, e.g. -15 degC"
//	@Param			t_final		query		string	false	"absolute final temperature, e.g. 35 degC"
//	@Param			alpha_model	query		string	false	"auto (default), constant or curve"	Enums(auto, constant, curve)
//	@Param			extrapolate	query		bool	false	"allow temperatures beyond a curve's range"
//	@Param			units		query		string	false	"si (default) or us"	Enums(si, us)
//	@Param			format		query		string	false	"json (default), text, csv or xml"	Enums(json, text, csv, xml)
//	@Param			result		query		string	false	"with format=text: the result to return"
//	@Param			on_error	query		string	false	"inline: errors as a 200 #ERROR line for text, csv, xml"	Enums(problem, inline)
//	@Success		200			{object}	Response{results=LinearResults}
//	@Failure		400			{object}	Problem
//	@Failure		404			{object}	Problem
//	@Failure		422			{object}	Problem
//	@Router			/v1/expansion/linear [get]
//	@Router			/v1/expansion/linear [post]
func (h *Handler) linear(p *params) (*Response, error) {
	p.require("length")
	length, lok := p.positive("length", units.Length)
	iv, ivOK := p.interval("delta_t", "t_initial", "t_final")
	model, extra := p.readModel()
	co, cok := p.strain("alpha", "material", iv, ivOK, model, extra)
	if err := p.done(); err != nil || !(lok && cok) {
		return nil, p.done()
	}
	r := calc.LinearStrain(length, co.Strain, iv.dT)
	if co.Kind == "constant" {
		r = calc.LinearConst(length, co.AlphaMean, iv.dT)
	}
	resp := &Response{
		Results: &LinearResults{
			DeltaLength: si(r.DeltaLengthM),
			FinalLength: si(r.FinalLengthM),
			Strain:      si(r.Strain),
			AlphaMean:   si(co.AlphaMean),
		},
	}
	if !p.brief {
		resp.Method = linearMethod(co)
	}
	h.cite(p, resp, co)
	return resp, nil
}

func linearMethod(co coefficient) string {
	if co.Kind == "constant" {
		return "dL = alpha L0 dT with a constant mean coefficient alpha (" + co.from + "); L = L0 + dL"
	}
	if co.Joined {
		return "dL = L0 e over two curves joined at tj = " + units.CelsiusText(co.Join) + ": 1 + e = (1 + e1) (1 + e2), e1 from the lower temperature to tj by the first curve and e2 from tj to the higher by the second (for cooling, 1 + e is the inverse), each (1 + e(T2)) / (1 + e(T1)) - 1 from its total strain e(T) (" + co.from + "); alpha_mean = e / dT"
	}
	return "dL = L0 e, e = (1 + e(t_final)) / (1 + e(t_initial)) - 1 from the total strain e(T) of the " + co.Kind + " data (" + co.from + "); alpha_mean = e / dT"
}

// cite adds the warnings of the coefficient used and, but for a batch row
// (p.brief), its references.
func (h *Handler) cite(p *params, resp *Response, co coefficient) {
	resp.Warnings = append(resp.Warnings, co.Warnings...)
	if p.brief {
		return
	}
	resp.References = slices.Grow(resp.References, 2+len(co.Source.Refs))
	resp.References = append(resp.References, refASTME228)
	if co.Kind != "constant" {
		resp.References = append(resp.References, refASMEIID)
	}
	resp.References = append(resp.References, co.Source.Citations...)
}

// waterCritical is the critical temperature of water, 647.096 K
// (IAPWS-95, from memory): above it there is no liquid to expand.
// waterColdest is where supercooled water freezes however still it is
// kept, about -40 degC (homogeneous nucleation, from memory of the cloud
// physics literature, not re-read): below it there is no liquid either,
// and Kell's equation, whose denominator is zero at -59.24 degC, gives
// densities far from water's well before that.
const (
	waterCritical = units.Temperature(647.096)
	waterColdest  = units.Temperature(233.15)
)

// waterBeyond names the temperature of an extrapolated water interval
// that Kell's equation cannot be taken to, and says why: above the
// critical point, below the coldest liquid water, or where the polynomial
// gives no positive density.
func waterBeyond(iv interval, rho1, rho2 float64) (name, why string) {
	for _, e := range [...]struct {
		name string
		t    units.Temperature
		rho  float64
	}{{"t_initial", iv.t1, rho1}, {"t_final", iv.t2, rho2}} {
		switch {
		case e.t > waterCritical:
			return e.name, units.CelsiusText(e.t) + " is above the critical point of water, " + units.CelsiusText(waterCritical) + ": there is no liquid to expand"
		case e.t < waterColdest:
			return e.name, units.CelsiusText(e.t) + " is below " + units.CelsiusText(waterColdest) + ", where even supercooled water freezes: there is no liquid to expand"
		case !(e.rho > 0) || math.IsInf(e.rho, 0):
			return e.name, "Kell's equation gives no density of water at " + units.CelsiusText(e.t)
		}
	}
	return "", ""
}

// AreaResults are the results of /v1/expansion/area.
type AreaResults struct {
	DeltaArea       *Value `json:"delta_area" kind:"area-change"`
	FinalArea       *Value `json:"final_area" kind:"area"`
	DeltaAreaLinear *Value `json:"delta_area_linear" kind:"area-change"`
	FinalLength     *Value `json:"final_length,omitempty" kind:"length"`
	FinalWidth      *Value `json:"final_width,omitempty" kind:"length"`
	FinalDiameter   *Value `json:"final_diameter,omitempty" kind:"length"`
	DeltaDiameter   *Value `json:"delta_diameter,omitempty" kind:"movement"`
	AlphaMean       *Value `json:"alpha_mean,omitempty" kind:"coefficient"`
}

// area godoc
//
//	@Summary		Thermal expansion of an area: a plate, or a hole in one
//	@Description	Exact A (1 + e_x)(1 + e_y) and the first-order A (e_x + e_y) (= 2 alpha A dT) beside it. Give area, or length and width, or diameter. A hole grows as the material around it would: its diameter scales by (1 + e) too. Orthotropic sheets take alpha_x and alpha_y. Demo example: a 1.2 m x 2.4 m aluminium facade panel from 20 degC to 70 degC.
//	@Tags			expansion
//	@Produce		json,plain,text/csv,application/xml
//	@Param			area		query		string	false	"area at the initial temperature, e.g. 2.88 m2"
//	@Param			length		query		string	false	"with width: the sides of a rectangle, e.g. 2.4 m"
//	@Param			width		query		string	false	"with length, e.g. 1.2 m"
//	@Param			diameter	query		string	false	"diameter of a disc or a hole, e.g. 80 mm"
//	@Param			hole		query		bool	false	"true when the diameter is a hole in the material (same arithmetic; the method says so)"
//	@Param			alpha		query		string	false	"isotropic mean coefficient, e.g. 23e-6/K"
//	@Param			alpha_x		query		string	false	"coefficient along length (orthotropic; with alpha_y)"
//	@Param			alpha_y		query		string	false	"coefficient along width (orthotropic; with alpha_x)"
//	@Param			material	query		string	false	"catalogue id instead of alpha"
//	@Param			delta_t		query		string	false	"temperature difference, e.g. 50 K"
//	@Param			t_initial	query		string	false	"absolute initial temperature"
//	@Param			t_final		query		string	false	"absolute final temperature"
//	@Param			alpha_model	query		string	false	"auto (default), constant or curve"	Enums(auto, constant, curve)
//	@Param			extrapolate	query		bool	false	"allow temperatures beyond a curve's range"
//	@Param			units		query		string	false	"si (default) or us"	Enums(si, us)
//	@Param			format		query		string	false	"json (default), text, csv or xml"	Enums(json, text, csv, xml)
//	@Success		200			{object}	Response{results=AreaResults}
//	@Failure		400			{object}	Problem
//	@Failure		404			{object}	Problem
//	@Failure		422			{object}	Problem
//	@Router			/v1/expansion/area [get]
//	@Router			/v1/expansion/area [post]
func (h *Handler) area(p *params) (*Response, error) {
	p.require("area", "length", "diameter")
	if !p.exclusive("area", "length", "diameter") {
		p.take("width") // it goes with length, which is contradicted
	}
	var areaM2, lengthM, widthM, diameterM float64
	var gok bool
	switch {
	case p.has("area"):
		areaM2, gok = p.positive("area", units.Area)
	case p.has("length"):
		var ok1, ok2 bool
		lengthM, ok1 = p.positive("length", units.Length)
		widthM, ok2 = p.positive("width", units.Length)
		if !p.has("width") {
			p.invalid("width", "required with length")
		}
		areaM2, gok = lengthM*widthM, ok1 && ok2
	case p.has("diameter"):
		diameterM, gok = p.positive("diameter", units.Length)
		areaM2 = calc.CircleArea(diameterM)
	}
	if p.has("width") && !p.has("length") {
		p.take("width")
		p.invalid("width", "width goes with length")
	}
	hole := p.flag("hole")
	if hole && !p.has("diameter") {
		p.invalid("hole", "hole goes with diameter")
	}
	iv, ivOK := p.interval("delta_t", "t_initial", "t_final")
	model, extra := p.readModel()

	var ex, ey float64
	var co coefficient
	var cok bool
	ortho := p.has("alpha_x") || p.has("alpha_y")
	if ortho {
		if p.has("alpha") || p.has("material") {
			p.unprocessable("alpha_x", "give alpha_x and alpha_y, or alpha or material, not both")
			p.markUsed("alpha") // in conflict, not unknown
			p.markUsed("material")
		}
		if p.has("diameter") {
			p.unprocessable("alpha_x", "an orthotropic disc does not stay circular; give length and width")
		}
		ax, ok1 := p.dim("alpha_x", units.Coefficient)
		ay, ok2 := p.dim("alpha_y", units.Coefficient)
		if !p.has("alpha_x") {
			p.invalid("alpha_x", "required with alpha_y")
		}
		if !p.has("alpha_y") {
			p.invalid("alpha_y", "required with alpha_x")
		}
		ex, ey, cok = ax*float64(iv.dT), ay*float64(iv.dT), ok1 && ok2 && ivOK
		co = coefficient{Expansion: materials.Expansion{Kind: "constant"}, from: "request"}
		// As p.strain does for alpha.
		x := ivOK && ok1 && p.shrinksToNothing("alpha_x", ax, iv.dT, "the material")
		y := ivOK && ok2 && p.shrinksToNothing("alpha_y", ay, iv.dT, "the material")
		cok = cok && !x && !y
		co.Warnings = appendNegative(appendNegative(co.Warnings, "alpha_x", ax), "alpha_y", ay)
	} else {
		co, cok = p.strain("alpha", "material", iv, ivOK, model, extra)
		ex, ey = co.Strain, co.Strain
	}
	if err := p.done(); err != nil || !(gok && cok) {
		return nil, p.done()
	}
	r := calc.AreaStrain(areaM2, ex, ey)
	res := &AreaResults{
		DeltaArea:       si(r.DeltaAreaM2),
		FinalArea:       si(r.FinalAreaM2),
		DeltaAreaLinear: si(r.DeltaAreaLinearM2),
	}
	switch {
	case lengthM > 0:
		res.FinalLength, res.FinalWidth = si(lengthM*(1+ex)), si(widthM*(1+ey))
	case diameterM > 0:
		res.FinalDiameter, res.DeltaDiameter = si(diameterM*(1+ex)), si(diameterM*ex)
	}
	if !ortho {
		res.AlphaMean = si(co.AlphaMean)
	}
	resp := &Response{Results: res}
	if !p.brief {
		resp.Method = areaMethod(co, lengthM <= 0 && diameterM > 0 && hole)
		resp.References = []string{refIsotropic}
	}
	h.cite(p, resp, co)
	return resp, nil
}

func areaMethod(co coefficient, hole bool) string {
	m := "A = A0 (1 + e_x)(1 + e_y), e = alpha dT for each in-plane direction (" + co.from + "); first order dA = A0 (e_x + e_y)"
	if hole {
		m += "; a hole grows as the material around it would, its diameter scaling by (1 + e)"
	}
	return m
}

// VolumeResults are the results of /v1/expansion/volume.
type VolumeResults struct {
	DeltaVolume       *Value `json:"delta_volume" kind:"volume-change"`
	FinalVolume       *Value `json:"final_volume" kind:"volume"`
	DeltaVolumeLinear *Value `json:"delta_volume_linear" kind:"volume-change"`
	BetaMean          *Value `json:"beta_mean" kind:"coefficient"`
	VesselDeltaVolume *Value `json:"vessel_delta_volume,omitempty" kind:"volume-change"`
	VesselFinalVolume *Value `json:"vessel_final_volume,omitempty" kind:"volume"`
	NetOverflow       *Value `json:"net_overflow,omitempty" kind:"volume-change"`
	DensityInitial    *Value `json:"density_initial,omitempty" kind:"density"`
	DensityFinal      *Value `json:"density_final,omitempty" kind:"density"`
}

// volume godoc
//
//	@Summary		Thermal expansion of a volume: a solid, a liquid, a liquid in a vessel
//	@Description	A solid by alpha: V (1 + alpha dT)^3 exactly, 3 alpha V dT beside it. A liquid by beta: dV = beta V dT (refused where 1 + beta dT <= 0; a catalogue liquid whose band's top is more than 5 % above its beta warns, with how much more the volume changes there). Water by Kell's (1975) density equation, 0..150 degC: V2 = V1 rho1/rho2 (needs t_initial and t_final). With a vessel (vessel_alpha or vessel_material), its capacity (vessel_volume, default the liquid volume: brim full) grows as (1 + e)^3; net_overflow = liquid final volume - vessel final capacity (positive: spills). Demo example: a 2.5 m3 steel heat-exchanger shell filled with water from 10 degC to 80 degC.
//	@Tags			expansion
//	@Produce		json,plain,text/csv,application/xml
//	@Param			volume			query		string	true	"volume at the initial temperature, e.g. 2.5 m3 or 400 L"
//	@Param			alpha			query		string	false	"linear coefficient of a solid (beta = 3 alpha to first order)"
//	@Param			beta			query		string	false	"mean volumetric coefficient, e.g. 2.1e-4/K"
//	@Param			material		query		string	false	"catalogue id of a solid or a liquid, e.g. water"
//	@Param			vessel_alpha	query		string	false	"linear coefficient of the container wall"
//	@Param			vessel_material	query		string	false	"catalogue id of the container wall, e.g. structural-steel"
//	@Param			vessel_volume	query		string	false	"capacity of the container at the initial temperature (default: volume)"
//	@Param			delta_t			query		string	false	"temperature difference, e.g. 70 K"
//	@Param			t_initial		query		string	false	"absolute initial temperature, e.g. 10 degC"
//	@Param			t_final			query		string	false	"absolute final temperature, e.g. 80 degC"
//	@Param			alpha_model		query		string	false	"auto (default), constant or curve"	Enums(auto, constant, curve)
//	@Param			extrapolate		query		bool	false	"allow temperatures beyond a curve's or equation's range"
//	@Param			units			query		string	false	"si (default) or us"	Enums(si, us)
//	@Param			format			query		string	false	"json (default), text, csv or xml"	Enums(json, text, csv, xml)
//	@Success		200				{object}	Response{results=VolumeResults}
//	@Failure		400				{object}	Problem
//	@Failure		404				{object}	Problem
//	@Failure		422				{object}	Problem
//	@Router			/v1/expansion/volume [get]
//	@Router			/v1/expansion/volume [post]
func (h *Handler) volume(p *params) (*Response, error) {
	p.require("volume")
	vol, vok := p.positive("volume", units.Volume)
	iv, ivOK := p.interval("delta_t", "t_initial", "t_final")
	model, extra := p.readModel()
	resp := &Response{}
	res := &VolumeResults{}
	var r calc.Volume
	ok := false

	if !p.has("alpha") && !p.has("beta") && !p.has("material") {
		p.invalid("alpha", "required: give alpha (a solid), beta (a volumetric coefficient) or material")
	}
	p.exclusive("alpha", "beta")
	// A liquid from the catalogue takes its own path; a solid's strain is
	// resolved like a length's.
	var liquid *materials.Material
	if r, found := p.vals["material"]; found && r.kind == rawString && !p.has("alpha") {
		if m, err := h.cat.Get(r.str); err == nil && m.Phase == "liquid" {
			liquid, _ = p.material("material")
		}
	}
	switch {
	case p.has("beta") || liquid != nil:
		beta, hasBeta := p.dim("beta", units.Coefficient)
		if (p.has("beta") && !hasBeta) || !ivOK {
			p.markUsed("material") // noted beside beta, not unknown
			break
		}
		if hasBeta {
			if liquid == nil && p.has("material") {
				liquid, _ = p.material("material") // a solid's entry: noted, not used
			}
			if liquid != nil {
				resp.Warnings = append(resp.Warnings, "beta was given, so it was used instead of the catalogue data of "+liquid.ID)
			}
			if p.shrinksToNothing("beta", beta, iv.dT, "the liquid") {
				break
			}
			r, ok = calc.VolumeBeta(vol, beta, iv.dT), vok
			resp.Method = "dV = beta V0 dT with a constant mean volumetric coefficient beta (request)"
			res.BetaMean = si(beta)
			break
		}
		if liquid.LiquidModel == "kell-1975" {
			if !iv.absolute {
				p.unprocessable("delta_t", liquid.ID+" expands very differently at different temperatures: give t_initial and t_final")
				break
			}
			rho1, err1 := calc.WaterDensity(iv.t1)
			rho2, err2 := calc.WaterDensity(iv.t2)
			if err1 != nil || err2 != nil {
				if !extra {
					name := "t_initial"
					if err1 == nil {
						name = "t_final"
					}
					p.unprocessable(name, "outside 0..150 degC, the range of Kell's equation for liquid water; set extrapolate=true to extrapolate")
					break
				}
				rho1, rho2 = calc.WaterDensityAnyT(iv.t1), calc.WaterDensityAnyT(iv.t2)
				if name, why := waterBeyond(iv, rho1, rho2); name != "" {
					p.unprocessable(name, why+"; extrapolate=true cannot reach it")
					break
				}
				resp.Warnings = append(resp.Warnings, "extrapolated beyond 0..150 degC, the range of Kell's equation; water may freeze or boil there")
			}
			if hot := units.Celsius(100); iv.t1 > hot || iv.t2 > hot {
				resp.Warnings = append(resp.Warnings, "the interval reaches above 100 degC, where water boils at atmospheric pressure: Kell's densities are of liquid water, so the answer holds for water kept liquid under pressure (its small compressibility neglected)")
			}
			r, ok = calc.VolumeDensity(vol, rho1, rho2), vok
			res.DensityInitial, res.DensityFinal = si(rho1), si(rho2)
			if iv.dT != 0 {
				res.BetaMean = si((r.FinalVolumeM3/vol - 1) / float64(iv.dT))
			} else {
				res.BetaMean = si(0)
			}
			if !p.brief {
				resp.Method = "V = V0 rho(t_initial) / rho(t_final), rho by Kell's (1975) equation for liquid water at 1 atm"
				resp.References = append(resp.References, refKell1975)
			}
			break
		}
		b := liquid.Beta
		var outside []string
		if iv.absolute {
			outside = liquid.BetaWarnings(iv.t1, iv.t2)
		}
		if len(outside) > 0 && !extra {
			// As for a solid with a constant only: its range is all the
			// data there is (and past it a liquid may boil or freeze).
			p.unprocessable("material", outside[0]+"; set extrapolate=true to extrapolate, or give beta")
			break
		}
		name := "delta_t"
		if iv.absolute {
			name = "t_final"
		}
		if p.shrinksToNothing(name, b.Value, iv.dT, liquid.ID+" at its constant beta") {
			break
		}
		r, ok = calc.VolumeBeta(vol, b.Value, iv.dT), vok
		res.BetaMean = si(b.Value)
		if b.HasBand && b.High > 1.05*b.Value && iv.dT != 0 {
			// A vessel's expansion volume (or its low level, cooling) is
			// sized on the change: the band's high end is the safe side.
			// Under 5 % more is within what the data tell apart (common
			// practice, no published source).
			size := "size an expansion volume"
			if iv.dT < 0 {
				size = "check the low level"
			}
			resp.Warnings = append(resp.Warnings, "the catalogue's beta of "+liquid.ID+", "+units.FormatNumber(b.Value)+"/K, lies below the high end of its band ("+
				units.FormatNumber(b.Low)+" to "+units.FormatNumber(b.High)+"/K): at the high end the volume changes "+formatRounded((b.High/b.Value-1)*100)+" % more; "+size+" on the project's value (give beta)")
		}
		p.inputs.addUsed("beta", b.Value, "1/K", "material "+liquid.ID)
		if !p.brief {
			resp.Method = "dV = beta V0 dT with the constant mean volumetric coefficient of " + liquid.ID
			resp.References = append(resp.References, b.Citations...)
		}
		resp.Warnings = append(resp.Warnings, outside...)
		if !iv.absolute {
			resp.Warnings = append(resp.Warnings, liquid.BetaDeltaWarnings(iv.dT)...)
		}
	default:
		co, cok := p.strain("alpha", "material", iv, ivOK, model, extra)
		if !cok {
			break
		}
		r, ok = calc.SolidVolume(vol, co.Strain), vok
		res.BetaMean = si(3 * co.AlphaMean)
		if iv.dT != 0 {
			res.BetaMean = si((r.FinalVolumeM3/vol - 1) / float64(iv.dT))
		}
		if !p.brief {
			resp.Method = "V = V0 (1 + e)^3 for an isotropic solid, e = linear strain (" + co.from + "); first order dV = 3 e V0 (beta = 3 alpha)"
			resp.References = append(resp.References, refIsotropic)
		}
		h.cite(p, resp, co)
	}

	// The container.
	var vessel *calc.Vessel
	if p.has("vessel_alpha") || p.has("vessel_material") || p.has("vessel_volume") {
		capacity := vol
		if c, cok := p.positive("vessel_volume", units.Volume); cok {
			capacity = c
		}
		var vco coefficient
		vcok := false
		if !p.has("vessel_alpha") && !p.has("vessel_material") {
			p.invalid("vessel_alpha", "required with vessel_volume: give vessel_alpha or vessel_material")
		} else {
			vco, vcok = p.strain("vessel_alpha", "vessel_material", iv, ivOK, model, extra)
		}
		if vcok && ok {
			v := calc.InVessel(capacity, vco.Strain, r.FinalVolumeM3)
			vessel = &v
			if !p.brief {
				resp.Method += "; vessel capacity C = C0 (1 + e_vessel)^3 (" + vco.from + "), net_overflow = V - C"
				resp.References = append(resp.References, vco.Source.Citations...)
			}
			resp.Warnings = append(resp.Warnings, vco.Warnings...)
			if capacity < vol {
				p.unprocessable("vessel_volume", "smaller than the liquid volume: the vessel overflows before heating")
			}
		}
	}
	if err := p.done(); err != nil || !ok {
		if err == nil {
			err = newError(errUnprocessable, "the inputs cannot be computed")
		}
		return nil, err
	}
	res.DeltaVolume, res.FinalVolume, res.DeltaVolumeLinear = si(r.DeltaVolumeM3), si(r.FinalVolumeM3), si(r.DeltaVolumeLinearM3)
	if vessel != nil {
		res.VesselDeltaVolume, res.VesselFinalVolume, res.NetOverflow = si(vessel.DeltaVolumeM3), si(vessel.FinalVolumeM3), si(vessel.NetOverflowM3)
		if vessel.NetOverflowM3 > 0 {
			resp.Warnings = append(resp.Warnings, "the liquid outgrows its vessel: provide an expansion volume or relief")
		}
	}
	if !finite(r.FinalVolumeM3) || math.Abs(r.FinalVolumeM3) == 0 {
		return nil, newError(errUnprocessable, "the inputs lead to a volume that is not finite")
	}
	resp.Results = res
	return resp, nil
}
