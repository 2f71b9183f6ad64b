package components

import (
	"math"
	"sort"
	"strconv"

	"capbank/components/figures"
)

// CompareProps is the side-by-side comparison of candidate cells for one
// design.
type CompareProps struct {
	Shell ShellProps
	// Design names the design compared for, and Summary describes it.
	Design, Summary string
	// Token is the design's share token, carried by the picker so the
	// comparison stays for the same design; DesignHref opens the design.
	Token, DesignHref string
	// Picks are the library's cells, those compared marked.
	Picks []CellPickProps
	// Message is a problem with the choice of cells ("" when fine);
	// MessageID its slot.
	Message, MessageID string
	// Columns are the cells compared, in order.
	Columns []CompareColumn
	// Groups are the rows, grouped ("The bank for this design", "The cell
	// on its own").
	Groups []CompareGroup
	// Chart is the energy–power chart of the feasible banks; nil when
	// fewer than one bank is feasible.
	Chart *ScatterChart
}

// CompareColumn is one compared cell.
type CompareColumn struct {
	ID, Name, Href string
	Feasible       bool
	Reason         string
}

// CompareGroup is a titled group of rows.
type CompareGroup struct {
	Title string
	Rows  []CompareFigureRow
}

// CompareFigureRow is one figure across the compared cells; Better says which
// way is best ("lower" or "higher"; "" for no best).
type CompareFigureRow struct {
	Label, Better string
	Cells         []CompareFigure
}

// CompareFigure is one figure of one cell; Best marks the best of its row.
type CompareFigure struct {
	Text string
	Best bool
}

// ScatterPoint is one labelled point of a scatter chart, in data units.
type ScatterPoint struct {
	Label string
	X, Y  float64
}

// ScatterChart is a log-log scatter chart laid out for SVG.
type ScatterChart struct {
	ID, Title, Desc string
	XLabel, YLabel  string
	W, H            float64
	Left, Right     float64
	Top, Bottom     float64
	XTicks, YTicks  []Tick
	Points          []PlacedPoint
}

// PlacedPoint is a scatter point in SVG coordinates, with its label.
type PlacedPoint struct {
	Label string
	X, Y  float64
	// LabelY is where its label's baseline goes, moved clear of the
	// others' labels.
	LabelY float64
	// Value is the point's figures, for its tooltip.
	Value string
}

// LogLogChart lays out points (all X, Y > 0) on decade axes that cover
// them with at least half a decade of margin.
func LogLogChart(id, title, desc, xLabel, yLabel string, pts []ScatterPoint, xUnit, yUnit string) *ScatterChart {
	c := &ScatterChart{ID: id, Title: title, Desc: desc, XLabel: xLabel, YLabel: yLabel,
		W: 640, H: 380, Left: 70, Right: 620, Top: 16, Bottom: 330}
	if len(pts) == 0 {
		return nil
	}
	lx0, lx1 := math.Inf(1), math.Inf(-1)
	ly0, ly1 := math.Inf(1), math.Inf(-1)
	for _, p := range pts {
		lx0, lx1 = math.Min(lx0, math.Log10(p.X)), math.Max(lx1, math.Log10(p.X))
		ly0, ly1 = math.Min(ly0, math.Log10(p.Y)), math.Max(ly1, math.Log10(p.Y))
	}
	x0, x1 := math.Floor(lx0-0.5), math.Ceil(lx1+0.5)
	y0, y1 := math.Floor(ly0-0.5), math.Ceil(ly1+0.5)
	sx := func(v float64) float64 { return c.Left + (math.Log10(v)-x0)/(x1-x0)*(c.Right-c.Left) }
	sy := func(v float64) float64 { return c.Bottom - (math.Log10(v)-y0)/(y1-y0)*(c.Bottom-c.Top) }
	for e := x0; e <= x1; e++ {
		v := math.Pow(10, e)
		c.XTicks = append(c.XTicks, Tick{Pos: sx(v), Label: figures.SI(v, xUnit, 3)})
	}
	for e := y0; e <= y1; e++ {
		v := math.Pow(10, e)
		c.YTicks = append(c.YTicks, Tick{Pos: sy(v), Label: figures.SI(v, yUnit, 3)})
	}
	for _, p := range pts {
		x, y := sx(p.X), sy(p.Y)
		c.Points = append(c.Points, PlacedPoint{Label: p.Label, X: x, Y: y, LabelY: y - 6,
			Value: p.Label + ": " + figures.SI(p.X, xUnit, 3) + ", " + figures.SI(p.Y, yUnit, 3)})
	}
	spreadLabels(c.Points)
	return c
}

// labelGap is the least vertical distance between two labels that could
// overlap side by side, in SVG units (an 11 px font).
const labelGap = 13

// spreadLabels moves labels down, top to bottom, until no two whose text
// could overlap (starting within 120 units of each other across) are
// closer than labelGap.
func spreadLabels(pts []PlacedPoint) {
	order := make([]int, len(pts))
	for i := range order {
		order[i] = i
	}
	sort.Slice(order, func(a, b int) bool { return pts[order[a]].LabelY < pts[order[b]].LabelY })
	for k, i := range order {
		for _, j := range order[:k] {
			if math.Abs(pts[i].X-pts[j].X) < 120 && pts[i].LabelY-pts[j].LabelY < labelGap {
				pts[i].LabelY = pts[j].LabelY + labelGap
			}
		}
	}
}

func ftoa(v float64) string { return strconv.FormatFloat(v, 'f', 1, 64) }
