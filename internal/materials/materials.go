// Package materials is the built-in catalogue of materials: coefficients
// of thermal expansion with the range they hold for and their band in the
// literature, elastic properties, temperature-dependent expansion curves,
// and the published source of every value.
//
// The data lives in catalogue.yaml, embedded in the binary; Load reads and
// checks it once at start-up.
package materials

import (
	"bytes"
	_ "embed"
	"errors"
	"fmt"
	"regexp"
	"sort"
	"strings"

	"go.yaml.in/yaml/v3"

	"github.com/thermalmovement/service/internal/calc"
	"github.com/thermalmovement/service/internal/units"
)

//go:embed catalogue.yaml
var catalogueYAML []byte

// Catalogue is a loaded, checked set of materials. It is read-only after
// Load and safe for concurrent use.
type Catalogue struct {
	Version    string
	References map[string]string
	list       []*Material
	byID       map[string]*Material
}

// Material is one catalogue entry. SI units throughout.
type Material struct {
	ID          string
	Name        string
	Category    string
	Phase       string // solid or liquid
	Description string
	Alpha       *Coefficient // linear coefficient of a solid
	Beta        *Coefficient // volumetric coefficient of a liquid
	Modulus     *Property    // Young's modulus, Pa
	Poisson     *Property    // Poisson's ratio
	Yield       *Property    // yield or 0.2 % proof strength, Pa
	Density     *Property    // kg/m3
	LiquidModel string       // "kell-1975" for water
	Curves      []Curve
}

// Coefficient is a coefficient of expansion, per kelvin, with the range
// of temperature it holds for and its band in the literature.
type Coefficient struct {
	Value      float64
	Low, High  float64 // the band; equal to Value where none is given
	HasBand    bool
	TMin, TMax units.Temperature
	HasRange   bool
	Source
}

// Property is a scalar material property in SI units.
type Property struct {
	Value float64
	Source
}

// Source is where a value comes from.
type Source struct {
	Refs       []string // reference ids; Catalogue.Cite turns them into citations
	Citations  []string // the citations of Refs, resolved when the catalogue is loaded
	Confidence string   // "read" or "memory"
	Note       string
}

// Curve is temperature-dependent expansion data of a material.
type Curve struct {
	calc.StrainCurve
	Kind string
	Source
}

// ErrNotFound reports an unknown material id.
var ErrNotFound = errors.New("unknown material")

// Load reads and checks the embedded catalogue.
func Load() (*Catalogue, error) { return Parse(catalogueYAML) }

// Parse reads and checks a catalogue in the catalogue.yaml format.
func Parse(data []byte) (*Catalogue, error) {
	var f fileCatalogue
	dec := yaml.NewDecoder(bytes.NewReader(data))
	dec.KnownFields(true)
	if err := dec.Decode(&f); err != nil {
		return nil, fmt.Errorf("materials: decode catalogue: %w", err)
	}
	if f.Version == "" {
		return nil, errors.New("materials: catalogue without version")
	}
	c := &Catalogue{Version: f.Version, References: f.References, byID: map[string]*Material{}}
	for i, fm := range f.Materials {
		m, err := fm.material(c)
		if err != nil {
			return nil, fmt.Errorf("materials: entry %d (%s): %w", i, fm.ID, err)
		}
		if _, dup := c.byID[m.ID]; dup {
			return nil, fmt.Errorf("materials: duplicate id %q", m.ID)
		}
		c.byID[m.ID] = m
		c.list = append(c.list, m)
	}
	sort.Slice(c.list, func(i, j int) bool { return c.list[i].ID < c.list[j].ID })
	return c, nil
}

// Get returns the material with the id, or an error wrapping ErrNotFound.
func (c *Catalogue) Get(id string) (*Material, error) {
	m, ok := c.byID[id]
	if !ok {
		return nil, fmt.Errorf("%w %q", ErrNotFound, id)
	}
	return m, nil
}

// Suggest returns up to four ids a mistyped id may have meant: the id
// itself in another case, ids that contain it ("steel"), and ids a letter
// or two away from it ("aluminum-6061", the US spelling). Common practice
// of search boxes; nothing here decides a calculation.
func (c *Catalogue) Suggest(id string) []string {
	q := strings.ToLower(strings.TrimSpace(id))
	if q == "" {
		return nil
	}
	var out []string
	for _, m := range c.list {
		if len(out) == 4 {
			break
		}
		if m.ID == q || strings.Contains(m.ID, q) || editDistance(q, m.ID, 2) <= 2 {
			out = append(out, m.ID)
		}
	}
	return out
}

// editDistance is the Levenshtein distance of a and b, or max+1 once it
// is sure to be above max.
func editDistance(a, b string, max int) int {
	if d := len(a) - len(b); d > max || -d > max {
		return max + 1
	}
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		best := cur[0]
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
			best = min(best, cur[j])
		}
		if best > max {
			return max + 1
		}
		prev, cur = cur, prev
	}
	return prev[len(b)]
}

// All returns every material, sorted by id.
func (c *Catalogue) All() []*Material { return c.list }

// Cite returns the full citations of reference ids.
func (c *Catalogue) Cite(refs []string) []string {
	out := make([]string, 0, len(refs))
	for _, r := range refs {
		out = append(out, c.References[r])
	}
	return out
}

// The file format. Quantities are strings with units, parsed by package
// units, so that the file reads as a table of a handbook does.
type fileCatalogue struct {
	Version    string            `yaml:"version"`
	References map[string]string `yaml:"references"`
	Materials  []fileMaterial    `yaml:"materials"`
}

type fileMaterial struct {
	ID            string      `yaml:"id"`
	Name          string      `yaml:"name"`
	Category      string      `yaml:"category"`
	Phase         string      `yaml:"phase"`
	Description   string      `yaml:"description"`
	Alpha         *fileCoef   `yaml:"alpha"`
	Beta          *fileCoef   `yaml:"beta"`
	Modulus       *fileProp   `yaml:"modulus"`
	Poisson       *fileProp   `yaml:"poisson"`
	YieldStrength *fileProp   `yaml:"yield_strength"`
	Density       *fileProp   `yaml:"density"`
	LiquidModel   string      `yaml:"liquid_model"`
	Curves        []fileCurve `yaml:"curves"`
}

type fileSource struct {
	Refs       []string `yaml:"refs"`
	Confidence string   `yaml:"confidence"`
	Note       string   `yaml:"note"`
}

type fileCoef struct {
	Value      string `yaml:"value"`
	Low        string `yaml:"low"`
	High       string `yaml:"high"`
	TMin       string `yaml:"t_min"`
	TMax       string `yaml:"t_max"`
	fileSource `yaml:",inline"`
}

type fileProp struct {
	Value      string `yaml:"value"`
	fileSource `yaml:",inline"`
}

type fileCurve struct {
	Kind         string        `yaml:"kind"`
	Variable     string        `yaml:"variable"`
	Scale        float64       `yaml:"scale"`
	AlphaUnit    string        `yaml:"alpha_unit"`
	Reference    string        `yaml:"reference"`
	TMin         string        `yaml:"t_min"`
	TMax         string        `yaml:"t_max"`
	Coefficients []float64     `yaml:"coefficients"`
	Segments     []fileSegment `yaml:"segments"`
	Points       []filePoint   `yaml:"points"`
	fileSource   `yaml:",inline"`
}

type fileSegment struct {
	From         string    `yaml:"from"`
	To           string    `yaml:"to"`
	Coefficients []float64 `yaml:"coefficients"`
}

type filePoint struct {
	T         string `yaml:"t"`
	AlphaMean string `yaml:"alpha_mean"`
}

var idPattern = regexp.MustCompile(`^[a-z0-9]+(-[a-z0-9]+)*$`)

var categories = map[string]bool{
	"metal": true, "concrete": true, "masonry": true, "timber": true, "glass": true,
	"polymer": true, "stone": true, "composite": true, "liquid": true, "other": true,
}

func (fm fileMaterial) material(c *Catalogue) (*Material, error) {
	if !idPattern.MatchString(fm.ID) {
		return nil, fmt.Errorf("id %q is not lowercase words joined by hyphens", fm.ID)
	}
	if fm.Name == "" {
		return nil, errors.New("no name")
	}
	if !categories[fm.Category] {
		return nil, fmt.Errorf("unknown category %q", fm.Category)
	}
	m := &Material{ID: fm.ID, Name: fm.Name, Category: fm.Category, Phase: fm.Phase, Description: fm.Description, LiquidModel: fm.LiquidModel}
	var err error
	switch fm.Phase {
	case "solid":
		if fm.Alpha == nil {
			return nil, errors.New("a solid needs alpha")
		}
		if fm.Beta != nil || fm.LiquidModel != "" {
			return nil, errors.New("a solid has no beta or liquid_model")
		}
	case "liquid":
		if fm.Beta == nil {
			return nil, errors.New("a liquid needs beta")
		}
		if fm.Alpha != nil {
			return nil, errors.New("a liquid has no alpha")
		}
		if fm.LiquidModel != "" && fm.LiquidModel != "kell-1975" {
			return nil, fmt.Errorf("unknown liquid_model %q", fm.LiquidModel)
		}
	default:
		return nil, fmt.Errorf("phase %q is neither solid nor liquid", fm.Phase)
	}
	if m.Alpha, err = fm.Alpha.coefficient(c, "alpha"); err != nil {
		return nil, err
	}
	if m.Beta, err = fm.Beta.coefficient(c, "beta"); err != nil {
		return nil, err
	}
	for _, p := range []struct {
		name string
		in   *fileProp
		dim  units.Dim
		out  **Property
	}{
		{"modulus", fm.Modulus, units.Stress, &m.Modulus},
		{"poisson", fm.Poisson, units.Dimensionless, &m.Poisson},
		{"yield_strength", fm.YieldStrength, units.Stress, &m.Yield},
		{"density", fm.Density, units.Density, &m.Density},
	} {
		if p.in == nil {
			continue
		}
		v, err := quantity(p.in.Value, p.dim)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", p.name, err)
		}
		if v <= 0 {
			return nil, fmt.Errorf("%s: not positive", p.name)
		}
		src, err := p.in.source(c)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", p.name, err)
		}
		*p.out = &Property{Value: v, Source: src}
	}
	for i, fc := range fm.Curves {
		cv, err := fc.curve(c)
		if err != nil {
			return nil, fmt.Errorf("curve %d (%s): %w", i, fc.Kind, err)
		}
		m.Curves = append(m.Curves, cv)
	}
	return m, nil
}

func (s fileSource) source(c *Catalogue) (Source, error) {
	if len(s.Refs) == 0 {
		return Source{}, errors.New("no refs: every value needs its source")
	}
	for _, r := range s.Refs {
		if _, ok := c.References[r]; !ok {
			return Source{}, fmt.Errorf("unknown reference %q", r)
		}
	}
	if s.Confidence != "read" && s.Confidence != "memory" {
		return Source{}, fmt.Errorf("confidence %q is neither read nor memory", s.Confidence)
	}
	return Source{Refs: s.Refs, Citations: c.Cite(s.Refs), Confidence: s.Confidence, Note: s.Note}, nil
}

func (fc *fileCoef) coefficient(c *Catalogue, name string) (*Coefficient, error) {
	if fc == nil {
		return nil, nil
	}
	wrap := func(err error) error { return fmt.Errorf("%s: %w", name, err) }
	v, err := quantity(fc.Value, units.Coefficient)
	if err != nil {
		return nil, wrap(err)
	}
	co := &Coefficient{Value: v, Low: v, High: v}
	if fc.Low != "" || fc.High != "" {
		if co.Low, err = quantity(fc.Low, units.Coefficient); err != nil {
			return nil, wrap(fmt.Errorf("low: %w", err))
		}
		if co.High, err = quantity(fc.High, units.Coefficient); err != nil {
			return nil, wrap(fmt.Errorf("high: %w", err))
		}
		if !(co.Low <= v && v <= co.High) {
			return nil, wrap(errors.New("value outside its low..high band"))
		}
		co.HasBand = true
	}
	if fc.TMin != "" || fc.TMax != "" {
		if co.TMin, err = temperature(fc.TMin); err != nil {
			return nil, wrap(fmt.Errorf("t_min: %w", err))
		}
		if co.TMax, err = temperature(fc.TMax); err != nil {
			return nil, wrap(fmt.Errorf("t_max: %w", err))
		}
		if !(co.TMax > co.TMin) {
			return nil, wrap(errors.New("t_max not above t_min"))
		}
		co.HasRange = true
	}
	if co.Source, err = fc.source(c); err != nil {
		return nil, wrap(err)
	}
	return co, nil
}

func (fc fileCurve) curve(c *Catalogue) (Curve, error) {
	src, err := fc.source(c)
	if err != nil {
		return Curve{}, err
	}
	ref, err := temperature(fc.Reference)
	if err != nil {
		return Curve{}, fmt.Errorf("reference: %w", err)
	}
	celsius := false
	switch fc.Variable {
	case "", "K":
	case "degC":
		celsius = true
	default:
		return Curve{}, fmt.Errorf("variable %q is neither K nor degC", fc.Variable)
	}
	rangeOf := func() (units.Temperature, units.Temperature, error) {
		lo, err := temperature(fc.TMin)
		if err != nil {
			return 0, 0, fmt.Errorf("t_min: %w", err)
		}
		hi, err := temperature(fc.TMax)
		if err != nil {
			return 0, 0, fmt.Errorf("t_max: %w", err)
		}
		if !(hi > lo) {
			return 0, 0, errors.New("t_max not above t_min")
		}
		return lo, hi, nil
	}
	var sc calc.StrainCurve
	switch fc.Kind {
	case "polynomial-strain":
		lo, hi, err := rangeOf()
		if err != nil {
			return Curve{}, err
		}
		if len(fc.Coefficients) == 0 || fc.Scale == 0 {
			return Curve{}, errors.New("needs coefficients and scale")
		}
		sc = calc.NewPolynomialStrain(fc.Coefficients, fc.Scale, celsius, ref, lo, hi)
	case "log-polynomial-alpha":
		lo, hi, err := rangeOf()
		if err != nil {
			return Curve{}, err
		}
		au, err := quantity(fc.AlphaUnit, units.Coefficient)
		if err != nil {
			return Curve{}, fmt.Errorf("alpha_unit: %w", err)
		}
		if len(fc.Coefficients) == 0 || lo <= 0 {
			return Curve{}, errors.New("needs coefficients and a range above 0 K")
		}
		sc = calc.NewLogPolynomialAlpha(fc.Coefficients, au, ref, lo, hi)
	case "piecewise-strain":
		var segs []calc.Segment
		for i, s := range fc.Segments {
			from, err := temperature(s.From)
			if err != nil {
				return Curve{}, fmt.Errorf("segment %d from: %w", i, err)
			}
			to, err := temperature(s.To)
			if err != nil {
				return Curve{}, fmt.Errorf("segment %d to: %w", i, err)
			}
			segs = append(segs, calc.Segment{From: from, To: to, Coef: s.Coefficients})
		}
		scale := fc.Scale
		if scale == 0 {
			scale = 1
		}
		if sc, err = calc.NewPiecewiseStrain(segs, scale, celsius, ref); err != nil {
			return Curve{}, err
		}
	case "mean-table":
		var ts []units.Temperature
		var as []float64
		for i, p := range fc.Points {
			t, err := temperature(p.T)
			if err != nil {
				return Curve{}, fmt.Errorf("point %d t: %w", i, err)
			}
			a, err := quantity(p.AlphaMean, units.Coefficient)
			if err != nil {
				return Curve{}, fmt.Errorf("point %d alpha_mean: %w", i, err)
			}
			ts, as = append(ts, t), append(as, a)
		}
		if sc, err = calc.NewMeanTable(ref, ts, as); err != nil {
			return Curve{}, err
		}
	default:
		return Curve{}, fmt.Errorf("unknown curve kind %q", fc.Kind)
	}
	return Curve{StrainCurve: sc, Kind: fc.Kind, Source: src}, nil
}

func quantity(s string, d units.Dim) (float64, error) {
	q, err := units.Parse(strings.TrimSpace(s))
	if err != nil {
		return 0, err
	}
	return q.In(d)
}

func temperature(s string) (units.Temperature, error) {
	q, err := units.Parse(strings.TrimSpace(s))
	if err != nil {
		return 0, err
	}
	return q.Temperature()
}
