package handlers

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"image/color"
	"math"
	"reflect"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"

	"github.com/thermalmovement/service/internal/units"
)

// render writes the setting table: the rows converted to their output
// units, then CSV (one row per installation temperature, units in the
// header), XML (one <row> element per row), an SVG or PNG chart, or nil
// for the generic JSON and text writers.
func (r *ScheduleResults) render(out *outputOptions, resp *Response) ([]byte, string, error) {
	r.convertRows(out)
	formatChecks(r.Checks, out)
	switch out.format {
	case "csv":
		return r.csv(resp), contentTypes["csv"], nil
	case "xml":
		return r.xml(resp), contentTypes["xml"], nil
	case "svg", "png":
		b, err := r.chart(out.format, resp)
		if err != nil {
			return nil, "", err
		}
		return b, contentTypes[out.format], nil
	}
	return nil, "", nil
}

// rowUnit is the output unit of a row field.
func (r *ScheduleResults) rowUnit(out *outputOptions, f resultField) units.Unit {
	if u, ok := r.rowUnits[f.name]; ok {
		return u
	}
	return out.unitFor(f)
}

// convertRows sets every row value to its output unit, once.
func (r *ScheduleResults) convertRows(out *outputOptions) {
	if r.converted {
		return
	}
	r.converted = true
	fields := fieldsOf(reflectType[ScheduleRow]())
	for i := range r.Rows {
		v := reflect.ValueOf(&r.Rows[i]).Elem()
		for _, f := range fields {
			p := v.Field(f.index).Interface().(*Value)
			if p == nil {
				continue
			}
			u := r.rowUnit(out, f)
			p.Value, p.Unit = Number(f.kind.Value(p.si, u)), u.Symbol
		}
	}
}

// columns lists the row fields present, in order.
func (r *ScheduleResults) columns() []resultField {
	var cols []resultField
	if len(r.Rows) == 0 {
		return cols
	}
	v := reflect.ValueOf(&r.Rows[0]).Elem()
	for _, f := range fieldsOf(reflectType[ScheduleRow]()) {
		if v.Field(f.index).Interface().(*Value) != nil {
			cols = append(cols, f)
		}
	}
	return cols
}

func (row *ScheduleRow) value(f resultField) *Value {
	return reflect.ValueOf(row).Elem().Field(f.index).Interface().(*Value)
}

// csv is the table: a header naming each column with its unit, then a
// row per installation temperature. The checks of each row follow as
// columns check_<name> holding pass or fail, then the warnings and the
// cautions of the whole table, in the first row (on every row they would
// multiply the table's size by thirty, past what a spreadsheet cell's
// web-service function reads).
func (r *ScheduleResults) csv(resp *Response) []byte {
	var b bytes.Buffer
	cols := r.columns()
	for i, f := range cols {
		if i > 0 {
			b.WriteByte(',')
		}
		b.WriteString(csvHeader(f.name, r.Rows[0].value(f).Unit))
	}
	var names []string
	if len(r.rowChecks) > 0 {
		for _, c := range r.rowChecks[0] {
			names = append(names, c.Name)
			b.WriteString(",check_" + c.Name)
		}
	}
	b.WriteString(",warnings,cautions\r\n")
	notes := appendCSVField(nil, strings.Join(resp.Warnings, "; "))
	notes = append(notes, ',')
	notes = appendCSVField(notes, strings.Join(resp.Cautions, " "))
	for i := range r.Rows {
		for j, f := range cols {
			if j > 0 {
				b.WriteByte(',')
			}
			b.Write(units.AppendNumber(nil, float64(r.Rows[i].value(f).Value)))
		}
		for j := range names {
			b.WriteString("," + passFail(r.rowChecks[i][j].Pass))
		}
		if i == 0 {
			b.WriteByte(',')
			b.Write(notes)
		} else {
			b.WriteString(",,")
		}
		b.WriteString("\r\n")
	}
	return b.Bytes()
}

// table marks results that are a table per case: a batch row cannot
// hold them, so they are not offered as a batch.
func (*ScheduleResults) table() {}

// checkList and checkNames give the checks of the whole table (each
// passes when every row does) to format=text and result=check_<name>.
func (r *ScheduleResults) checkList() []Check { return r.Checks }

func (*ScheduleResults) checkNames() []string { return gapCheckNames }

// xml is the table as flat XML: the summary results, one <row> per
// installation temperature, the checks and the warnings.
func (r *ScheduleResults) xml(resp *Response) []byte {
	var b bytes.Buffer
	esc := func(s string) { xml.EscapeText(&b, []byte(s)) }
	elem := func(name string, v *Value) {
		b.WriteString("<" + name + ` unit="`)
		esc(v.Unit)
		b.WriteString(`">`)
		b.Write(units.AppendNumber(nil, float64(v.Value)))
		b.WriteString("</" + name + ">")
	}
	b.WriteString(`<?xml version="1.0" encoding="UTF-8"?>` + "\n")
	b.WriteString(`<result calculation="`)
	esc(resp.Calculation)
	b.WriteString(`">`)
	elem("movement_range", r.MovementRange)
	elem("alpha_low", r.AlphaLow)
	elem("alpha_high", r.AlphaHigh)
	cols := r.columns()
	for i := range r.Rows {
		b.WriteString("<row>")
		for _, f := range cols {
			elem(f.name, r.Rows[i].value(f))
		}
		b.WriteString("</row>")
	}
	for _, c := range r.Checks {
		fmt.Fprintf(&b, `<check name="%s" pass="%t">`, c.Name, c.Pass)
		esc(c.Detail)
		b.WriteString("</check>")
	}
	appendNotes(&b, resp.Warnings, resp.Cautions)
	b.WriteString("</result>\n")
	return b.Bytes()
}

// Chart size: a half page of A4 or Letter, drawn for print.
const (
	chartWidth  = 16 * vg.Centimeter
	chartHeight = 11 * vg.Centimeter
	chartDPI    = 200
	chartMargin = 4 * vg.Millimeter // around the notes below the plot
)

// displayUnit writes a unit symbol as a printed chart shows it.
func displayUnit(sym string) string {
	switch sym {
	case "degC":
		return "°C"
	case "degF":
		return "°F"
	case "degR":
		return "°R"
	}
	return sym
}

// chart draws gap against installation temperature: gap_install,
// gap_at_t_min and gap_at_t_max (and the high-bound gap at t_min where a
// band is used), with the design extremes t_min and t_max marked as
// vertical lines and max_gap and min_gap as horizontal ones. Curves
// differ by dash pattern as well as colour so that a black-and-white
// print tells them apart.
func (r *ScheduleResults) chart(format string, resp *Response) ([]byte, error) {
	if len(r.Rows) == 0 {
		return nil, newError(errUnprocessable, "the schedule has no rows to draw")
	}
	row0 := r.Rows[0]
	tUnitSym, gUnitSym := row0.TInstall.Unit, row0.GapInstall.Unit
	tU, err := units.ParseUnit(tUnitSym)
	if err != nil {
		return nil, err
	}
	gU, err := units.ParseUnit(gUnitSym)
	if err != nil {
		return nil, err
	}
	toT := func(t units.Temperature) float64 { return units.FromKelvin(t, tU) }
	toG := func(m float64) float64 { return units.FromSI(m, gU) }

	p := plot.New()
	p.Title.Text = "Joint setting: gap against installation temperature"
	p.Title.TextStyle.Font.Size = vg.Points(13)
	p.X.Label.Text = "Installation temperature t_install (" + displayUnit(tUnitSym) + ")"
	p.Y.Label.Text = "Gap (" + displayUnit(gUnitSym) + ")"
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font.Size = vg.Points(11)
		a.Tick.Label.Font.Size = vg.Points(10)
		a.LineStyle.Width = vg.Points(1)
	}
	p.Legend.TextStyle.Font.Size = vg.Points(9.5)
	p.Legend.Top = true
	p.Legend.Left = true
	p.Legend.XOffs = vg.Points(26)
	p.Legend.YOffs = -vg.Points(4)
	grid := plotter.NewGrid()
	grid.Vertical.Color = color.Gray{Y: 210}
	grid.Horizontal.Color = color.Gray{Y: 210}
	p.Add(grid)

	type curve struct {
		name   string
		get    func(ScheduleRow) *Value
		colour color.Color
		dashes []vg.Length
	}
	curves := []curve{
		{"gap_install (set on the day)", func(r ScheduleRow) *Value { return r.GapInstall }, color.RGBA{R: 0, G: 0, B: 0, A: 255}, nil},
		{"gap_at_t_max (hottest, smallest)", func(r ScheduleRow) *Value { return r.GapAtTMax }, color.RGBA{R: 200, G: 30, B: 30, A: 255}, []vg.Length{vg.Points(7), vg.Points(3)}},
		{"gap_at_t_min (coldest, widest)", func(r ScheduleRow) *Value { return r.GapAtTMin }, color.RGBA{R: 20, G: 70, B: 200, A: 255}, []vg.Length{vg.Points(2), vg.Points(2.5)}},
	}
	if row0.GapAtTMinHigh != nil {
		curves = append(curves, curve{"gap_at_t_min, high coefficient", func(r ScheduleRow) *Value { return r.GapAtTMinHigh }, color.RGBA{R: 20, G: 140, B: 60, A: 255}, []vg.Length{vg.Points(7), vg.Points(2), vg.Points(2), vg.Points(2)}})
	}
	yMin, yMax := 0.0, 0.0
	for _, c := range curves {
		xys := make(plotter.XYs, len(r.Rows))
		for i, row := range r.Rows {
			xys[i].X = float64(row.TInstall.Value)
			xys[i].Y = float64(c.get(row).Value)
			yMin, yMax = math.Min(yMin, xys[i].Y), math.Max(yMax, xys[i].Y)
		}
		l, err := plotter.NewLine(xys)
		if err != nil {
			return nil, err
		}
		l.Width = vg.Points(2)
		l.Color = c.colour
		l.Dashes = c.dashes
		p.Add(l)
		p.Legend.Add(c.name, l)
	}
	if r.maxGap > 0 {
		yMax = math.Max(yMax, toG(r.maxGap))
	}
	pad := 0.08 * (yMax - yMin)
	if pad == 0 {
		pad = 1
	}
	yMin, yMax = yMin-0.02*(yMax-yMin), yMax+3*pad // room for the legend and labels
	xMin, xMax := float64(row0.TInstall.Value), float64(r.Rows[len(r.Rows)-1].TInstall.Value)
	tMin, tMax := toT(r.tMin), toT(r.tMax)
	xMin, xMax = math.Min(xMin, tMin), math.Max(xMax, tMax)
	xPad := 0.04 * (xMax - xMin)
	if xPad == 0 {
		xPad = 1
	}
	p.X.Min, p.X.Max = xMin-xPad, xMax+xPad
	p.Y.Min, p.Y.Max = yMin, yMax

	grey := color.Gray{Y: 90}
	mark := func(pts plotter.XYs, dashes []vg.Length) error {
		l, err := plotter.NewLine(pts)
		if err != nil {
			return err
		}
		l.Width = vg.Points(1.2)
		l.Color = grey
		l.Dashes = dashes
		p.Add(l)
		return nil
	}
	var labels plotter.XYLabels
	var rightAligned []int
	long := []vg.Length{vg.Points(5), vg.Points(4)}
	for _, m := range []struct {
		x    float64
		name string
	}{{tMin, "t_min"}, {tMax, "t_max"}} {
		if err := mark(plotter.XYs{{X: m.x, Y: yMin}, {X: m.x, Y: yMax}}, long); err != nil {
			return nil, err
		}
		if m.name == "t_max" {
			rightAligned = append(rightAligned, len(labels.Labels))
		}
		labels.XYs = append(labels.XYs, plotter.XY{X: m.x, Y: yMin + 0.03*(yMax-yMin)})
		labels.Labels = append(labels.Labels, " "+m.name+" = "+units.FormatNumber(roundTo(m.x, 2))+" "+displayUnit(tUnitSym)+" ")
	}
	if r.maxGap > 0 {
		y := toG(r.maxGap)
		if err := mark(plotter.XYs{{X: xMin - xPad, Y: y}, {X: xMax + xPad, Y: y}}, long); err != nil {
			return nil, err
		}
		labels.XYs = append(labels.XYs, plotter.XY{X: (xMin + xMax) / 2, Y: y + 0.01*(yMax-yMin)})
		labels.Labels = append(labels.Labels, "max_gap = "+units.FormatNumber(roundTo(y, 2))+" "+displayUnit(gUnitSym))
	}
	if r.hasMinGap && r.minGap > 0 {
		y := toG(r.minGap)
		labels.XYs = append(labels.XYs, plotter.XY{X: (xMin + xMax) / 2, Y: y + 0.01*(yMax-yMin)})
		labels.Labels = append(labels.Labels, "min_gap = "+units.FormatNumber(roundTo(y, 2))+" "+displayUnit(gUnitSym))
	}
	lb, err := plotter.NewLabels(labels)
	if err != nil {
		return nil, err
	}
	for i := range lb.TextStyle {
		lb.TextStyle[i].Font.Size = vg.Points(9)
		lb.TextStyle[i].YAlign = draw.YBottom
	}
	for _, i := range rightAligned {
		lb.TextStyle[i].XAlign = draw.XRight
	}
	p.Add(lb)

	// Below the plot: the warnings and cautions, since a printed chart
	// travels without the rest of the answer.
	noteStyle := draw.TextStyle{Color: color.Black, Font: font.From(plot.DefaultFont, vg.Points(7)), Handler: plot.DefaultTextHandler}
	var notes []string
	for _, w := range resp.Warnings {
		notes = append(notes, wrapText(noteStyle, "Warning: "+w, chartWidth-2*chartMargin)...)
	}
	for _, cn := range resp.Cautions {
		notes = append(notes, wrapText(noteStyle, cn, chartWidth-2*chartMargin)...)
	}
	lineH := noteStyle.Height("Mg") * 1.15
	footer := vg.Length(len(notes))*lineH + chartMargin
	height := chartHeight + footer

	var c vg.CanvasWriterTo
	switch format {
	case "svg":
		c = vgsvg.New(chartWidth, height)
	default:
		c = vgimg.PngCanvas{Canvas: vgimg.NewWith(vgimg.UseWH(chartWidth, height), vgimg.UseDPI(chartDPI), vgimg.UseBackgroundColor(color.White))}
	}
	dc := draw.New(c)
	p.Draw(draw.Crop(dc, 0, 0, footer, 0))
	for i, n := range notes {
		dc.FillText(noteStyle, vg.Point{X: dc.Min.X + chartMargin, Y: dc.Min.Y + footer - vg.Length(i+1)*lineH}, n)
	}
	var b bytes.Buffer
	if _, err := c.WriteTo(&b); err != nil {
		return nil, err
	}
	return b.Bytes(), nil
}

// wrapText breaks txt at spaces into lines no wider than width.
func wrapText(sty draw.TextStyle, txt string, width vg.Length) []string {
	var lines []string
	line := ""
	for _, w := range strings.Fields(txt) {
		if line != "" && sty.Width(line+" "+w) > width {
			lines = append(lines, line)
			line = w
			continue
		}
		if line != "" {
			line += " "
		}
		line += w
	}
	if line != "" {
		lines = append(lines, line)
	}
	return lines
}

func roundTo(v float64, digits int) float64 {
	p := math.Pow(10, float64(digits))
	return math.Round(v*p) / p
}
