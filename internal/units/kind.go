package units

// Kind is the role of a result quantity, which decides the unit it is
// reported in: a movement in mm or in, a length in m or ft. The unit
// expressions are parsed once, when the package is initialised.
type Kind struct {
	Name     string
	Dim      Dim
	Absolute bool // an absolute temperature: reported on a scale
	SI, US   Unit
}

// The kinds of result this service reports, with their default units in
// the "si" and "us" systems.
var (
	Movement         = kind("movement", Length, false, "mm", "in")
	LengthKind       = kind("length", Length, false, "m", "ft")
	AreaKind         = kind("area", Area, false, "m2", "ft2")
	AreaChange       = kind("area change", Area, false, "mm2", "in2")
	VolumeKind       = kind("volume", Volume, false, "m3", "ft3")
	VolumeChange     = kind("volume change", Volume, false, "L", "gal")
	StressKind       = kind("stress", Stress, false, "MPa", "psi")
	ForceKind        = kind("force", Force, false, "kN", "kip")
	MomentKind       = kind("moment", Moment, false, "kN*m", "kip*ft")
	StiffnessKind    = kind("stiffness", Stiffness, false, "kN/mm", "kip/in")
	TemperatureKind  = kind("temperature", Temp, true, "degC", "degF")
	DifferenceKind   = kind("temperature difference", Temp, false, "K", "degF")
	CoefficientKind  = kind("coefficient of expansion", Coefficient, false, "1/K", "1/degF")
	StrainKind       = kind("strain", Dimensionless, false, "1", "1")
	RatioKind        = kind("ratio", Dimensionless, false, "1", "1")
	CurvatureKind    = kind("curvature", Curvature, false, "1/m", "1/in")
	FlexivityKind    = kind("flexivity", Coefficient, false, "1/K", "1/degF")
	SecondMomentKind = kind("second moment of area", SecondMoment, false, "mm4", "in4")
	DensityKind      = kind("density", Density, false, "kg/m3", "lb/ft3")
)

func kind(name string, d Dim, abs bool, si, us string) Kind {
	return Kind{Name: name, Dim: d, Absolute: abs, SI: mustUnit(si, d), US: mustUnit(us, d)}
}

func mustUnit(s string, d Dim) Unit {
	u, err := ParseUnit(s)
	if err != nil || u.Dim != d {
		panic("units: bad default unit " + s)
	}
	return u
}

// Value returns the SI value v (kelvin for temperatures) in unit u of
// this kind.
func (k Kind) Value(v float64, u Unit) float64 {
	if k.Absolute {
		return FromKelvin(Temperature(v), u)
	}
	return FromSI(v, u)
}

// Accepts reports whether u can report this kind: the same dimension and,
// for absolute temperatures, a temperature scale.
func (k Kind) Accepts(u Unit) bool {
	return u.Dim == k.Dim && (!k.Absolute || u.scale)
}
