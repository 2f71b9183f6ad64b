package export

import (
	"fmt"
	"math"

	"capbank/components/figures"
	"capbank/sizing"
)

// series is one line of a chart.
type series struct {
	name string
	y    []float64
	col  colour
	dash bool
}

// marker is a labelled horizontal line across a chart; below puts the
// label under the line.
type marker struct {
	label string
	y     float64
	col   colour
	below bool
}

// chartHeight, in mm, is the height of one chart with its title, legend
// and axis labels; three fit on a Letter page.
const chartHeight = 70.0

// charts writes the worst-case pass of the bank on a page of its own.
func (p *pdf) charts(d *sizing.Design, r *sizing.Report, c *sizing.Candidate, cv *sizing.Curve, note string) {
	p.f.AddPage()
	p.heading(fmt.Sprintf("Worst-case pass of the bank: %s of %s", figures.Arrangement(c.Series, c.Parallel, 0), c.CellID), 0)
	worst := fmt.Sprintf("end of life (capacitance × %s, ESR × %s)", figures.Number(r.EOLCapacitanceFactor, 4), figures.Number(r.EOLESRFactor, 4))
	if r.ColdC != nil {
		worst += fmt.Sprintf(", cold %s °C", figures.Number(*r.ColdC, 4))
	}
	if cv == nil || len(cv.TimeS) < 2 {
		if note == "" {
			note = "The report has no curve for this bank."
		}
		p.para(note, "I", bodyPt, lineMM)
		return
	}
	intro := "The sizing pass at worst case: " + worst + ", starting fully charged at the window top."
	if cv.Decimated {
		intro += " The pass is long, so the curve keeps each time slice's first, last, lowest and highest points."
	}
	p.para(intro, "", smallPt, smallLine)
	p.f.Ln(2)

	tUnit, tScale := timeAxis(cv.TimeS[len(cv.TimeS)-1])
	t := make([]float64, len(cv.TimeS))
	for i, s := range cv.TimeS {
		t[i] = s / tScale
	}
	xLabel := "time (" + tUnit + ")"
	p.chart("Voltage at the bank terminals and across the capacitance", xLabel, "voltage (V)", t,
		[]series{
			{name: "terminal voltage", y: cv.TerminalV, col: blue},
			{name: "capacitor voltage (behind the ESR)", y: cv.CapacitorV, col: orange, dash: true},
		},
		[]marker{
			{label: "window top " + quantity(cv.MaxV, "V"), y: cv.MaxV, col: green},
			{label: "window bottom (cut-off) " + quantity(cv.MinV, "V"), y: cv.MinV, col: red, below: true},
		}, "", 0)
	p.chart("Bank current (positive out of the bank)", xLabel, "current (A)", t,
		[]series{{name: "bank current", y: cv.CurrentA, col: purple}}, nil, "", 0)
	if len(cv.TemperatureC) == len(cv.TimeS) {
		var marks []marker
		extra := ""
		ambient := defaultAmbientC
		if d.AmbientC != nil {
			ambient = *d.AmbientC
		}
		marks = append(marks, marker{label: "ambient " + quantity(ambient, "°C"), y: ambient, col: grey, below: true})
		lo, hi := extent(cv.TemperatureC)
		if cell := cellByID(d, c.CellID); cell != nil && cell.MaxTempC != nil {
			limit := *cell.MaxTempC
			if limit <= hi+3*math.Max(hi-lo, 1) {
				marks = append(marks, marker{label: "cell maximum " + quantity(limit, "°C"), y: limit, col: red})
			} else {
				extra = "cell maximum " + quantity(limit, "°C") + ", above the scale"
			}
		}
		p.chart("Temperature of the hottest cell (first-order thermal model from ambient)", xLabel, "temperature (°C)", t,
			[]series{{name: "cell temperature", y: cv.TemperatureC, col: red}}, marks, extra, 1)
	} else {
		p.para("No temperature chart: the cell gives no thermal resistance, so its heating is not checked.", "I", bodyPt, lineMM)
	}
}

// timeAxis chooses the unit of the time axis for a pass of total seconds.
func timeAxis(total float64) (string, float64) {
	switch {
	case total >= 2*86400:
		return "days", 86400
	case total >= 7200:
		return "h", 3600
	case total >= 300:
		return "min", 60
	}
	return "s", 1
}

// extent returns the smallest and largest finite value of ys.
func extent(ys []float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, y := range ys {
		if math.IsNaN(y) || math.IsInf(y, 0) {
			continue
		}
		lo, hi = math.Min(lo, y), math.Max(hi, y)
	}
	return lo, hi
}

// niceStep is a tick step of 1, 2, 2.5 or 5 × 10^k that gives about n
// intervals over span.
func niceStep(span float64, n int) float64 {
	raw := span / float64(n)
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	for _, m := range []float64{1, 2, 2.5, 5, 10} {
		if m*mag >= raw {
			return m * mag
		}
	}
	return 10 * mag
}

// axisRange pads [lo, hi] by a margin and widens it to whole tick steps.
func axisRange(lo, hi float64, n int) (float64, float64, float64) {
	if !(hi > lo) {
		pad := math.Max(math.Abs(lo)*0.05, 1)
		lo, hi = lo-pad, hi+pad
	}
	pad := 0.06 * (hi - lo)
	lo, hi = lo-pad, hi+pad
	step := niceStep(hi-lo, n)
	return math.Floor(lo/step) * step, math.Ceil(hi/step) * step, step
}

// chart draws one line chart across the body width at the current y and
// moves below it: title, legend, plot with grid, ticks and tick labels,
// axis labels, the series and the markers.
//
// minSpan is the least span of the y axis, widened upwards from the
// lowest value, so that a nearly flat trace (a few mK of heating) reads
// as flat rather than filling the plot.
func (p *pdf) chart(title, xLabel, yLabel string, x []float64, ss []series, marks []marker, extra string, minSpan float64) {
	f := p.f
	p.room(chartHeight)
	x0, y0 := marginMM, f.GetY()
	p.font("B", bodyPt)
	p.color(black)
	f.SetXY(x0, y0)
	f.CellFormat(p.body, 5, pdfText(title), "", 1, "L", false, 0, "")

	// Legend: a line sample and the name of each series.
	p.font("", 7.5)
	lx := x0 + 16
	ly := y0 + 7.5
	for _, s := range ss {
		p.stroke(s.col, 0.5, s.dash)
		f.Line(lx, ly, lx+7, ly)
		f.SetDashPattern(nil, 0)
		name := pdfText(s.name)
		f.Text(lx+8.5, ly+1, name)
		lx += 8.5 + f.GetStringWidth(name) + 6
	}
	if extra != "" {
		p.color(grey)
		f.Text(lx, ly+1, pdfText("("+extra+")"))
		p.color(black)
	}

	// Plot area.
	left, right := x0+16, x0+p.body-3
	top, bottom := y0+11, y0+chartHeight-12
	xlo, xhi := extent(x)
	if !(xhi > xlo) {
		xhi = xlo + 1
	}
	xstep := niceStep(xhi-xlo, 8)
	xlo = math.Floor(xlo/xstep) * xstep
	xhi = math.Ceil(xhi/xstep) * xstep
	ylo, yhi := math.Inf(1), math.Inf(-1)
	for _, s := range ss {
		lo, hi := extent(s.y)
		ylo, yhi = math.Min(ylo, lo), math.Max(yhi, hi)
	}
	for _, m := range marks {
		ylo, yhi = math.Min(ylo, m.y), math.Max(yhi, m.y)
	}
	if math.IsInf(ylo, 0) || math.IsInf(yhi, 0) {
		ylo, yhi = 0, 1
	}
	if yhi-ylo < minSpan {
		yhi = ylo + minSpan
	}
	ylo, yhi, ystep := axisRange(ylo, yhi, 5)
	px := func(v float64) float64 { return left + (v-xlo)/(xhi-xlo)*(right-left) }
	py := func(v float64) float64 { return bottom - (v-ylo)/(yhi-ylo)*(bottom-top) }

	// Grid, ticks and tick labels.
	p.font("", 7)
	for v := ylo; v <= yhi+ystep*1e-6; v += ystep {
		y := py(v)
		p.stroke(gridGrey, 0.15, false)
		f.Line(left, y, right, y)
		p.stroke(black, 0.2, false)
		f.Line(left-1.2, y, left, y)
		label := pdfText(figures.Number(roundTo(v, ystep), 6))
		f.Text(left-2-f.GetStringWidth(label), y+1.2, label)
	}
	for v := xlo; v <= xhi+xstep*1e-6; v += xstep {
		xx := px(v)
		p.stroke(gridGrey, 0.15, false)
		f.Line(xx, top, xx, bottom)
		p.stroke(black, 0.2, false)
		f.Line(xx, bottom, xx, bottom+1.2)
		label := pdfText(figures.Number(roundTo(v, xstep), 6))
		f.Text(xx-f.GetStringWidth(label)/2, bottom+4, label)
	}
	if ylo < 0 && yhi > 0 {
		p.stroke(grey, 0.3, false)
		f.Line(left, py(0), right, py(0))
	}
	p.stroke(black, 0.3, false)
	f.Rect(left, top, right-left, bottom-top, "D")

	// Axis labels.
	p.font("", 7.5)
	xl := pdfText(xLabel)
	f.Text((left+right)/2-f.GetStringWidth(xl)/2, bottom+8.5, xl)
	yl := pdfText(yLabel)
	f.TransformBegin()
	ycx := (top + bottom) / 2
	f.TransformRotate(90, x0+2.5, ycx)
	f.Text(x0+2.5-f.GetStringWidth(yl)/2, ycx, yl)
	f.TransformEnd()

	// Series and markers, clipped to the plot.
	f.ClipRect(left, top, right-left, bottom-top, false)
	for _, s := range ss {
		p.stroke(s.col, 0.45, s.dash)
		started := false
		for i := range x {
			if i >= len(s.y) || math.IsNaN(s.y[i]) || math.IsInf(s.y[i], 0) {
				continue
			}
			if !started {
				f.MoveTo(px(x[i]), py(s.y[i]))
				started = true
			} else {
				f.LineTo(px(x[i]), py(s.y[i]))
			}
		}
		if started {
			f.DrawPath("D")
		}
		f.SetDashPattern(nil, 0)
	}
	p.font("", 7)
	for _, m := range marks {
		y := py(m.y)
		p.stroke(m.col, 0.35, true)
		f.Line(left, y, right, y)
		f.SetDashPattern(nil, 0)
		label := pdfText(m.label)
		lw := f.GetStringWidth(label)
		ty := y - 1
		if m.below {
			ty = y + 3
		}
		f.SetFillColor(255, 255, 255)
		f.Rect(right-lw-2.5, ty-2.6, lw+1.5, 3.3, "F")
		f.SetTextColor(m.col.r, m.col.g, m.col.b)
		f.Text(right-lw-1.75, ty, label)
		p.color(black)
	}
	f.ClipEnd()
	p.stroke(black, 0.2, false)
	f.SetXY(marginMM, y0+chartHeight)
}

// stroke sets the line colour, width in mm and dash.
func (p *pdf) stroke(c colour, width float64, dash bool) {
	p.f.SetDrawColor(c.r, c.g, c.b)
	p.f.SetLineWidth(width)
	if dash {
		p.f.SetDashPattern([]float64{1.6, 1.0}, 0)
	} else {
		p.f.SetDashPattern(nil, 0)
	}
}

// roundTo rounds v to a whole number of steps, so tick labels print as
// 0.3 rather than 0.30000000000000004.
func roundTo(v, step float64) float64 {
	return math.Round(v/step) * step
}
