package handlers

import (
	"net/http"

	"github.com/gin-gonic/gin"

	"github.com/thermalmovement/service/internal/materials"
	"github.com/thermalmovement/service/internal/units"
)

// MaterialList is the body of GET /v1/materials.
type MaterialList struct {
	Version   string         `json:"version" example:"2026.12.2"`
	Materials []MaterialInfo `json:"materials"`
}

// MaterialInfo is one catalogue entry with the source of every value.
type MaterialInfo struct {
	ID            string           `json:"id" example:"structural-steel"`
	Name          string           `json:"name" example:"Structural steel (carbon and low-alloy)"`
	Category      string           `json:"category" example:"metal"`
	Phase         string           `json:"phase" example:"solid"`
	Description   string           `json:"description,omitempty"`
	Alpha         *CoefficientInfo `json:"alpha,omitempty"`
	Beta          *CoefficientInfo `json:"beta,omitempty"`
	Modulus       *PropertyInfo    `json:"modulus,omitempty"`
	Poisson       *PropertyInfo    `json:"poisson,omitempty"`
	YieldStrength *PropertyInfo    `json:"yield_strength,omitempty"`
	Density       *PropertyInfo    `json:"density,omitempty"`
	LiquidModel   string           `json:"liquid_model,omitempty" example:"kell-1975"`
	Curves        []CurveInfo      `json:"curves,omitempty"`
}

// CoefficientInfo is a coefficient with its range and band.
type CoefficientInfo struct {
	Value      Number   `json:"value" swaggertype:"number" example:"0.000012"`
	Unit       string   `json:"unit" example:"1/K"`
	Low        *Number  `json:"low,omitempty" swaggertype:"number"`
	High       *Number  `json:"high,omitempty" swaggertype:"number"`
	TMin       *Number  `json:"t_min,omitempty" swaggertype:"number"`
	TMax       *Number  `json:"t_max,omitempty" swaggertype:"number"`
	TUnit      string   `json:"t_unit,omitempty" example:"degC"`
	Confidence string   `json:"confidence" example:"memory"`
	Note       string   `json:"note,omitempty"`
	Sources    []string `json:"sources"`
}

// PropertyInfo is a material property with its source.
type PropertyInfo struct {
	Value      Number   `json:"value" swaggertype:"number" example:"210"`
	Unit       string   `json:"unit" example:"GPa"`
	Confidence string   `json:"confidence" example:"read"`
	Note       string   `json:"note,omitempty"`
	Sources    []string `json:"sources"`
}

// CurveInfo is temperature-dependent expansion data.
type CurveInfo struct {
	Kind       string   `json:"kind" example:"polynomial-strain"`
	TMin       Number   `json:"t_min" swaggertype:"number"`
	TMax       Number   `json:"t_max" swaggertype:"number"`
	TUnit      string   `json:"t_unit" example:"degC"`
	Confidence string   `json:"confidence" example:"read"`
	Note       string   `json:"note,omitempty"`
	Sources    []string `json:"sources"`
}

// listMaterials godoc
//
//	@Summary		The material catalogue
//	@Description	Every material with its coefficient (the temperature range it holds for, its low/high band), modulus, Poisson's ratio, yield strength and density where known, temperature-dependent curves, and the source of every value.
//	@Tags			materials
//	@Produce		json
//	@Success		200	{object}	MaterialList
//	@Router			/v1/materials [get]
func (h *Handler) listMaterials(c *gin.Context) {
	out := MaterialList{Version: h.cat.Version}
	for _, m := range h.cat.All() {
		out.Materials = append(out.Materials, h.materialInfo(m))
	}
	sendJSON(c, http.StatusOK, out)
}

// getMaterial godoc
//
//	@Summary		One catalogue material
//	@Tags			materials
//	@Produce		json
//	@Param			id	path		string	true	"material id, e.g. structural-steel"
//	@Success		200	{object}	MaterialInfo
//	@Failure		404	{object}	Problem
//	@Router			/v1/materials/{id} [get]
func (h *Handler) getMaterial(c *gin.Context) {
	m, err := h.cat.Get(c.Param("id"))
	if err != nil {
		h.problem(c, nil, newError(errNotFound, "no material with that id"+didYouMean(h.cat.Suggest(c.Param("id")))+"; GET /v1/materials lists the ids"))
		return
	}
	sendJSON(c, http.StatusOK, h.materialInfo(m))
}

func num(v float64) *Number {
	n := Number(v)
	return &n
}

func (h *Handler) coefInfo(co *materials.Coefficient) *CoefficientInfo {
	if co == nil {
		return nil
	}
	ci := &CoefficientInfo{Value: Number(co.Value), Unit: "1/K", Confidence: co.Confidence, Note: co.Note, Sources: co.Citations}
	if co.HasBand {
		ci.Low, ci.High = num(co.Low), num(co.High)
	}
	if co.HasRange {
		ci.TMin, ci.TMax, ci.TUnit = num(co.TMin.Celsius()), num(co.TMax.Celsius()), "degC"
	}
	return ci
}

func (h *Handler) propInfo(p *materials.Property, unit string) *PropertyInfo {
	if p == nil {
		return nil
	}
	u, _ := units.ParseUnit(unit)
	return &PropertyInfo{Value: Number(units.FromSI(p.Value, u)), Unit: unit, Confidence: p.Confidence, Note: p.Note, Sources: p.Citations}
}

func (h *Handler) materialInfo(m *materials.Material) MaterialInfo {
	mi := MaterialInfo{
		ID: m.ID, Name: m.Name, Category: m.Category, Phase: m.Phase, Description: m.Description,
		Alpha: h.coefInfo(m.Alpha), Beta: h.coefInfo(m.Beta),
		Modulus: h.propInfo(m.Modulus, "GPa"), Poisson: h.propInfo(m.Poisson, "1"),
		YieldStrength: h.propInfo(m.Yield, "MPa"), Density: h.propInfo(m.Density, "kg/m3"),
		LiquidModel: m.LiquidModel,
	}
	for _, cv := range m.Curves {
		lo, hi := cv.Range()
		mi.Curves = append(mi.Curves, CurveInfo{Kind: cv.Kind, TMin: Number(lo.Celsius()), TMax: Number(hi.Celsius()), TUnit: "degC",
			Confidence: cv.Confidence, Note: cv.Note, Sources: cv.Citations})
	}
	return mi
}

// UnitList is the body of GET /v1/units.
type UnitList struct {
	Units []units.SymbolInfo `json:"units"`
	Notes []string           `json:"notes"`
}

// listUnits godoc
//
//	@Summary		Every accepted unit symbol with its dimension
//	@Tags			materials
//	@Produce		json
//	@Success		200	{object}	UnitList
//	@Router			/v1/units [get]
func (h *Handler) listUnits(c *gin.Context) {
	sendJSON(c, http.StatusOK, UnitList{Units: units.Symbols(), Notes: []string{
		"Products, quotients and powers combine: N/mm2, um/(m*K), in/(in*degF), m^2, m², K⁻¹, kg/m3, and UCUM's K-1 and N.mm-2; '.', '*', '·' or a space multiply (kN m, mm/(m K); a space after '/' is refused as ambiguous), '/' divides, left to right.",
		"Fields named t_* are absolute temperatures (10 degF = 260.928 K); fields named delta_t* are temperature differences (10 degF = 5.5556 K). A coefficient per degF is per Fahrenheit interval.",
		"Factors are exact where the definition is (NIST SP 811): 1 in = 0.0254 m, 1 lbf = 4.4482216152605 N, 1 degF interval = 5/9 K; this list writes them to 12 significant digits, as every answer writes numbers, and the parser uses them in full.",
	}})
}
