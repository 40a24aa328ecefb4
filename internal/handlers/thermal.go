package handlers

import (
	"github.com/thermalmovement/service/internal/materials"
	"github.com/thermalmovement/service/internal/units"
)

// interval is the temperature change of a calculation: a difference
// (delta_t), or two absolute temperatures (t_initial, t_final) from which
// the difference follows and with which curves can be used.
type interval struct {
	dT       units.TemperatureDifference
	t1, t2   units.Temperature
	absolute bool
}

// interval reads delta_t, or t_initial and t_final, under the names given.
func (p *params) interval(deltaName, initialName, finalName string) (interval, bool) {
	hasDelta := p.has(deltaName)
	hasAbs := p.has(initialName) || p.has(finalName)
	switch {
	case hasDelta && hasAbs:
		p.unprocessable(deltaName, "contradicts "+initialName+"/"+finalName+": give "+deltaName+", or "+initialName+" and "+finalName+", not both")
		// Each is still read, so that a bad value among them is named too.
		p.difference(deltaName)
		p.temperature(initialName)
		p.temperature(finalName)
		return interval{}, false
	case hasDelta:
		d, ok := p.difference(deltaName)
		return interval{dT: d}, ok
	case hasAbs:
		t1, ok1 := p.temperature(initialName)
		t2, ok2 := p.temperature(finalName)
		if !p.has(initialName) {
			p.invalid(initialName, "required with "+finalName)
		}
		if !p.has(finalName) {
			p.invalid(finalName, "required with "+initialName)
		}
		if !(ok1 && ok2) {
			return interval{}, false
		}
		if max(t1, t2) <= hottest { // else the hot end was warned of
			p.checkWidth("the change from "+initialName+" to "+finalName+" is "+formatRounded(float64(t2.Sub(t1)))+" K", t2.Sub(t1))
		}
		return interval{dT: t2.Sub(t1), t1: t1, t2: t2, absolute: true}, true
	}
	p.invalid(deltaName, "required: give "+deltaName+" (a temperature difference such as \"35 K\"), or "+initialName+" and "+finalName)
	return interval{}, false
}

// coefficient is a linear strain over an interval and where it came from.
type coefficient struct {
	materials.Expansion
	from string // "request" or "material <id>"
}

// readModel reads alpha_model and extrapolate.
func (p *params) readModel() (materials.Model, bool) {
	model := materials.Auto
	if s, ok := p.choice("alpha_model", string(materials.Auto), string(materials.Constant), string(materials.CurveFit)); ok {
		model = materials.Model(s)
	}
	return model, p.flag("extrapolate")
}

// strain resolves the linear strain of a solid over iv from an explicit
// coefficient (alphaName) or a catalogue material (materialName); an
// explicit value wins. It records the coefficient used among the inputs.
func (p *params) strain(alphaName, materialName string, iv interval, ivOK bool, model materials.Model, extrapolate bool) (coefficient, bool) {
	alpha, hasAlpha := p.dim(alphaName, units.Coefficient)
	m, hasMat := p.material(materialName)
	if !p.has(alphaName) && !p.has(materialName) {
		p.invalid(alphaName, "required: give "+alphaName+" (such as \"12e-6/K\") or "+materialName+" (a catalogue id)")
		return coefficient{}, false
	}
	if !ivOK || (!hasAlpha && !hasMat) {
		return coefficient{}, false
	}
	if hasAlpha {
		if p.shrinksToNothing(alphaName, alpha, iv.dT, "the material") {
			return coefficient{}, false
		}
		c := coefficient{Expansion: materials.Expansion{Strain: alpha * float64(iv.dT), AlphaMean: alpha, Kind: "constant"}, from: "request"}
		c.Warnings = appendNegative(c.Warnings, alphaName, alpha)
		if hasMat {
			c.Warnings = append(c.Warnings, alphaName+" was given, so it was used instead of the catalogue coefficient of "+m.ID)
		}
		if model == materials.CurveFit {
			c.Warnings = append(c.Warnings, "alpha_model=curve applies to a catalogue material's curves: the constant "+alphaName+" given was used")
		}
		return c, true
	}
	if m.Alpha == nil {
		p.unprocessable(materialName, m.ID+" is a liquid: it has no linear coefficient")
		return coefficient{}, false
	}
	var e materials.Expansion
	var err error
	if iv.absolute {
		e, err = m.Linear(iv.t1, iv.t2, model, extrapolate)
	} else {
		if model == materials.CurveFit {
			p.unprocessable("alpha_model", "a curve needs absolute temperatures: give t_initial and t_final instead of a difference")
			return coefficient{}, false
		}
		e, err = m.LinearDelta(iv.dT)
	}
	if err != nil {
		p.unprocessable(materialName, err.Error())
		return coefficient{}, false
	}
	from := "catalogue " + m.ID + ", constant coefficient"
	switch {
	case e.Joined:
		from = "catalogue " + m.ID + ", " + e.Kind + " curves" // the method gives the join
	case e.Kind != "constant":
		from = "catalogue " + m.ID + ", " + e.Kind + " curve"
	}
	c := coefficient{Expansion: e, from: from}
	if e.Kind == "constant" {
		p.inputs.addUsed(alphaName, m.Alpha.Value, "1/K", c.from)
	} else {
		p.inputs.addUsed(alphaName+"_mean", e.AlphaMean, "1/K", c.from)
	}
	return c, true
}

// shrinksToNothing refuses, naming name, a coefficient with which
// 1 + coef dT <= 0: what (a length, L = L0 (1 + alpha dT), or a volume)
// would shrink to nothing.
func (p *params) shrinksToNothing(name string, coef float64, dT units.TemperatureDifference, what string) bool {
	if 1+coef*float64(dT) > 0 {
		return false
	}
	p.unprocessable(name, "with this temperature change "+what+" would shrink to nothing: check "+name+" and the temperatures")
	return true
}

// appendNegative adds the warning for a negative linear coefficient given
// as name: rare (carbon fibre along its fibres, some glass-ceramics), and
// more often a sign slip, since every result's sign follows it.
func appendNegative(warnings []string, name string, alpha float64) []string {
	if alpha >= 0 {
		return warnings
	}
	return append(warnings, name+" is negative: the material shortens as it warms, as carbon fibre does along its fibres; check the sign")
}
