package components

import (
	"bytes"
	"context"
	"math"
	"math/rand/v2"
	"reflect"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/PuerkitoBio/goquery"

	"capbank/sizing"
)

func TestNiceTicks(t *testing.T) {
	t.Parallel()
	// 1-2-5 steps, worked by hand.
	cases := []struct {
		lo, hi float64
		n      int
		tight  bool
		want   []float64
		a0, a1 float64
	}{
		{21, 42, 5, false, []float64{20, 25, 30, 35, 40, 45}, 20, 45},
		{0, 34, 6, true, []float64{0, 10, 20, 30}, 0, 34}, // 34/6 = 5.7 rounds up to a step of 10
		{-2, 147, 5, false, []float64{-50, 0, 50, 100, 150}, -50, 150},
		{30, 30.25, 5, false, []float64{30, 30.05, 30.1, 30.15, 30.2, 30.25}, 30, 30.25},
	}
	for _, c := range cases {
		got, a0, a1 := niceTicks(c.lo, c.hi, c.n, c.tight)
		for i := range got {
			got[i] = math.Round(got[i]*1e9) / 1e9
		}
		if !c.tight {
			if a0 > c.lo || a1 < c.hi {
				t.Errorf("niceTicks(%g, %g) range [%g, %g] misses the data", c.lo, c.hi, a0, a1)
			}
		}
		if !reflect.DeepEqual(got, c.want) || math.Abs(a0-c.a0) > 1e-9 || math.Abs(a1-c.a1) > 1e-9 {
			t.Errorf("niceTicks(%g, %g, %d) = %v [%g, %g], want %v [%g, %g]", c.lo, c.hi, c.n, got, a0, a1, c.want, c.a0, c.a1)
		}
	}
}

// Thinning keeps every column's extremes: a one-sample spike survives.
func TestPointsKeepSpikes(t *testing.T) {
	t.Parallel()
	n := 20000
	tm, v := make([]float64, n), make([]float64, n)
	for i := range n {
		tm[i] = float64(i) * 0.001
		v[i] = 10
	}
	v[12345] = 50
	c := &sizing.Curve{TimeS: tm, TerminalV: v, CapacitorV: v, CurrentA: v, MaxV: 60, MinV: 5}
	ch := CurrentChart(c)
	pts := pathPoints(t, ch.Series[0].Path)
	if len(pts) >= n/4 {
		t.Errorf("%d points kept of %d; want far fewer", len(pts), n)
	}
	top := math.Inf(1)
	for _, p := range pts {
		top = min(top, p[1])
	}
	if want := ch.y(50); math.Abs(top-want) > 0.1 {
		t.Errorf("highest point at y=%g, want the spike at %g", top, want)
	}
}

func TestVoltageChartRenders(t *testing.T) {
	t.Parallel()
	c := &sizing.Curve{TimeS: []float64{0, 10, 20}, TerminalV: []float64{47, 40, 30}, CapacitorV: []float64{48, 42, 33},
		CurrentA: []float64{10, 12, 15}, TemperatureC: []float64{25, 26, 27}, MaxV: 48, MinV: 24}
	var buf bytes.Buffer
	if err := Charts(c).Render(context.Background(), &buf); err != nil {
		t.Fatal(err)
	}
	doc, err := goquery.NewDocumentFromReader(&buf)
	if err != nil {
		t.Fatal(err)
	}
	for id, labels := range map[string][]string{
		"voltage":     {"Time (s)", "Voltage (V)", "window top 48\u00a0V", "window bottom 24\u00a0V"},
		"current":     {"Time (s)", "Current (A)"},
		"temperature": {"Time (s)", "Temperature (°C)"},
	} {
		svg := doc.Find("[data-testid=chart-" + id + "] svg").First()
		if svg.Length() == 0 {
			t.Errorf("no %s chart", id)
			continue
		}
		text := svg.Find("text").Text()
		for _, l := range labels {
			if !strings.Contains(text, l) {
				t.Errorf("%s chart lacks %q", id, l)
			}
		}
		if svg.Find(".y-ticks text").Length() < 3 || svg.Find(".x-ticks text").Length() < 3 {
			t.Errorf("%s chart has too few ticks", id)
		}
	}
	// Without a temperature trace there is no temperature chart.
	c.TemperatureC = nil
	buf.Reset()
	Charts(c).Render(context.Background(), &buf)
	if strings.Contains(buf.String(), "chart-temperature") {
		t.Error("a temperature chart without temperatures")
	}
}

// A rise of a fraction of a millikelvin is drawn on an axis of at least
// 1 K, with tick labels of at most one decimal.
func TestTemperatureChartMinimumSpan(t *testing.T) {
	c := &sizing.Curve{TimeS: []float64{0, 10, 20}, TemperatureC: []float64{30, 30.0002, 30.0001}}
	ch, ok := TemperatureChart(c)
	if !ok {
		t.Fatal("no chart")
	}
	if span := ch.sc.y1 - ch.sc.y0; span < minTempSpanK {
		t.Errorf("axis spans %g K, want at least %g K", span, minTempSpanK)
	}
	for _, tk := range ch.YTicks {
		if len(tk.Label) > 4 {
			t.Errorf("tick label %q is longer than a temperature to one decimal", tk.Label)
		}
	}
}

// A histogram's chart never writes NaN: a reference line without a value
// is left out, and a single value gets an axis around it.
func TestHistogramChartFinite(t *testing.T) {
	h := sizing.Histogram{Lo: 2.5, Hi: 2.5, Counts: make([]int, sizing.HistogramBins)}
	h.Counts[sizing.HistogramBins-1] = 100
	ch := HistogramChart("x", "t", "d", "V", h, 1, []RefLine{{Y: math.NaN(), Label: "none"}, {Y: 2.7, Label: "rated"}})
	if len(ch.VRefs) != 1 || len(ch.Bars) != 1 {
		t.Fatalf("refs %v, bars %v", ch.VRefs, ch.Bars)
	}
	for _, v := range []float64{ch.VRefs[0].Y, ch.Bars[0].X, ch.Bars[0].W, ch.Bars[0].Y, ch.Bars[0].H} {
		if !finite(v) {
			t.Fatalf("chart %+v", ch)
		}
	}
	if ch.Bars[0].W < 3 {
		t.Errorf("bar %v units wide, want at least 3", ch.Bars[0].W)
	}
}

// An empty histogram (no finite value) still draws finite axes.
func TestHistogramChartEmpty(t *testing.T) {
	ch := HistogramChart("x", "t", "d", "V", sizing.Histogram{Counts: make([]int, sizing.HistogramBins)}, 1, []RefLine{{Y: 0, Label: "zero"}})
	if len(ch.VRefs) != 1 || !finite(ch.VRefs[0].Y) {
		t.Fatalf("refs %+v", ch.VRefs)
	}
}

// pathPoints reads path data as pathData writes it (M x y, then l and
// relative pairs) back into absolute points.
func pathPoints(t *testing.T, d string) [][2]float64 {
	t.Helper()
	var nums []float64
	var cmds []byte
	tok := regexp.MustCompile(`[Ml]|-?(\d+\.?\d*|\.\d+)`)
	for _, m := range tok.FindAllString(d, -1) {
		if m == "M" || m == "l" {
			cmds = append(cmds, m[0])
			continue
		}
		f, err := strconv.ParseFloat(m, 64)
		if err != nil {
			t.Fatalf("path %q: %v", d, err)
		}
		nums = append(nums, f)
	}
	if len(nums)%2 != 0 || len(cmds) == 0 || cmds[0] != 'M' || len(cmds) > 2 {
		t.Fatalf("path %q is not M x y l dx dy…", d)
	}
	pts := [][2]float64{{nums[0], nums[1]}}
	for i := 2; i < len(nums); i += 2 {
		p := pts[len(pts)-1]
		pts = append(pts, [2]float64{p[0] + nums[i], p[1] + nums[i+1]})
	}
	return pts
}

// The relative path passes through the points rounded to a tenth, as the
// absolute coordinates coord writes, with no rounding built up along a
// long curve (20 000 points of random steps).
func TestPathDataIsExactToATenth(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(23, 1))
	n := 20000
	xs, ys := make([]float64, n), make([]float64, n)
	x, y := 58.0, 120.0
	for i := range n {
		x += rng.Float64() * 0.03
		y += (rng.Float64() - 0.5) * 7
		xs[i], ys[i] = x, y
	}
	xs[17], ys[17] = xs[16], ys[16] // a repeated point draws nothing
	// What coord writes of each point, a point that rounds as the one
	// before it left out.
	var want [][2]float64
	for i := range n {
		wx, _ := strconv.ParseFloat(strconv.FormatFloat(xs[i], 'f', 1, 64), 64)
		wy, _ := strconv.ParseFloat(strconv.FormatFloat(ys[i], 'f', 1, 64), 64)
		if k := len(want); k == 0 || want[k-1] != [2]float64{wx, wy} {
			want = append(want, [2]float64{wx, wy})
		}
	}
	got := pathPoints(t, pathData(xs, ys))
	if len(got) != len(want) || len(want) < n*9/10 {
		t.Fatalf("%d points, want %d (of %d)", len(got), len(want), n)
	}
	for k := range want {
		// Sums of tenths in float64: equal within 1e-9 of a unit.
		if math.Abs(got[k][0]-want[k][0]) > 1e-9 || math.Abs(got[k][1]-want[k][1]) > 1e-9 {
			t.Fatalf("point %d at %v, want %v", k, got[k], want[k])
		}
	}
	for _, c := range []struct {
		v    float64
		want string
	}{{58, "58"}, {19.54, "19.5"}, {0.46, ".5"}, {-0.46, "-.5"}, {-0.04, "0"}, {206.05, "206.1"}, {-12.3, "-12.3"}} {
		if got := coord(c.v); got != c.want {
			t.Errorf("coord(%g) = %q, want %q", c.v, got, c.want)
		}
	}
}
