package components

import (
	"math"
	"strconv"
	"strings"

	"capbank/components/figures"
	"capbank/sizing"
)

// Chart is a line chart ready to draw as SVG: every position is in the
// SVG's user units (the viewBox), every label is display text.
type Chart struct {
	// ID names the chart (and its data-testid); Title and Desc describe it
	// for the caption and for screen readers.
	ID, Title, Desc string
	XLabel, YLabel  string
	W, H            float64
	// The plot area.
	Left, Right, Top, Bottom float64
	XTicks, YTicks           []Tick
	Series                   []Series
	Refs                     []RefLine
	// Bars and VRefs draw a histogram: its bars, and labelled vertical
	// lines (Y of a VRef is its x position).
	Bars  []Bar
	VRefs []RefLine
	// Zero is the y position of 0 when the range crosses it, else -1.
	Zero float64
	sc   scale
}

// Tick is one axis tick: its position along the axis and its label.
type Tick struct {
	Pos   float64
	Label string
}

// Series is one line: its legend name, the CSS class that draws it and its
// points, as SVG path data (Path, which the charts here write) or as an
// SVG points list (Points, drawn when Path is empty).
type Series struct {
	Name, Class, Points string
	Path                string
}

// Bar is one bar of a histogram, in user units.
type Bar struct{ X, Y, W, H float64 }

// RefLine is a labelled horizontal line, such as the window top.
type RefLine struct {
	Y            float64
	Label, Class string
}

// Chart geometry, in SVG user units: a 560 × 250 box whose text stays
// readable when the box is drawn between 480 and 720 px wide.
const (
	chartW      = 560.0
	chartH      = 250.0
	chartLeft   = 58.0
	chartRight  = 14.0
	chartTop    = 14.0
	chartBottom = 44.0
)

// timeAxis picks the time unit for a span in s: s, min or h.
func timeAxis(spanS float64) (scale float64, label string) {
	switch {
	case spanS > 3*3600:
		return 3600, "Time (h)"
	case spanS > 300:
		return 60, "Time (min)"
	}
	return 1, "Time (s)"
}

// VoltageChart draws the terminal and capacitor voltage of the curve
// against time, with the window top and bottom marked and labelled.
func VoltageChart(c *sizing.Curve) Chart {
	lo := min(c.MinV, minOf(c.TerminalV), minOf(c.CapacitorV))
	hi := max(c.MaxV, maxOf(c.TerminalV), maxOf(c.CapacitorV))
	ch := newChart("voltage", "Voltage at the bank", "Voltage (V)", c.TimeS, lo, hi)
	ch.Desc = "Terminal and capacitor voltage of the recommended bank at worst case over the sizing pass, with the voltage window " +
		figures.SI(c.MaxV, "V", 4) + " to " + figures.SI(c.MinV, "V", 4) + "."
	ch.Refs = []RefLine{
		{Y: ch.y(c.MaxV), Label: "window top " + figures.SI(c.MaxV, "V", 4), Class: "ref-top"},
		{Y: ch.y(c.MinV), Label: "window bottom " + figures.SI(c.MinV, "V", 4), Class: "ref-bottom"},
	}
	ch.Series = []Series{
		{Name: "Capacitor voltage", Class: "s-cap", Path: ch.points(c.TimeS, c.CapacitorV)},
		{Name: "Terminal voltage", Class: "s-term", Path: ch.points(c.TimeS, c.TerminalV)},
	}
	return ch
}

// CurrentChart draws the bank current against time (positive out of the
// bank).
func CurrentChart(c *sizing.Curve) Chart {
	lo, hi := min(0, minOf(c.CurrentA)), max(0, maxOf(c.CurrentA))
	ch := newChart("current", "Bank current", "Current (A)", c.TimeS, lo, hi)
	ch.Desc = "Current out of the recommended bank at worst case over the sizing pass; negative is charging."
	ch.Series = []Series{{Name: "Bank current (+ out of the bank)", Class: "s-current", Path: ch.points(c.TimeS, c.CurrentA)}}
	return ch
}

// minTempSpanK, in K, is the smallest span of the temperature axis.
const minTempSpanK = 1.0

// TemperatureChart draws the hottest cell's temperature against time; ok
// is false when the curve has none.
func TemperatureChart(c *sizing.Curve) (Chart, bool) {
	if len(c.TemperatureC) == 0 {
		return Chart{}, false
	}
	lo, hi := minOf(c.TemperatureC), maxOf(c.TemperatureC)
	// At least 1 K from bottom to top: a rise of a thousandth of a kelvin
	// is no rise a thermometer reads, and an axis of 30.0002 °C ticks says
	// the opposite (and outgrows its margin).
	if hi-lo < minTempSpanK {
		mid := (lo + hi) / 2
		lo, hi = mid-minTempSpanK/2, mid+minTempSpanK/2
	}
	ch := newChart("temperature", "Cell temperature", "Temperature (°C)", c.TimeS, lo, hi)
	ch.Desc = "Temperature of the hottest cell of the recommended bank by the thermal model over the sizing pass."
	ch.Series = []Series{{Name: "Hottest cell", Class: "s-temp", Path: ch.points(c.TimeS, c.TemperatureC)}}
	return ch, true
}

// ProfileChart draws a logged profile's value against time, each row held
// until the next (the zero-order hold sizing uses).
func ProfileChart(p *sizing.ProfileCSV) Chart {
	n := len(p.Steps)
	t := make([]float64, 0, 2*n)
	v := make([]float64, 0, 2*n)
	at := p.StartS
	for i := range p.Steps {
		s := &p.Steps[i]
		x := 0.0
		switch {
		case s.PowerW != nil:
			x = *s.PowerW
		case s.CurrentA != nil:
			x = *s.CurrentA
		}
		t = append(t, at)
		at += s.DurationS
		t = append(t, at)
		v = append(v, x, x)
	}
	title, yLabel, name := "Logged power", "Power (W)", "Power at the converter output"
	if p.Column == "current_a" {
		title, yLabel, name = "Logged current", "Current (A)", "Current at the bank terminals"
	}
	lo, hi := min(0, minOf(v)), max(0, maxOf(v))
	ch := newChart("profile", title, yLabel, t, lo, hi)
	ch.Desc = name + " of the logged load profile, each row held until the next; negative is charging."
	ch.Series = []Series{{Name: name, Class: "s-profile", Path: ch.points(t, v)}}
	return ch
}

// HistogramChart draws a histogram of the lots (counts over equal bins),
// with vertical reference lines at refs (data values with labels and
// classes). The x axis is the data divided by xScale, labelled xLabel; the
// axis takes in the reference lines so that each can be seen against the
// bars.
func HistogramChart(id, title, desc, xLabel string, h sizing.Histogram, xScale float64, refs []RefLine) Chart {
	ch := Chart{ID: id, Title: title, Desc: desc, XLabel: xLabel, YLabel: "Lots", W: chartW, H: chartH,
		Left: chartLeft, Right: chartW - chartRight, Top: chartTop, Bottom: chartH - chartBottom, Zero: -1}
	lo, hi := h.Lo/xScale, h.Hi/xScale
	kept := refs[:0:0]
	for _, r := range refs {
		if finite(r.Y) {
			kept = append(kept, r)
			lo, hi = min(lo, r.Y/xScale), max(hi, r.Y/xScale)
		}
	}
	refs = kept
	if !finite(lo) || !finite(hi) {
		lo, hi = 0, 1
	}
	// At least 1 % of the value from edge to edge: a spread of a
	// thousandth (every lot ending at the same step) is one bar, centred.
	if span := max(math.Abs(lo), math.Abs(hi)) * 0.01; !(hi-lo >= span) || span == 0 {
		if span == 0 {
			span = 1
		}
		mid := (lo + hi) / 2
		lo, hi = mid-span/2, mid+span/2
	}
	xt, x0, x1 := niceTicks(lo, hi, 6, false)
	ch.sc.x0, ch.sc.x1, ch.sc.tScale = x0, x1, 1
	peak := 0
	for _, c := range h.Counts {
		peak = max(peak, c)
	}
	yt, y0, y1 := niceTicks(0, float64(max(peak, 1)), 4, false)
	ch.sc.y0, ch.sc.y1 = y0, y1
	ch.setTicks(xt, yt)
	w := (h.Hi - h.Lo) / float64(len(h.Counts)) / xScale
	for k, c := range h.Counts {
		if c == 0 {
			continue
		}
		a := h.Lo/xScale + float64(k)*w
		xa, xb := ch.xu(a), ch.xu(a+w)
		if xb-xa < 3 {
			mid := (xa + xb) / 2
			xa, xb = mid-1.5, mid+1.5 // a bar at least three units wide
		}
		ch.Bars = append(ch.Bars, Bar{X: xa, Y: ch.y(float64(c)), W: xb - xa, H: ch.Bottom - ch.y(float64(c))})
	}
	for _, r := range refs {
		ch.VRefs = append(ch.VRefs, RefLine{Y: ch.xu(r.Y / xScale), Label: r.Label, Class: r.Class})
	}
	return ch
}

// RuntimeHistogram draws the runtimes of the candidate's lots.
func RuntimeHistogram(c *sizing.Candidate) Chart {
	st := c.Statistics
	h := *st.Histograms.RuntimeS
	ts, label := timeAxis(h.Hi)
	desc := "Runtime of each of " + strconv.Itoa(st.Samples) + " banks built from the lot, at end of life."
	if h.Beyond > 0 {
		desc += " " + strconv.Itoa(h.Beyond) + " ran beyond the time followed and are not drawn."
	}
	return HistogramChart("lot-runtime", "Runtime of banks from the lot", desc, label, h, ts, nil)
}

// FirstChargeHistogram draws the highest cell voltage of each lot's first
// charge from empty, against the cell's rated and surge voltage.
func FirstChargeHistogram(c *sizing.Candidate) Chart {
	st := c.Statistics
	refs := []RefLine{{Y: c.CellV, Label: "even share " + figures.SI(c.CellV, "V", 4), Class: "ref-pass"}}
	refs = append(refs, RefLine{Y: st.CellRatedV, Label: "rated " + figures.SI(st.CellRatedV, "V", 4), Class: "ref-rated"})
	if st.CellSurgeV != nil {
		refs = append(refs, RefLine{Y: *st.CellSurgeV, Label: "surge " + figures.SI(*st.CellSurgeV, "V", 4), Class: "ref-surge"})
	}
	desc := "Highest cell voltage of each of " + strconv.Itoa(st.Samples) + " banks built from the lot when the string is charged from empty to the window top before balancing acts; the 99.9th percentile is " +
		figures.SI(st.FirstChargeMaxCellV.P999, "V", 4) + "."
	return HistogramChart("lot-first-charge", "Highest cell on a first charge", desc, "Cell voltage (V)", st.Histograms.FirstChargeMaxCellV, 1, refs)
}

// vrefLabelX and vrefAnchor place a vertical line's label beside it: to
// its right in the left half of the plot, to its left in the right half.
func vrefLabelX(c Chart, r RefLine) float64 {
	if r.Y < (c.Left+c.Right)/2 {
		return r.Y + 4
	}
	return r.Y - 4
}

func vrefAnchor(c Chart, r RefLine) string {
	if r.Y < (c.Left+c.Right)/2 {
		return "start"
	}
	return "end"
}

// chart scales: data to user units.
type scale struct {
	x0, x1, y0, y1 float64 // data ranges
	tScale         float64 // s per time-axis unit
}

func newChart(id, title, yLabel string, t []float64, lo, hi float64) Chart {
	ch := Chart{ID: id, Title: title, YLabel: yLabel, W: chartW, H: chartH,
		Left: chartLeft, Right: chartW - chartRight, Top: chartTop, Bottom: chartH - chartBottom, Zero: -1}
	t0, t1 := 0.0, 1.0
	if len(t) > 0 {
		t0, t1 = t[0], t[len(t)-1]
	}
	if !(t1 > t0) {
		t1 = t0 + 1
	}
	ts, xl := timeAxis(t1 - t0)
	ch.XLabel = xl
	ch.sc.tScale = ts
	xt, x0, x1 := niceTicks(t0/ts, t1/ts, 6, true)
	ch.sc.x0, ch.sc.x1 = x0, x1
	if !(hi > lo) || !finite(lo) || !finite(hi) {
		mid := lo
		if !finite(mid) {
			mid = 0
		}
		pad := max(math.Abs(mid)*0.05, 0.5)
		lo, hi = mid-pad, mid+pad
	}
	yt, y0, y1 := niceTicks(lo, hi, 5, false)
	ch.sc.y0, ch.sc.y1 = y0, y1
	ch.setTicks(xt, yt)
	if y0 < 0 && y1 > 0 {
		ch.Zero = ch.y(0)
	}
	return ch
}

// setTicks places the ticks at the axis values xt and yt, once the
// scales are set.
func (c *Chart) setTicks(xt, yt []float64) {
	for _, v := range xt {
		c.XTicks = append(c.XTicks, Tick{Pos: c.xu(v), Label: tickLabel(v, xt)})
	}
	for _, v := range yt {
		c.YTicks = append(c.YTicks, Tick{Pos: c.y(v), Label: tickLabel(v, yt)})
	}
}

// xu is the x position of a time in axis units; y of a data value.
func (c *Chart) xu(v float64) float64 {
	return c.Left + (v-c.sc.x0)/(c.sc.x1-c.sc.x0)*(c.Right-c.Left)
}

func (c *Chart) y(v float64) float64 {
	return c.Bottom - (v-c.sc.y0)/(c.sc.y1-c.sc.y0)*(c.Bottom-c.Top)
}

// points writes the curve as SVG path data, thinned to what the plot can
// show: within each column of user units only the first, lowest, highest
// and last point are kept, in time order, so steps and spikes keep their
// extremes. The first point is absolute (M), each next one relative to the
// one before (l), in the tenths of a unit coord writes: the offsets are
// taken between the rounded positions, so the path passes through exactly
// the points coord would write and no rounding builds up along it.
func (c *Chart) points(t, v []float64) string {
	n := min(len(t), len(v))
	var keep []int
	for i := 0; i < n; {
		col := math.Floor(c.xu(t[i] / c.sc.tScale))
		j := i
		lo, hi := i, i
		for j+1 < n && math.Floor(c.xu(t[j+1]/c.sc.tScale)) == col {
			j++
			if v[j] < v[lo] {
				lo = j
			}
			if v[j] > v[hi] {
				hi = j
			}
		}
		if hi < lo {
			lo, hi = hi, lo
		}
		for _, k := range [4]int{i, lo, hi, j} {
			if len(keep) == 0 || keep[len(keep)-1] != k {
				keep = append(keep, k)
			}
		}
		i = j + 1
	}
	xs, ys := make([]float64, len(keep)), make([]float64, len(keep))
	for k, i := range keep {
		xs[k], ys[k] = c.xu(t[i]/c.sc.tScale), c.y(v[i])
	}
	return pathData(xs, ys)
}

// pathData is the polyline through (xs[i], ys[i]) as SVG path data: M to
// the first point, then relative moves between the points rounded to a
// tenth (see points). A position that is not finite makes the path
// absolute throughout, so that it shows as coord writes it.
func pathData(xs, ys []float64) string {
	if len(xs) == 0 {
		return ""
	}
	b := make([]byte, 0, 8*len(xs))
	for i := range xs {
		if !finite(xs[i]) || !finite(ys[i]) {
			for k := range xs {
				b = append(b, " L"[min(k, 1)])
				b = append(append(append(b, coord(xs[k])...), ' '), coord(ys[k])...)
			}
			return "M" + string(b[1:])
		}
	}
	x0, y0 := tenthsOf(xs[0]), tenthsOf(ys[0])
	b = append(b, 'M')
	b = appendTenths(b, x0)
	b = appendNext(b, y0)
	cmd := false
	for i := 1; i < len(xs); i++ {
		x, y := tenthsOf(xs[i]), tenthsOf(ys[i])
		if x == x0 && y == y0 {
			continue // a repeated point draws nothing
		}
		if !cmd {
			b = append(b, 'l')
			b = appendTenths(b, x-x0)
			cmd = true
		} else {
			b = appendNext(b, x-x0)
		}
		b = appendNext(b, y-y0)
		x0, y0 = x, y
	}
	return string(b)
}

// coord writes a position in user units to a tenth, as briefly as SVG
// reads it: 58, 19.5, .5, -.5.
func coord(v float64) string {
	if !finite(v) {
		return strconv.FormatFloat(v, 'f', 1, 64)
	}
	return string(appendTenths(nil, tenthsOf(v)))
}

// tenthsOf is v rounded to a tenth, as a count of tenths, rounded as
// strconv rounds to one decimal (the decimal nearest to v's exact value).
func tenthsOf(v float64) int64 {
	var buf [32]byte
	var n int64
	neg := false
	for _, ch := range strconv.AppendFloat(buf[:0], v, 'f', 1, 64) {
		switch {
		case ch == '-':
			neg = true
		case ch >= '0' && ch <= '9':
			n = n*10 + int64(ch-'0')
		}
	}
	if neg {
		return -n
	}
	return n
}

// appendTenths writes n tenths in the fewest characters.
func appendTenths(b []byte, n int64) []byte {
	if n < 0 {
		b = append(b, '-')
		n = -n
	}
	if n >= 10 || n == 0 {
		b = strconv.AppendInt(b, n/10, 10)
	}
	if r := n % 10; r != 0 {
		b = append(b, '.', byte('0'+r))
	}
	return b
}

// appendNext writes the next number of a list: a minus sign separates
// it by itself, any other number takes a space.
func appendNext(b []byte, n int64) []byte {
	if n >= 0 {
		b = append(b, ' ')
	}
	return appendTenths(b, n)
}

// gridPath is the grid as one path: a horizontal line at each y tick and a
// vertical one at each x tick, across the plot.
func gridPath(left, right, top, bottom float64, xTicks, yTicks []Tick) string {
	var b strings.Builder
	for _, t := range yTicks {
		b.WriteString("M" + coord(left) + " " + coord(t.Pos) + "H" + coord(right))
	}
	for _, t := range xTicks {
		b.WriteString("M" + coord(t.Pos) + " " + coord(top) + "V" + coord(bottom))
	}
	return b.String()
}

// barsPath is the histogram's bars as one path of closed rectangles, each
// the one its Bar gives, to a tenth.
func barsPath(bars []Bar) string {
	var b strings.Builder
	for _, r := range bars {
		b.WriteString("M" + coord(r.X) + " " + coord(r.Y) + "h" + coord(r.W) + "v" + coord(r.H) + "h" + coord(-r.W) + "z")
	}
	return b.String()
}

// niceTicks returns tick values at a 1, 2 or 5 × 10ⁿ step covering
// [lo, hi] with about n ticks, and the axis range: the outer ticks, or the
// data range itself when tight is set (a time axis starts and ends with
// the data).
func niceTicks(lo, hi float64, n int, tight bool) (ticks []float64, a0, a1 float64) {
	step := niceStep((hi - lo) / float64(n))
	a0, a1 = lo, hi
	if !tight {
		a0, a1 = math.Floor(lo/step)*step, math.Ceil(hi/step)*step
	}
	for k := math.Ceil(a0/step - 1e-9); k*step <= a1+step*1e-9; k++ {
		v := k * step
		if math.Abs(v) < step*1e-9 {
			v = 0
		}
		ticks = append(ticks, v)
	}
	return ticks, a0, a1
}

func niceStep(raw float64) float64 {
	if !(raw > 0) || !finite(raw) {
		return 1
	}
	p := math.Pow10(int(math.Floor(math.Log10(raw))))
	for _, m := range []float64{1, 2, 5, 10} {
		if raw <= m*p {
			return m * p
		}
	}
	return 10 * p
}

// tickLabel formats a tick with as many decimals as the step needs.
func tickLabel(v float64, ticks []float64) string {
	dec := 0
	if len(ticks) > 1 {
		step := ticks[1] - ticks[0]
		dec = max(0, int(math.Ceil(-math.Log10(step)-1e-9)))
	}
	return figures.Fixed(v, dec)
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

func minOf(xs []float64) float64 {
	m := math.Inf(1)
	for _, x := range xs {
		m = min(m, x)
	}
	return m
}

func maxOf(xs []float64) float64 {
	m := math.Inf(-1)
	for _, x := range xs {
		m = max(m, x)
	}
	return m
}
