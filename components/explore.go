package components

import (
	"math"
	"strconv"

	"capbank/components/figures"
	"capbank/sizing"
	"capbank/sizing/explore"
)

// ExploreProps is the explorer page: the design, the choices of the
// chart's axes and of the front's objectives, the scatter chart, the
// front's table and the links to every point's design.
type ExploreProps struct {
	Shell ShellProps
	// Design names the design; DesignHref goes back to it.
	Design, DesignHref string
	// Token is the share token of the design explored ("" for the
	// example); Library is true when every library cell is explored.
	Token   string
	Library bool
	// Message says why nothing is shown (a design that does not size).
	Message string
	Summary string
	// X and Y are the chart's objectives; Objectives the front's.
	X, Y       string
	Objectives []ExploreChoice
	Axes       []ExploreChoice
	Scatter    *Scatter
	// Head is the front table's header, with its sort links; Rows the
	// front's points in the chosen order.
	Head    []ExploreHead
	Rows    []ExploreRow
	CSVHref string
}

// ExploreChoice is one objective offered: its key, label and whether it
// is chosen.
type ExploreChoice struct {
	Key, Label string
	On         bool
}

// ExploreHead is a column heading of the front's table with the link that
// sorts by it; Sorted is "ascending", "descending" or "" (aria-sort).
type ExploreHead struct {
	Label, Href, Sorted string
}

// ExploreRow is one front point as the table shows it, with the link that
// opens its design on the design page (OpenHref, "" when the page cannot
// hold it) and the link to its design file.
type ExploreRow struct {
	Cells              []string
	OpenHref, FileHref string
	Why                string
}

// Scatter is a scatter chart of the points on two objectives.
type Scatter struct {
	Chart
	Dots []Dot
}

// Dot is one point of a Scatter: its position, whether it is on the
// front, its tooltip and the link that opens it.
type Dot struct {
	X, Y  float64
	Front bool
	Title string
	Href  string
}

// ExploreScatter places the feasible points that give both figures on
// the x and y objectives; hrefs gives each point's link by its index.
func ExploreScatter(r *explore.Result, x, y string, hrefs []string) *Scatter {
	var xs, ys []float64
	var idx []int
	for i := range r.Explore.Points {
		p := &r.Explore.Points[i]
		if !p.Feasible {
			continue
		}
		vx, okx := explore.Value(p, x)
		vy, oky := explore.Value(p, y)
		if !okx || !oky {
			continue
		}
		xs, ys, idx = append(xs, orient(vx, x)), append(ys, orient(vy, y)), append(idx, i)
	}
	if len(idx) == 0 {
		return nil
	}
	lo, hi := span(xs)
	ylo, yhi := span(ys)
	ch := Chart{ID: "explore", Title: ExploreObjectiveLabel(y) + " against " + ExploreObjectiveLabel(x),
		Desc:   "Each dot is one bank: a cell at one series count with its fewest strings. Filled dots are on the front.",
		XLabel: axisLabel(x, r.Currency), YLabel: axisLabel(y, r.Currency),
		W: chartW, H: chartH + 40, Left: chartLeft, Right: chartW - chartRight, Top: chartTop, Bottom: chartH + 40 - chartBottom, Zero: -1}
	xt, x0, x1 := niceTicks(lo, hi, 5, false)
	yt, y0, y1 := niceTicks(ylo, yhi, 5, false)
	ch.sc = scale{x0: x0, x1: x1, y0: y0, y1: y1, tScale: 1}
	ch.setTicks(xt, yt)
	s := &Scatter{Chart: ch}
	for k, i := range idx {
		p := &r.Explore.Points[i]
		s.Dots = append(s.Dots, Dot{X: ch.xu(xs[k]), Y: ch.y(ys[k]), Front: p.Pareto, Href: hrefs[i],
			Title: p.CellID + ", " + strconv.Itoa(p.Series) + " in series × " + strconv.Itoa(p.Parallel) + " strings: " +
				ExploreObjectiveLabel(x) + " " + figureText(xs[k], x, r.Currency) + ", " + ExploreObjectiveLabel(y) + " " + figureText(ys[k], y, r.Currency)})
	}
	// Front dots last, so they are drawn on top.
	front := s.Dots[:0:0]
	for _, d := range s.Dots {
		if !d.Front {
			front = append(front, d)
		}
	}
	for _, d := range s.Dots {
		if d.Front {
			front = append(front, d)
		}
	}
	s.Dots = front
	return s
}

// orient undoes Value's sign for an objective where more is better, so
// the chart shows the figure itself.
func orient(v float64, key string) float64 {
	if sizing.Objectives[key] {
		return -v
	}
	return v
}

func span(xs []float64) (float64, float64) {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, x := range xs {
		lo, hi = min(lo, x), max(hi, x)
	}
	if !(hi > lo) {
		pad := max(math.Abs(lo)*0.05, 0.5)
		lo, hi = lo-pad, hi+pad
	}
	return lo, hi
}

// axisUnits are the units of each objective's axis.
var axisUnits = map[string]string{"mass_kg": "kg", "volume_l": "L", "life_years": "years", "margin_pct": "%", "standing_loss_w": "W", "rise_k": "K"}

func axisLabel(key, currency string) string {
	u := axisUnits[key]
	if key == "price" {
		u = currency
	}
	if u == "" {
		return ExploreObjectiveLabel(key)
	}
	return ExploreObjectiveLabel(key) + " (" + u + ")"
}

func figureText(v float64, key, currency string) string {
	switch key {
	case "price":
		if currency != "" {
			return figures.Money(v) + " " + currency
		}
		return figures.Money(v)
	case "mass_kg":
		return figures.SI(v, "kg", 3)
	case "volume_l":
		return figures.SI(v, "L", 3)
	case "standing_loss_w":
		return figures.SI(v, "W", 3)
	case "rise_k":
		return figures.Kelvin(v)
	case "margin_pct":
		return figures.Fixed(v, 1) + " %"
	}
	return figures.Number(v, 3) + " " + axisUnits[key]
}
