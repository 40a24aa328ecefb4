package handlers

import (
	"math"
	"reflect"
	"slices"
	"strconv"

	"github.com/thermalmovement/service/internal/calc"
	"github.com/thermalmovement/service/internal/materials"
	"github.com/thermalmovement/service/internal/units"
)

// jointCalcs lists the movement-joint and design-temperature endpoints.
func (h *Handler) jointCalcs() []calcSpec {
	return []calcSpec{
		{name: "joints/gap", results: (*GapResults)(nil), fn: h.gap},
		{name: "joints/gap/schedule", results: (*ScheduleResults)(nil), fn: h.schedule, formats: []string{"svg", "png"}},
		{name: "joints/spacing", results: (*SpacingResults)(nil), fn: h.spacing},
		{name: "temperatures/bridge", results: (*BridgeResults)(nil), fn: h.bridge},
	}
}

// MaxScheduleRows bounds an installation table: a site crew reads tens
// of rows, never thousands.
const MaxScheduleRows = 401

// References of the joint methods, cited in responses.
const (
	refAASHTOMovement = "AASHTO LRFD Bridge Design Specifications, eq. 3.12.2.3-1: design thermal movement range = alpha L (TMaxDesign - TMinDesign)"
	refASTMC1472      = "ASTM C1472, Standard Guide for Calculating Movement and Other Effects When Establishing Sealant Joint Width: width = movement / movement capability, plus construction tolerance, the installation temperature deciding the split into extension and compression"
	refASTMC920       = "ASTM C920 (elastomeric joint sealants) and ASTM C719 (cyclic movement test): movement classes as a per cent of the joint width at installation"
	refEN1991Fig61    = "EN 1991-1-5:2003 Eurocode 1, Part 1-5: Thermal actions, 6.1.3.1 and Figure 6.1: Te,max = Tmax + 16, +4, +2 K and Te,min = Tmin - 3, +4, +8 K for deck types 1, 2, 3"
	refEN1991Ranges   = "EN 1991-1-5:2003 6.1.3.3: dTN,con = T0 - Te,min, dTN,exp = Te,max - T0; Note 2: for bearings and expansion joints increased by 20 K, or 10 K where the setting temperature is specified; Annex A: T0 = 10 degC when nothing else is known"
	refAASHTOProcA    = "AASHTO LRFD Bridge Design Specifications, 3.12.2.1.1 Procedure A, Table 3.12.2.1.1-1: moderate climate steel or aluminium 0 to 120 degF, concrete 10 to 80 degF, wood 10 to 75 degF; cold climate -30 to 120, 0 to 80, 0 to 75 degF"
	refACI302         = "ACI 302.1R, Guide to Concrete Floor and Slab Construction: contraction joints of slabs on ground at 24 to 36 times the slab thickness (rule of thumb, as quoted in secondary sources)"
)

// Cautions of every joint response, after the standing ones.
var jointCautions = []string{
	"Joint gaps and widths must follow the governing local codes and the joint or bearing manufacturer's movement ratings and setting instructions.",
	"A joint that closes completely transmits force: check the restrained member for stress and buckling.",
	"A licensed engineer approves the joint design and the setting table before the joint is built.",
}

// Check is one named pass/fail verification of a joint. A failing check
// is a result, not an error.
type Check struct {
	Name   string `json:"name" example:"gap_stays_open"`
	Pass   bool   `json:"pass" example:"true"`
	Detail string `json:"detail" example:"gap at t_max is 12.4 mm, above zero"`
	// detail writes Detail with lengths in the response's units.
	detail func(length func(m float64) string) string
}

// GapResults are the results of /v1/joints/gap.
type GapResults struct {
	MovementRange      *Value  `json:"movement_range" kind:"movement"`
	Closing            *Value  `json:"closing" kind:"movement"`
	Opening            *Value  `json:"opening" kind:"movement"`
	GapInstall         *Value  `json:"gap_install" kind:"movement"`
	GapAtTMax          *Value  `json:"gap_at_t_max" kind:"movement"`
	GapAtTMin          *Value  `json:"gap_at_t_min" kind:"movement"`
	OpeningHigh        *Value  `json:"opening_high,omitempty" kind:"movement"`
	GapAtTMinHigh      *Value  `json:"gap_at_t_min_high,omitempty" kind:"movement"`
	RequiredWidth      *Value  `json:"required_width,omitempty" kind:"movement"`
	SealantExtension   *Value  `json:"sealant_extension,omitempty" kind:"ratio"`
	SealantCompression *Value  `json:"sealant_compression,omitempty" kind:"ratio"`
	AlphaLow           *Value  `json:"alpha_low" kind:"coefficient"`
	AlphaHigh          *Value  `json:"alpha_high" kind:"coefficient"`
	Checks             []Check `json:"checks"`
}

func (r *GapResults) checkList() []Check { return r.Checks }

// checkNames lists every check a gap can have, in the order checks adds
// them: the check columns of a batch.
func (*GapResults) checkNames() []string { return gapCheckNames }

// gapCheckNames are the names of jointInput.checks, each with the warning
// a failing one adds to the answer, so that a client that reads only the
// warnings (a batch row, a spreadsheet) still sees it.
var (
	gapCheckNames    = []string{"gap_stays_open", "min_gap_kept", "within_max_gap", "sealant_extension", "sealant_compression"}
	gapCheckWarnings = map[string]string{
		"gap_stays_open":      "the joint closes before t_max: the members bear on each other, so the restrained member must be checked for stress and buckling",
		"min_gap_kept":        "the gap at t_max is below min_gap",
		"within_max_gap":      "the gap at t_min is wider than max_gap",
		"sealant_extension":   "the sealant's extension exceeds its movement capability",
		"sealant_compression": "the sealant's compression exceeds its movement capability",
	}
)

// failedChecks returns the warning of each failing check, naming it;
// where says where it fails ("" for a single setting).
func failedChecks(cs []Check, where string) []string {
	var ws []string
	for _, c := range cs {
		if !c.Pass {
			ws = append(ws, "check "+c.Name+" fails"+where+": "+gapCheckWarnings[c.Name])
		}
	}
	return ws
}

// render writes the check details in the response's units and leaves the
// body to the generic formats.
func (r *GapResults) render(out *outputOptions, _ *Response) ([]byte, string, error) {
	formatChecks(r.Checks, out)
	return nil, "", nil
}

func formatChecks(cs []Check, out *outputOptions) {
	u := out.unitFor(resultField{name: "gap_install", kind: units.Movement})
	length := func(m float64) string { return formatRounded(units.FromSI(m, u)) + " " + u.Symbol }
	for i := range cs {
		if cs[i].detail != nil {
			cs[i].Detail = cs[i].detail(length)
		}
	}
}

// formatRounded writes v to four significant digits, for messages.
func formatRounded(v float64) string {
	if v == 0 || !finite(v) {
		return units.FormatNumber(v)
	}
	p := math.Pow(10, 3-math.Floor(math.Log10(math.Abs(v))))
	return units.FormatNumber(math.Round(v*p) / p)
}

func metres(m float64) string { return formatRounded(m*1000) + " mm" }

func percent(f float64) string { return formatRounded(f*100) + " %" }

// jointInput is what /v1/joints/gap and its schedule read.
type jointInput struct {
	joint      calc.Joint
	tInstall   units.Temperature
	hasInstall bool
	gapInstall float64
	hasGap     bool
	minGap     float64
	hasMinGap  bool
	maxGap     float64
	hasMaxGap  bool
	tolerance  float64
	sealant    calc.Sealant
	hasSealant bool
	bounds     bool
	co         coefficient
	band       *materials.Material
	curve      func(units.Temperature) float64 // the strain from t_min on the catalogue's temperature-dependent data, where the constant's range is left
	curveKind  string                          // their kind, for the method
}

// readJoint reads the parameters every joint calculation shares.
func (p *params) readJoint() (jointInput, bool) {
	var in jointInput
	p.require("length")
	length, lok := p.positive("length", units.Length)
	p.require("t_min")
	p.require("t_max")
	tMin, ok1 := p.temperature("t_min")
	tMax, ok2 := p.temperature("t_max")
	tok := ok1 && ok2
	if tok && !(tMin < tMax) {
		p.unprocessable("t_max", "must be above t_min: t_max is "+units.CelsiusText(tMax)+", t_min "+units.CelsiusText(tMin)+" (fields named t_* are absolute temperatures)")
		tok = false
	}
	iv := interval{dT: tMax.Sub(tMin), t1: tMin, t2: tMax, absolute: true}
	co, cok := p.strain("alpha", "material", iv, tok, materials.Constant, false)
	// A joint is sized with the material's design constant. Where t_min..
	// t_max leaves the constant's range and the catalogue holds
	// temperature-dependent data over it (steel above 100 degC), each
	// movement is the larger of the constant's and the data's, so that
	// neither is relied on where the other moves more.
	if m := peekMaterial(p, "material"); cok && co.from != "request" && m != nil && !m.ConstantHolds(tMin, tMax) {
		if e, at, ok := m.CurveStrain(tMin, tMax); ok {
			in.curve = at
			co.Warnings = []string{"the interval " + units.CelsiusText(tMin) + " to " + units.CelsiusText(tMax) + " lies outside " + units.CelsiusText(m.Alpha.TMin) + " to " + units.CelsiusText(m.Alpha.TMax) +
				", the range the constant coefficient of " + m.ID + " holds for: each movement is the larger of the constant's and that of the catalogue's temperature-dependent data (" + e.Kind + "; mean " +
				formatRounded(e.AlphaMean*1e6) + "e-6/K over the interval, against the constant " + formatRounded(m.Alpha.Value*1e6) + "e-6/K)"}
			co.Source.Citations = appendNew(slices.Clone(co.Source.Citations), e.Source.Citations...)
			in.curveKind = e.Kind
		}
	}
	in.co = co
	in.bounds = p.flag("bounds")
	if in.bounds && cok {
		switch {
		case co.from == "request":
			p.unprocessable("bounds", "bounds uses the coefficient band of a catalogue material; alpha was given, which has no band: give material instead")
			cok = false
		default:
			r, _ := p.vals["material"]
			m, err := p.cat.Get(r.str)
			if err == nil && m.Alpha != nil {
				in.band = m
			}
		}
	}
	in.tInstall, in.hasInstall = p.temperature("t_install")
	if in.hasInstall && tok && (in.tInstall < tMin || in.tInstall > tMax) {
		p.unprocessable("t_install", "must lie within t_min..t_max: the design extremes bound every temperature the joint sees, the day it is built included")
		in.hasInstall = false
		tok = false
	}
	in.gapInstall, in.hasGap = p.positive("gap_install", units.Length)
	in.minGap, in.hasMinGap = p.nonNegative("min_gap", units.Length)
	in.maxGap, in.hasMaxGap = p.positive("max_gap", units.Length)
	in.tolerance, _ = p.nonNegative("construction_tolerance", units.Length)
	in.sealant, in.hasSealant = p.readSealant()
	if p.has("construction_tolerance") && !in.hasSealant && !p.has("movement_capability") && !p.has("capability_extension") && !p.has("capability_compression") {
		p.invalid("construction_tolerance", "goes with a sealant capability: movement_capability, or capability_extension and capability_compression")
	}
	if !(lok && tok && cok) {
		return in, false
	}
	alpha := co.AlphaMean
	in.joint = calc.Joint{LengthM: length, AlphaLow: alpha, AlphaHigh: alpha, TMin: tMin, TMax: tMax, Strain: in.curve}
	if in.band != nil {
		in.joint.AlphaLow, in.joint.AlphaHigh = in.band.Alpha.Low, in.band.Alpha.High
	}
	if err := in.joint.Validate(); err != nil {
		p.unprocessable("alpha", err.Error())
		return in, false
	}
	return in, true
}

// readSealant reads movement_capability, or capability_extension and
// capability_compression.
func (p *params) readSealant() (calc.Sealant, bool) {
	sym := p.has("movement_capability")
	asym := p.has("capability_extension") || p.has("capability_compression")
	if sym && asym {
		p.take("capability_extension")
		p.take("capability_compression")
		p.take("movement_capability")
		p.unprocessable("movement_capability", "give movement_capability (symmetric), or capability_extension and capability_compression, not both")
		return calc.Sealant{}, false
	}
	if sym {
		c, ok := p.percentage("movement_capability", 100)
		return calc.Sealant{Extension: c, Compression: c}, ok
	}
	if asym {
		e, ok1 := p.percentage("capability_extension", 200)
		c, ok2 := p.percentage("capability_compression", 100)
		if !p.has("capability_extension") {
			p.invalid("capability_extension", "required with capability_compression")
		}
		if !p.has("capability_compression") {
			p.invalid("capability_compression", "required with capability_extension")
		}
		return calc.Sealant{Extension: e, Compression: c}, ok1 && ok2 && p.has("capability_extension") && p.has("capability_compression")
	}
	return calc.Sealant{}, false
}

// percentage reads a per-cent number and returns it as a fraction. A bare
// number is per cent (25 and "25" mean 25 %); "25 %" is per cent too; any
// other dimensionless unit is converted ("0.25 1" is 25 %). Values below
// 1 % (most likely a fraction written bare) and above limit per cent are
// refused.
func (p *params) percentage(name string, limit float64) (float64, bool) {
	q, ok := p.quantity(name)
	if !ok {
		return 0, false
	}
	if q.Unit.Dim != units.Dimensionless {
		p.invalid(name, strconv.Quote(q.String())+" is not a number: give a per cent such as 25 or \"25 %\"")
		return 0, false
	}
	pc := q.Value
	if q.Unit.Symbol != "" {
		pc = q.SI() * 100
	}
	v := Number(pc)
	p.inputs = append(p.inputs, Input{Name: name, Value: v, Unit: "%", hasValue: true})
	switch {
	case !finite(pc) || pc <= 0:
		p.unprocessable(name, "must be greater than zero")
		return 0, false
	case pc < 1:
		p.unprocessable(name, "is read as "+units.FormatNumber(pc)+" %; a bare number is per cent: write 25 (or \"25 %\") for a class 25 sealant")
		return 0, false
	case pc > limit:
		p.unprocessable(name, "must not exceed "+units.FormatNumber(limit)+" %")
		return 0, false
	}
	return pc / 100, true
}

// jointSetting decides the gap at installation of one joint: the as-built
// gap_install, else the larger of min_gap + closing and the sealant's
// required width. Without an installation temperature the envelope of
// both extremes is used.
func (in jointInput) setting(tInstall units.Temperature, hasInstall bool) (s calc.Setting, width float64, hasWidth bool) {
	j := in.joint
	probe := j.Envelope(0)
	if hasInstall {
		probe = j.At(tInstall, 0)
	}
	if in.hasSealant {
		width, hasWidth = calc.SealantWidth(probe.ClosingM, probe.OpeningHighM, in.sealant, in.tolerance), true
	}
	gap := in.gapInstall
	if !in.hasGap {
		gap = 0
		if in.hasMinGap {
			gap = in.minGap + probe.ClosingM
		}
		if hasWidth {
			gap = math.Max(gap, width)
		}
	}
	if hasInstall {
		return j.At(tInstall, gap), width, hasWidth
	}
	return j.Envelope(gap), width, hasWidth
}

// checks verifies one setting.
func (in jointInput) checks(s calc.Setting) []Check {
	var cs []Check
	add := func(name string, pass bool, detail func(func(float64) string) string) {
		c := Check{Name: name, Pass: pass, detail: detail}
		c.Detail = detail(metres)
		cs = append(cs, c)
	}
	gmax := s.GapAtTMaxM
	add("gap_stays_open", gmax > 0, func(l func(float64) string) string {
		switch {
		case gmax > 0:
			return "gap at t_max is " + l(gmax) + ", above zero"
		case gmax == 0:
			return "the gap closes exactly at t_max: the members touch there, and any warmer day makes them bear on each other; keep a gap above zero (min_gap)"
		}
		return "the joint closes before t_max: gap at t_max would be " + l(gmax) + "; the members bear on each other"
	})
	if in.hasGap && in.hasMinGap {
		mg := in.minGap
		add("min_gap_kept", gmax >= mg-1e-12, func(l func(float64) string) string {
			return "gap at t_max is " + l(gmax) + " against min_gap " + l(mg)
		})
	}
	if in.hasMaxGap {
		wide, mx := s.GapAtTMinHigh, in.maxGap
		add("within_max_gap", wide <= mx+1e-12, func(l func(float64) string) string {
			return "gap at t_min is " + l(wide) + " against max_gap " + l(mx)
		})
	}
	if in.hasSealant {
		ext, comp := calc.SealantStrains(s.ClosingM, s.OpeningHighM, s.GapInstallM, in.tolerance)
		se, sc := in.sealant.Extension, in.sealant.Compression
		width := "the width"
		if in.tolerance > 0 { // calc.SealantStrains takes it off the width
			width = "the width less construction_tolerance"
		}
		if math.IsInf(ext, 1) { // no width left once the tolerance is taken off
			none := func(l func(float64) string) string {
				if in.tolerance == 0 {
					return "the gap at installation, " + l(s.GapInstallM) + ", is not above zero: no width is left for the sealant"
				}
				return "the gap at installation, " + l(s.GapInstallM) + ", is not wider than construction_tolerance " + l(in.tolerance) + ": no width is left for the sealant"
			}
			add("sealant_extension", false, none)
			add("sealant_compression", false, none)
			return cs
		}
		add("sealant_extension", ext <= se*(1+1e-9), func(func(float64) string) string {
			return "extension at t_min is " + percent(ext) + " of " + width + ", capability " + percent(se)
		})
		add("sealant_compression", comp <= sc*(1+1e-9), func(func(float64) string) string {
			return "compression at t_max is " + percent(comp) + " of " + width + ", capability " + percent(sc)
		})
	}
	return cs
}

// gap godoc
//
//	@Summary		Movement joint: gaps at installation and at the design extremes, sealant width, checks
//	@Description	closing = alpha L (t_max - t_install), opening = alpha L (t_install - t_min) (AASHTO LRFD eq. 3.12.2.3-1 split at the installation temperature); gap_at_t_max = gap_install - closing, gap_at_t_min = gap_install + opening. Give gap_install (as built), or min_gap (the smallest gap allowed at t_max: gap_install = min_gap + closing), or a sealant capability (gap_install = required_width). Sealant width W = max(closing / compression, opening / extension) + construction_tolerance (ASTM C1472 approach); a bare movement_capability is per cent (25 = 25 %). Without t_install closing and opening are each the full range (conservative, with a warning). bounds=true uses the catalogue band: the high coefficient for closing, the low one for opening, and reports the opening with the high one too (opening_high, gap_at_t_min_high), which the max_gap and sealant extension checks use. A catalogue material is taken at its design constant; where t_min..t_max leaves the constant's range and the catalogue holds temperature-dependent data over it (steel above 100 degC), each movement is the larger of the constant's and the data's, L (e(t_max) - e(t_install)) for closing and L (e(t_install) - e(t_min)) for opening with e the free strain from t_min (the constant where the interval reaches beyond the data), with a warning. A check that passes with a catalogue material's design value but fails within its coefficient band (without bounds=true) adds a warning. A failing check is a result (HTTP 200). Demo example: a 60 m steel footbridge deck between -25 degC and 50 degC, set at 15 degC with 20 mm left at the hottest.
//	@Tags			joints
//	@Produce		json,plain,text/csv,application/xml
//	@Param			length					query		string	true	"expansion length served by the joint, e.g. 60 m"
//	@Param			alpha					query		string	false	"coefficient, e.g. 12e-6/K; wins over material"
//	@Param			material				query		string	false	"catalogue id instead of alpha, e.g. structural-steel"
//	@Param			t_min					query		string	true	"lowest design temperature of the member (absolute), e.g. -25 degC"
//	@Param			t_max					query		string	true	"highest design temperature of the member (absolute), e.g. 50 degC"
//	@Param			t_install				query		string	false	"temperature on the day the joint is set (absolute, within t_min..t_max), e.g. 15 degC"
//	@Param			gap_install				query		string	false	"as-built gap at t_install, e.g. 45 mm"
//	@Param			min_gap					query		string	false	"smallest gap allowed at t_max, e.g. 20 mm"
//	@Param			max_gap					query		string	false	"largest gap the joint device takes, e.g. 80 mm"
//	@Param			movement_capability		query		string	false	"sealant capability, symmetric, per cent of the width: 25 or 25 %"
//	@Param			capability_extension	query		string	false	"sealant extension capability, per cent (with capability_compression), e.g. 100"
//	@Param			capability_compression	query		string	false	"sealant compression capability, per cent, e.g. 50"
//	@Param			construction_tolerance	query		string	false	"added to the sealant width, e.g. 3 mm"
//	@Param			bounds					query		bool	false	"use the catalogue coefficient band (needs material)"
//	@Param			units					query		string	false	"si (default) or us"	Enums(si, us)
//	@Param			format					query		string	false	"json (default), text, csv or xml"	Enums(json, text, csv, xml)
//	@Param			result					query		string	false	"with format=text: the result to return, or check_<name> (check_gap_stays_open, check_min_gap_kept, check_within_max_gap, check_sealant_extension, check_sealant_compression) for pass or fail"
//	@Success		200						{object}	Response{results=GapResults}
//	@Failure		400						{object}	Problem
//	@Failure		404						{object}	Problem
//	@Failure		422						{object}	Problem
//	@Router			/v1/joints/gap [get]
//	@Router			/v1/joints/gap [post]
func (h *Handler) gap(p *params) (*Response, error) {
	in, ok := p.readJoint()
	if !p.has("gap_install") && !p.has("min_gap") && !p.has("movement_capability") && !p.has("capability_extension") && !p.has("capability_compression") {
		p.invalid("gap_install", "required: give gap_install (as built), min_gap (smallest gap at t_max) or a sealant movement_capability")
	}
	if err := p.done(); err != nil || !ok {
		return nil, p.failed()
	}
	if (p.has("gap_install") && !in.hasGap) || (p.has("min_gap") && !in.hasMinGap) {
		return nil, p.failed()
	}
	s, width, hasWidth := in.setting(in.tInstall, in.hasInstall)
	res := &GapResults{
		MovementRange: si(in.joint.Range()),
		Closing:       si(s.ClosingM),
		Opening:       si(s.OpeningM),
		GapInstall:    si(s.GapInstallM),
		GapAtTMax:     si(s.GapAtTMaxM),
		GapAtTMin:     si(s.GapAtTMinM),
		AlphaLow:      si(in.joint.AlphaLow),
		AlphaHigh:     si(in.joint.AlphaHigh),
		Checks:        in.checks(s),
	}
	if in.band != nil {
		res.OpeningHigh, res.GapAtTMinHigh = si(s.OpeningHighM), si(s.GapAtTMinHigh)
	}
	if hasWidth {
		res.RequiredWidth = si(width)
		ext, comp := calc.SealantStrains(s.ClosingM, s.OpeningHighM, s.GapInstallM, in.tolerance)
		if !math.IsInf(ext, 1) { // else the checks fail and say why
			res.SealantExtension, res.SealantCompression = si(ext), si(comp)
		}
	}
	resp := &Response{Results: res, Cautions: jointCautions}
	if !p.brief {
		resp.Method = gapMethod(in)
	}
	h.citeJoint(p, resp, in)
	resp.Warnings = append(resp.Warnings, failedChecks(res.Checks, "")...)
	resp.Warnings = append(resp.Warnings, in.failsOnBand(peekMaterial(p, "material"), s, "")...)
	if !in.hasInstall {
		resp.Warnings = append(resp.Warnings, "no t_install: the installation may be at either extreme, so closing and opening are each the full movement range and the gaps are the conservative envelope; give t_install for the gaps of a known setting day")
	}
	return resp, nil
}

// failsOnBand warns of each check that passes with the design value of
// catalogue material m but fails, for the gap of setting s, at an end of
// the material's coefficient band (concrete: 10e-6/K in 6..13e-6/K), when
// the band was not asked for: the joint then rests on the design value.
func (in jointInput) failsOnBand(m *materials.Material, s calc.Setting, where string) []string {
	if m == nil || in.band != nil || in.co.from == "request" || m.Alpha == nil || !m.Alpha.HasBand {
		return nil
	}
	// The gap of s, as built, checked at the design value and in the band
	// with the same checks (a sized gap_install gains min_gap_kept).
	d := in
	d.hasGap, d.gapInstall = true, s.GapInstallM
	b := d
	b.band = m
	b.joint.AlphaLow, b.joint.AlphaHigh = m.Alpha.Low, m.Alpha.High
	bs := b.joint.Envelope(s.GapInstallM)
	if in.hasInstall {
		bs = b.joint.At(in.tInstall, s.GapInstallM)
	}
	passed := map[string]bool{}
	for _, c := range d.checks(s) {
		passed[c.Name] = c.Pass
	}
	var ws []string
	design := "the design coefficient of " + m.ID + " (" + formatRounded(m.Alpha.Value*1e6) + "e-6/K)"
	if in.curve != nil {
		design += " and its temperature-dependent data"
	}
	band := "the catalogue's band for it (" + formatRounded(m.Alpha.Low*1e6) + " to " + formatRounded(m.Alpha.High*1e6) + "e-6/K)"
	for _, c := range b.checks(bs) {
		if !passed[c.Name] || c.Pass {
			continue
		}
		what := "check " + c.Name + " passes with " + design + " but fails within " + band
		if c.Name == "min_gap_kept" && !in.hasGap { // sized from min_gap: no such check in the answer
			what = "the gap at t_max keeps min_gap with " + design + " but falls below it within " + band
		}
		ws = append(ws, what+where+": give the project's coefficient, or bounds=true to size the joint with the band")
	}
	return ws
}

func gapMethod(in jointInput) string {
	m := "closing = alpha L (t_max - t_install), opening = alpha L (t_install - t_min) (AASHTO LRFD eq. 3.12.2.3-1 split at t_install); gap_at_t_max = gap_install - closing, gap_at_t_min = gap_install + opening"
	if in.curve != nil {
		m = "closing = alpha L (t_max - t_install) or L (e(t_max) - e(t_install)), opening = alpha L (t_install - t_min) or L (e(t_install) - e(t_min)), whichever is larger, e the free strain from t_min on the catalogue's " + in.curveKind + " data (AASHTO LRFD eq. 3.12.2.3-1 split at t_install, with the data's mean coefficient over each interval); gap_at_t_max = gap_install - closing, gap_at_t_min = gap_install + opening"
	}
	switch {
	case in.hasGap:
		m += "; gap_install as built"
	case in.hasMinGap && in.hasSealant:
		m += "; gap_install = the larger of min_gap + closing and the sealant's required width"
	case in.hasMinGap:
		m += "; gap_install = min_gap + closing"
	default:
		m += "; gap_install = the sealant's required width"
	}
	if in.hasSealant {
		m += "; sealant width = max(closing / compression capability, opening / extension capability) + construction_tolerance (ASTM C1472 approach)"
	}
	if in.band != nil {
		m += "; coefficient band of " + in.band.ID + ": high bound for closing, low bound for opening, high bound for opening_high"
	}
	return m
}

// citeJoint adds the warnings every joint response shares and, but for a
// batch row (p.brief), their references.
func (h *Handler) citeJoint(p *params, resp *Response, in jointInput) {
	if !p.brief {
		resp.References = append(resp.References, refAASHTOMovement)
		if in.hasSealant {
			resp.References = append(resp.References, refASTMC1472, refASTMC920)
		}
		resp.References = append(resp.References, in.co.Source.Citations...)
	}
	resp.Warnings = append(resp.Warnings, in.co.Warnings...)
	if in.band != nil && !in.band.Alpha.HasBand {
		resp.Warnings = append(resp.Warnings, "the catalogue gives no band for "+in.band.ID+": low and high bounds equal its design value")
	}
}

// ScheduleRow is one installation temperature of a setting table.
type ScheduleRow struct {
	TInstall      *Value `json:"t_install" kind:"temperature"`
	GapInstall    *Value `json:"gap_install" kind:"movement"`
	GapAtTMin     *Value `json:"gap_at_t_min" kind:"movement"`
	GapAtTMax     *Value `json:"gap_at_t_max" kind:"movement"`
	GapAtTMinHigh *Value `json:"gap_at_t_min_high,omitempty" kind:"movement"`
	RequiredWidth *Value `json:"required_width,omitempty" kind:"movement"`
}

// ScheduleResults are the results of /v1/joints/gap/schedule.
type ScheduleResults struct {
	MovementRange *Value        `json:"movement_range" kind:"movement"`
	AlphaLow      *Value        `json:"alpha_low" kind:"coefficient"`
	AlphaHigh     *Value        `json:"alpha_high" kind:"coefficient"`
	Rows          []ScheduleRow `json:"rows"`
	Checks        []Check       `json:"checks"`

	rowChecks  [][]Check             // the checks of each row, for the CSV table
	rowUnits   map[string]units.Unit // <row field>_unit overrides
	tMin, tMax units.Temperature     // design extremes, for the chart
	maxGap     float64               // 0: none
	minGap     float64
	hasMinGap  bool
	converted  bool
}

// schedule godoc
//
//	@Summary		Setting table of a movement joint: the gap to set at each installation temperature
//	@Description	Rows from t_install_from (default t_min) to t_install_to (default t_max) in steps of t_install_step (a temperature interval despite its t_ prefix, default 5 K; "9 degF" is 5 K; delta_t_install_step is the same parameter under a name that follows the delta_t* rule), at most 401 rows. Each row is /v1/joints/gap at that installation temperature: gap_install = min_gap + alpha L (t_max - t_install), or the sealant's required width, or, with gap_install and t_install, the as-built reference gap shifted by alpha L (t_install - t) along the rows (where t_min..t_max leaves a catalogue constant's range, each movement the larger of the constant's and the temperature-dependent data's, as /v1/joints/gap takes it). In JSON the rows are objects of {value, unit}; format=csv is the table with units in the header; format=svg and format=png draw gap against installation temperature with t_min and t_max marked. Row units follow units= and <row field>_unit (e.g. gap_install_unit=in). Demo example: a 60 m steel footbridge deck between -25 degC and 50 degC, 20 mm left at the hottest.
//	@Tags			joints
//	@Produce		json,plain,text/csv,application/xml,image/svg+xml,image/png
//	@Param			length					query		string	true	"expansion length served by the joint, e.g. 60 m"
//	@Param			alpha					query		string	false	"coefficient, e.g. 12e-6/K; wins over material"
//	@Param			material				query		string	false	"catalogue id instead of alpha, e.g. structural-steel"
//	@Param			t_min					query		string	true	"lowest design temperature (absolute), e.g. -25 degC"
//	@Param			t_max					query		string	true	"highest design temperature (absolute), e.g. 50 degC"
//	@Param			t_install_from			query		string	false	"first installation temperature (absolute), default t_min"
//	@Param			t_install_to			query		string	false	"last installation temperature (absolute), default t_max"
//	@Param			t_install_step			query		string	false	"step between rows (a temperature interval), default 5 K"
//	@Param			delta_t_install_step	query		string	false	"the same step under a delta_t* name; give one of the two"
//	@Param			min_gap					query		string	false	"smallest gap allowed at t_max, e.g. 20 mm"
//	@Param			gap_install				query		string	false	"reference gap at t_install (with t_install)"
//	@Param			t_install				query		string	false	"temperature of the reference gap_install"
//	@Param			max_gap					query		string	false	"largest gap the joint device takes, e.g. 80 mm"
//	@Param			movement_capability		query		string	false	"sealant capability, per cent: 25 or 25 %"
//	@Param			capability_extension	query		string	false	"sealant extension capability, per cent"
//	@Param			capability_compression	query		string	false	"sealant compression capability, per cent"
//	@Param			construction_tolerance	query		string	false	"added to the sealant width, e.g. 3 mm"
//	@Param			bounds					query		bool	false	"use the catalogue coefficient band (needs material)"
//	@Param			units					query		string	false	"si (default) or us"	Enums(si, us)
//	@Param			format					query		string	false	"json (default), text, csv, xml, svg or png"	Enums(json, text, csv, xml, svg, png)
//	@Param			result					query		string	false	"with format=text: the result to return, or check_<name> for the check of the whole table (fails when a row fails): pass or fail"
//	@Success		200						{object}	Response{results=ScheduleResults}
//	@Failure		400						{object}	Problem
//	@Failure		404						{object}	Problem
//	@Failure		422						{object}	Problem
//	@Router			/v1/joints/gap/schedule [get]
//	@Router			/v1/joints/gap/schedule [post]
func (h *Handler) schedule(p *params) (*Response, error) {
	in, ok := p.readJoint()
	from, fromOK := p.temperature("t_install_from")
	to, toOK := p.temperature("t_install_to")
	step := units.TemperatureDifference(5)
	// The contract's name has the t_ prefix of absolute temperatures; the
	// step is a difference, so the delta_t* name is accepted as well.
	stepName := "t_install_step"
	if p.has("delta_t_install_step") && p.exclusive("t_install_step", "delta_t_install_step") {
		stepName = "delta_t_install_step"
	}
	if p.has(stepName) {
		var sok bool
		if step, sok = p.difference(stepName); sok && !(step > 0) {
			p.unprocessable(stepName, "must be greater than zero")
		}
	}
	rowUnits := p.readRowUnits()
	switch {
	case in.hasGap && !p.has("t_install"):
		p.invalid("t_install", "required with gap_install: the temperature at which the reference gap holds")
	case !p.has("gap_install") && !p.has("min_gap") && !p.has("movement_capability") && !p.has("capability_extension") && !p.has("capability_compression"):
		p.invalid("min_gap", "required: give min_gap (smallest gap at t_max), a sealant movement_capability, or gap_install with t_install as a reference")
	case p.has("t_install") && !p.has("gap_install"):
		p.invalid("t_install", "goes with gap_install in a schedule (the reference gap); the rows are the installation temperatures")
	}
	if err := p.done(); err != nil || !ok {
		return nil, p.failed()
	}
	if !fromOK {
		from = in.joint.TMin
	}
	if !toOK {
		to = in.joint.TMax
	}
	switch {
	case from < in.joint.TMin || from > in.joint.TMax:
		p.unprocessable("t_install_from", "must lie within t_min..t_max")
	case to < in.joint.TMin || to > in.joint.TMax:
		p.unprocessable("t_install_to", "must lie within t_min..t_max")
	case from > to:
		p.unprocessable("t_install_to", "must not be below t_install_from")
	}
	if err := p.done(); err != nil {
		return nil, err
	}
	ts, err := calc.InstallTemperatures(from, to, step, MaxScheduleRows)
	if err != nil {
		p.unprocessable(stepName, "gives more than "+strconv.Itoa(MaxScheduleRows)+" rows from t_install_from to t_install_to: take a larger step or a narrower range")
		return nil, p.failed()
	}
	res := &ScheduleResults{
		MovementRange: si(in.joint.Range()),
		AlphaLow:      si(in.joint.AlphaLow),
		AlphaHigh:     si(in.joint.AlphaHigh),
		Rows:          make([]ScheduleRow, 0, len(ts)),
		rowUnits:      rowUnits,
		tMin:          in.joint.TMin,
		tMax:          in.joint.TMax,
		minGap:        in.minGap,
		hasMinGap:     in.hasMinGap,
	}
	if in.hasMaxGap {
		res.maxGap = in.maxGap
	}
	var perRow [][]Check
	var bandWarnings []string
	rowIn := in
	ref := in.joint.At(in.tInstall, in.gapInstall)
	mat := peekMaterial(p, "material")
	for _, t := range ts {
		if in.hasGap {
			// The reference gap, shifted along the rows: the joint is the
			// same, only the day it is set changes.
			rowIn.gapInstall = in.gapInstall - in.joint.Move(in.tInstall, t)
		}
		s, width, hasWidth := rowIn.setting(t, true)
		if in.hasGap && in.curve != nil {
			// Where constant and data each govern a part, the movements
			// do not add up along the rows: the joint's extremes are the
			// worse of the row's and the reference's.
			s.GapAtTMaxM = min(s.GapAtTMaxM, ref.GapAtTMaxM)
			s.GapAtTMinM, s.GapAtTMinHigh = max(s.GapAtTMinM, ref.GapAtTMinM), max(s.GapAtTMinHigh, ref.GapAtTMinHigh)
		}
		for _, w := range rowIn.failsOnBand(mat, s, " in one or more rows of the table") {
			if !slices.Contains(bandWarnings, w) {
				bandWarnings = append(bandWarnings, w)
			}
		}
		row := ScheduleRow{TInstall: si(float64(t)), GapInstall: si(s.GapInstallM), GapAtTMin: si(s.GapAtTMinM), GapAtTMax: si(s.GapAtTMaxM)}
		if in.band != nil {
			row.GapAtTMinHigh = si(s.GapAtTMinHigh)
		}
		if hasWidth {
			row.RequiredWidth = si(width)
		}
		res.Rows = append(res.Rows, row)
		perRow = append(perRow, rowIn.checks(s))
	}
	res.Checks, res.rowChecks = summarise(perRow, ts), perRow
	method := "each row: " + gapMethod(in)
	if in.hasGap {
		method += "; the reference gap_install at t_install shifted to each row by alpha L (t_install - t)"
		if in.curve != nil {
			method += " or L (e(t_install) - e(t)), whichever is larger"
		}
	}
	resp := &Response{Results: res, Method: method, Cautions: jointCautions}
	h.citeJoint(p, resp, in)
	resp.Warnings = append(resp.Warnings, failedChecks(res.Checks, " in one or more rows of the table")...)
	resp.Warnings = append(resp.Warnings, bandWarnings...)
	return resp, nil
}

// summarise folds the checks of every row into one per name: it passes
// when every row passes, and its detail names the first failing row.
func summarise(rows [][]Check, ts []units.Temperature) []Check {
	if len(rows) == 0 {
		return []Check{}
	}
	out := make([]Check, len(rows[0]))
	for i, c := range rows[0] {
		out[i] = Check{Name: c.Name, Pass: true}
		var fail *Check
		var failT units.Temperature
		for r := range rows {
			if rc := rows[r][i]; !rc.Pass && fail == nil {
				fail, failT = &rows[r][i], ts[r]
			}
		}
		if fail == nil {
			first, last := rows[0][i], rows[len(rows)-1][i]
			out[i].Detail = "passes in every row; first row: " + first.Detail + "; last row: " + last.Detail
			out[i].detail = func(l func(float64) string) string {
				return "passes in every row; first row: " + first.detail(l) + "; last row: " + last.detail(l)
			}
			continue
		}
		f, ft := *fail, failT
		out[i].Pass = false
		out[i].Detail = "fails from the row t_install = " + degCText(ft) + ": " + f.Detail
		out[i].detail = func(l func(float64) string) string {
			return "fails from the row t_install = " + degCText(ft) + ": " + f.detail(l)
		}
	}
	return out
}

func degCText(t units.Temperature) string { return formatRounded(t.Celsius()) + " degC" }

// readRowUnits reads <row field>_unit parameters for the rows of a
// schedule (the top-level results take theirs in readOutput).
func (p *params) readRowUnits() map[string]units.Unit {
	var m map[string]units.Unit
	for _, f := range fieldsOf(reflectType[ScheduleRow]()) {
		u, ok := p.resultUnit(f)
		if !ok {
			continue
		}
		if m == nil {
			m = map[string]units.Unit{}
		}
		m[f.name] = u
	}
	return m
}

// SpacingResults are the results of /v1/joints/spacing.
type SpacingResults struct {
	SpacingMin *Value `json:"spacing_min" kind:"length"`
	SpacingMax *Value `json:"spacing_max" kind:"length"`
	Source     string `json:"source" example:"ACI 302.1R: 24 to 36 times the slab thickness (rule of thumb)"`
}

// spacing godoc
//
//	@Summary		Contraction-joint spacing of a concrete slab on ground (rule of thumb)
//	@Description	spacing = 24 to 36 times the slab thickness (ACI 302.1R rule of thumb, as quoted in secondary sources). A rule of thumb, not a design: shrinkage, subgrade restraint, reinforcement and the concrete mix govern. Demo example: a 200 mm warehouse slab on ground.
//	@Tags			joints
//	@Produce		json,plain,text/csv,application/xml
//	@Param			thickness	query		string	true	"slab thickness, e.g. 200 mm"
//	@Param			units		query		string	false	"si (default) or us"	Enums(si, us)
//	@Param			format		query		string	false	"json (default), text, csv or xml"	Enums(json, text, csv, xml)
//	@Success		200			{object}	Response{results=SpacingResults}
//	@Failure		400			{object}	Problem
//	@Failure		422			{object}	Problem
//	@Router			/v1/joints/spacing [get]
//	@Router			/v1/joints/spacing [post]
func (h *Handler) spacing(p *params) (*Response, error) {
	p.require("thickness")
	th, ok := p.positive("thickness", units.Length)
	if err := p.done(); err != nil || !ok {
		return nil, p.failed()
	}
	lo, hi := calc.SlabJointSpacing(th)
	resp := &Response{
		Results:    &SpacingResults{SpacingMin: si(lo), SpacingMax: si(hi), Source: refACI302},
		Method:     "contraction-joint spacing = 24 to 36 times the slab thickness (rule of thumb)",
		References: []string{refACI302},
		Cautions: []string{
			"A rule of thumb for plain slabs on ground: drying shrinkage, subgrade friction, reinforcement, fibres and the concrete mix decide the spacing; keep panels near square and follow the project's specification.",
			"Joints must follow the governing local codes; a licensed engineer sets the joint layout.",
		},
	}
	if th < 0.075 || th > 0.5 {
		resp.Warnings = append(resp.Warnings, "a slab "+metres(th)+" thick is outside the usual range of slabs on ground (75 to 500 mm, common practice, no published source): the rule of thumb may not apply")
	}
	if hi > maxSlabSpacing {
		resp.Warnings = append(resp.Warnings, "spacing_max "+formatRounded(hi)+" m ("+formatRounded(hi/0.3048)+" ft) is beyond about 5.5 m (18 ft), the largest joint spacing usual for plain slabs on ground (from memory of ACI 360R, not re-read): panels that long tend to crack between the joints unless the slab is reinforced for it or its shrinkage is low, so the spacing should come from the slab's design, not from this rule")
	}
	return resp, nil
}

// maxSlabSpacing is about the largest contraction-joint spacing of plain
// slabs on ground, 5.5 m (18 ft), from memory of ACI 360R, not re-read.
const maxSlabSpacing = 5.5 // m

// BridgeResults are the results of /v1/temperatures/bridge.
type BridgeResults struct {
	TMin                    *Value `json:"t_min" kind:"temperature"`
	TMax                    *Value `json:"t_max" kind:"temperature"`
	DeltaTRange             *Value `json:"delta_t_range" kind:"difference"`
	TInitial                *Value `json:"t_initial,omitempty" kind:"temperature"`
	DeltaTContraction       *Value `json:"delta_t_contraction,omitempty" kind:"difference"`
	DeltaTExpansion         *Value `json:"delta_t_expansion,omitempty" kind:"difference"`
	DeltaTContractionJoints *Value `json:"delta_t_contraction_joints,omitempty" kind:"difference"`
	DeltaTExpansionJoints   *Value `json:"delta_t_expansion_joints,omitempty" kind:"difference"`
	TMinJoints              *Value `json:"t_min_joints,omitempty" kind:"temperature"`
	TMaxJoints              *Value `json:"t_max_joints,omitempty" kind:"temperature"`
}

// bridge godoc
//
//	@Summary		Uniform bridge temperature extremes and ranges, for bearings and expansion joints
//	@Description	method=en1991-1-5: Te,max = Tmax + 16, +4, +2 K and Te,min = Tmin - 3, +4, +8 K for deck types 1 (steel), 2 (composite), 3 (concrete) (EN 1991-1-5 Figure 6.1); delta_t_contraction = T0 - Te,min, delta_t_expansion = Te,max - T0 (6.1.3.3), T0 = t_initial (default 10 degC); for bearings and expansion joints both widened by 20 K, or 10 K with setting_specified=true (6.1.3.3 Note 2), giving t_min_joints and t_max_joints. Shade temperatures outside Figure 6.1 (Tmin -50..0 degC, Tmax +20..+50 degC) are refused with 422 unless extrapolate=true, which extends the straight lines with a warning. method=aashto-procedure-a: the Procedure A range by climate and deck material (AASHTO LRFD Table 3.12.2.1.1-1). t_min/t_max (or t_min_joints/t_max_joints) feed /v1/joints/gap directly. Demo example: a composite footbridge with shade air temperatures -20 degC and 35 degC.
//	@Tags			joints
//	@Produce		json,plain,text/csv,application/xml
//	@Param			method				query		string	true	"en1991-1-5 or aashto-procedure-a"	Enums(en1991-1-5, aashto-procedure-a)
//	@Param			shade_t_min			query		string	false	"EN: minimum shade air temperature (absolute), e.g. -20 degC"
//	@Param			shade_t_max			query		string	false	"EN: maximum shade air temperature (absolute), e.g. 35 degC"
//	@Param			deck_type			query		string	false	"EN: 1 (steel), 2 (composite), 3 (concrete); also steel, composite, concrete"
//	@Param			t_initial			query		string	false	"EN: initial temperature T0 (absolute), default 10 degC"
//	@Param			setting_specified	query		bool	false	"EN: the setting temperature of bearings and joints is specified (widening 10 K instead of 20 K)"
//	@Param			extrapolate			query		bool	false	"EN: allow shade temperatures beyond Figure 6.1, with a warning"
//	@Param			climate				query		string	false	"AASHTO: moderate or cold"	Enums(moderate, cold)
//	@Param			deck_material		query		string	false	"AASHTO: steel, aluminium, concrete or wood"	Enums(steel, aluminium, aluminum, concrete, wood)
//	@Param			units				query		string	false	"si (default) or us"	Enums(si, us)
//	@Param			format				query		string	false	"json (default), text, csv or xml"	Enums(json, text, csv, xml)
//	@Success		200					{object}	Response{results=BridgeResults}
//	@Failure		400					{object}	Problem
//	@Failure		422					{object}	Problem
//	@Router			/v1/temperatures/bridge [get]
//	@Router			/v1/temperatures/bridge [post]
func (h *Handler) bridge(p *params) (*Response, error) {
	p.require("method")
	method, _ := p.choice("method", "en1991-1-5", "aashto-procedure-a")
	en := []string{"shade_t_min", "shade_t_max", "deck_type", "t_initial", "setting_specified", "extrapolate"}
	us := []string{"climate", "deck_material"}
	misplaced := func(names []string, other string) {
		for _, n := range names {
			if p.has(n) {
				p.take(n)
				p.invalid(n, "goes with method="+other)
			}
		}
	}
	switch method {
	case "en1991-1-5":
		misplaced(us, "aashto-procedure-a")
		return h.bridgeEN(p)
	case "aashto-procedure-a":
		misplaced(en, "en1991-1-5")
		return h.bridgeAASHTO(p)
	}
	// No method, or an unknown one: the inputs of either are this route's,
	// not unknown; the error on method says what is missing.
	for _, n := range append(en, us...) {
		p.markUsed(n)
	}
	return nil, p.failed()
}

func (h *Handler) bridgeEN(p *params) (*Response, error) {
	p.require("shade_t_min")
	p.require("shade_t_max")
	p.require("deck_type")
	tMin, ok1 := p.temperature("shade_t_min")
	tMax, ok2 := p.temperature("shade_t_max")
	deck, ok3 := p.deckType()
	t0 := calc.DefaultInitial
	ok4 := true
	if p.has("t_initial") {
		t0, ok4 = p.temperature("t_initial")
	}
	setting := p.flag("setting_specified")
	extra := p.flag("extrapolate")
	if ok1 && ok2 && !(tMin < tMax) {
		p.unprocessable("shade_t_max", "must be above shade_t_min")
		ok2 = false
	}
	if err := p.done(); err != nil || !(ok1 && ok2 && ok3 && ok4) {
		return nil, p.failed()
	}
	b, err := calc.EN1991Bridge(tMin, tMax, deck, t0, setting, extra)
	if err != nil {
		switch {
		case tMin < calc.ShadeMinLow || tMin > calc.ShadeMinHigh:
			p.unprocessable("shade_t_min", err.Error()+"; set extrapolate=true to extend the straight lines")
		case tMax < calc.ShadeMaxLow || tMax > calc.ShadeMaxHigh:
			p.unprocessable("shade_t_max", err.Error()+"; set extrapolate=true to extend the straight lines")
		default:
			p.unprocessable("t_initial", err.Error())
		}
		return nil, p.failed()
	}
	res := &BridgeResults{
		TMin: si(float64(b.TeMin)), TMax: si(float64(b.TeMax)), DeltaTRange: si(float64(b.Range)),
		TInitial:                si(float64(b.T0)),
		DeltaTContraction:       si(float64(b.Contraction)),
		DeltaTExpansion:         si(float64(b.Expansion)),
		DeltaTContractionJoints: si(float64(b.ContractionJoints)),
		DeltaTExpansionJoints:   si(float64(b.ExpansionJoints)),
		TMinJoints:              si(float64(b.TMinJoints)),
		TMaxJoints:              si(float64(b.TMaxJoints)),
	}
	resp := &Response{
		Results: res,
		Method: "EN 1991-1-5 Figure 6.1 for deck type " + strconv.Itoa(int(deck)) + "; dTN,con = T0 - Te,min, dTN,exp = Te,max - T0 (6.1.3.3); bearings and expansion joints: both widened by " +
			units.FormatNumber(float64(b.Widening)) + " K (6.1.3.3 Note 2), t_min_joints = T0 - widened contraction, t_max_joints = T0 + widened expansion",
		References: []string{refEN1991Fig61, refEN1991Ranges},
		Cautions: []string{
			"Shade air temperatures, surfacing adjustments (Annex B), T0 and the widening for bearings and joints may be altered by the National Annex of the country of the site.",
			"Pass t_min_joints and t_max_joints to /v1/joints/gap when sizing an expansion joint; the joint manufacturer's movement ratings govern the device.",
		},
	}
	if !p.has("t_initial") {
		resp.Warnings = append(resp.Warnings, "t_initial not given: T0 = 10 degC (EN 1991-1-5 Annex A) was used")
	}
	if extra && (tMin < calc.ShadeMinLow || tMin > calc.ShadeMinHigh || tMax < calc.ShadeMaxLow || tMax > calc.ShadeMaxHigh) {
		resp.Warnings = append(resp.Warnings, "extrapolated: a shade air temperature lies outside Figure 6.1 (Tmin -50..0 degC, Tmax +20..+50 degC); the straight lines were extended")
	}
	return resp, nil
}

// deckType reads deck_type: 1, 2 or 3, as a number or a string, or the
// names steel, composite, concrete.
func (p *params) deckType() (calc.DeckType, bool) {
	r, ok := p.take("deck_type")
	if !ok {
		return 0, false
	}
	var d calc.DeckType
	switch {
	case r.kind == rawNumber && (r.num == 1 || r.num == 2 || r.num == 3):
		d = calc.DeckType(r.num)
	case r.kind == rawString:
		switch r.str {
		case "1", "steel":
			d = calc.SteelDeck
		case "2", "composite":
			d = calc.CompositeDeck
		case "3", "concrete":
			d = calc.ConcreteDeck
		}
	}
	if d == 0 {
		p.invalid("deck_type", strconv.Quote(r.origin)+" is not 1 (steel), 2 (composite) or 3 (concrete)")
		return 0, false
	}
	p.inputs.addText("deck_type", strconv.Itoa(int(d)))
	return d, true
}

func (h *Handler) bridgeAASHTO(p *params) (*Response, error) {
	p.require("climate")
	p.require("deck_material")
	c, ok1 := p.choice("climate", string(calc.Moderate), string(calc.Cold))
	m, ok2 := p.choice("deck_material", "steel", "aluminium", "aluminum", "concrete", "wood")
	if err := p.done(); err != nil || !(ok1 && ok2) {
		return nil, p.failed()
	}
	if m == "aluminum" {
		m = string(calc.DeckAluminium)
	}
	lo, hi, err := calc.ProcedureA(calc.Climate(c), calc.DeckMaterial(m))
	if err != nil {
		p.unprocessable("deck_material", err.Error())
		return nil, p.failed()
	}
	return &Response{
		Results:    &BridgeResults{TMin: si(float64(lo)), TMax: si(float64(hi)), DeltaTRange: si(float64(hi.Sub(lo)))},
		Method:     "AASHTO LRFD 3.12.2.1.1 Procedure A, Table 3.12.2.1.1-1: " + c + " climate, " + m + " deck; design movement = alpha L (t_max - t_min) (eq. 3.12.2.3-1)",
		References: []string{refAASHTOProcA, refAASHTOMovement},
		Cautions: []string{
			"Procedure A applies where the owner has not specified Procedure B or site data; a moderate climate has fewer than 14 freezing days a year.",
			"Pass t_min and t_max to /v1/joints/gap when sizing an expansion joint; the joint manufacturer's movement ratings govern the device.",
		},
	}, nil
}

// failed returns the problems recorded, or, should a reader have refused
// a value without recording why, a generic not-computable error: never a
// nil error with a nil response.
func (p *params) failed() error {
	if err := p.done(); err != nil {
		return err
	}
	return newError(errUnprocessable, "the inputs cannot be computed")
}

func reflectType[T any]() reflect.Type { return reflect.TypeOf((*T)(nil)).Elem() }
