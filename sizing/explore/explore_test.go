package explore_test

import (
	"bytes"
	"encoding/csv"
	"math"
	"os"
	"strconv"
	"testing"

	"capbank/sizing"
	"capbank/sizing/explore"
)

func demoDesign(t testing.TB, name string) *sizing.Design {
	t.Helper()
	f, err := os.Open("../../testdata/" + name)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	d, err := sizing.DecodeDesign(f)
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	return d
}

// figure reads a point's objective straight from its fields, better
// meaning smaller (life and margin negated); a figure the point lacks is
// +Inf. Written apart from explore.Value so that the check does not lean
// on the code it checks.
func figure(p explore.Point, key string) float64 {
	opt := func(x *float64, sign float64) float64 {
		if x == nil {
			return math.Inf(1)
		}
		return sign * *x
	}
	switch key {
	case "price":
		return opt(p.Price, 1)
	case "mass_kg":
		return opt(p.MassKg, 1)
	case "volume_l":
		return opt(p.VolumeL, 1)
	case "life_years":
		return opt(p.LifeYears, -1)
	case "margin_pct":
		return opt(p.MarginPct, -1)
	case "standing_loss_w":
		return p.StandingLossW
	case "rise_k":
		return opt(p.RiseK, 1)
	}
	panic("unknown objective " + key)
}

// dominatedBy reports whether b dominates a: no worse on every objective,
// better on one.
func dominatedBy(a, b explore.Point, objectives []string) bool {
	better := false
	for _, o := range objectives {
		fa, fb := figure(a, o), figure(b, o)
		if fb > fa {
			return false
		}
		if fb < fa {
			better = true
		}
	}
	return better
}

// TestFrontBruteForce: on three demo designs and two sets of objectives,
// every front point is feasible and dominated by no other feasible point,
// every other feasible point is dominated by one, the pareto marks are the
// front, and the front's indexes ascend. Checked by comparing every pair.
func TestFrontBruteForce(t *testing.T) {
	t.Parallel()
	for _, name := range []string{"ups-ride-through.json", "actuator-pulses.json", "agv-regen-buffer.json"} {
		for _, objectives := range [][]string{nil, {"price", "margin_pct", "rise_k", "standing_loss_w"}} {
			d := demoDesign(t, name)
			r, err := explore.Explore(t.Context(), d, explore.Options{Objectives: objectives})
			if err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			ex := r.Explore
			if objectives == nil {
				objectives = sizing.DefaultObjectives
			}
			onFront := map[int]bool{}
			for k, i := range ex.Front {
				onFront[i] = true
				if k > 0 && ex.Front[k-1] >= i {
					t.Errorf("%s: front %v does not ascend", name, ex.Front)
				}
			}
			if len(ex.Front) == 0 {
				t.Errorf("%s: empty front over %d points", name, len(ex.Points))
			}
			for i, p := range ex.Points {
				if p.Pareto != onFront[i] {
					t.Errorf("%s: point %d pareto %v, in front %v", name, i, p.Pareto, onFront[i])
				}
				if !p.Feasible {
					if onFront[i] {
						t.Errorf("%s: infeasible point %d on the front", name, i)
					}
					continue
				}
				dominated := -1
				for j, q := range ex.Points {
					if j != i && q.Feasible && dominatedBy(p, q, objectives) {
						dominated = j
						break
					}
				}
				if onFront[i] && dominated >= 0 {
					t.Errorf("%s %v: front point %d (%s ×%d) is dominated by point %d (%s ×%d)", name, objectives, i, p.CellID, p.Series, dominated, ex.Points[dominated].CellID, ex.Points[dominated].Series)
				}
				if !onFront[i] && dominated < 0 {
					t.Errorf("%s %v: point %d (%s ×%d) is off the front but no point dominates it", name, objectives, i, p.CellID, p.Series)
				}
			}
		}
	}
}

// TestMoreSeriesMonotone: for each cell at the same window, each more cell
// in series lowers the per-cell voltage to max_v/series exactly, and never
// shortens the expected life (the voltage rule doubles it per 0.2 V lower,
// and more series never adds current per cell: REFERENCES.md 4.3).
func TestMoreSeriesMonotone(t *testing.T) {
	t.Parallel()
	for _, name := range []string{"ups-ride-through.json", "actuator-pulses.json", "agv-regen-buffer.json"} {
		d := demoDesign(t, name)
		r, err := explore.Explore(t.Context(), d, explore.Options{})
		if err != nil {
			t.Fatal(err)
		}
		last := map[string]explore.Point{}
		counts := map[string]int{}
		for _, p := range r.Explore.Points {
			counts[p.CellID]++
			if want := r.MaxV / float64(p.Series); math.Abs(p.CellV-want) > 1e-12*want {
				t.Errorf("%s %s ×%d: cell_v %g, want %g", name, p.CellID, p.Series, p.CellV, want)
			}
			prev, ok := last[p.CellID]
			last[p.CellID] = p
			if !ok {
				continue
			}
			if p.Series <= prev.Series || !(p.CellV < prev.CellV) {
				t.Errorf("%s %s: series %d → %d, cell_v %g → %g; want more series and less voltage", name, p.CellID, prev.Series, p.Series, prev.CellV, p.CellV)
			}
			if prev.LifeYears != nil && p.LifeYears != nil && *p.LifeYears < *prev.LifeYears*(1-1e-12) {
				t.Errorf("%s %s: life %g years at %d in series, shorter than %g at %d", name, p.CellID, *p.LifeYears, p.Series, *prev.LifeYears, prev.Series)
			}
		}
		for id, n := range counts {
			if n != 1+sizing.DefaultExtraSeries {
				t.Errorf("%s %s: %d series counts, want the least and %d more", name, id, n, sizing.DefaultExtraSeries)
			}
		}
	}
}

// TestExploreCSV: the CSV has the header of the points' JSON keys and one
// row per point with its figures in full.
func TestExploreCSV(t *testing.T) {
	t.Parallel()
	r, err := explore.Explore(t.Context(), demoDesign(t, "actuator-pulses.json"), explore.Options{})
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := explore.WriteCSV(&buf, r); err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(&buf).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 1+len(r.Explore.Points) {
		t.Fatalf("%d rows, want a header and %d points", len(rows), len(r.Explore.Points))
	}
	for k, key := range explore.CSVHeader {
		if rows[0][k] != key {
			t.Errorf("header column %d %q, want %q", k, rows[0][k], key)
		}
	}
	for i, p := range r.Explore.Points {
		row := rows[i+1]
		if row[0] != p.CellID || row[1] != strconv.Itoa(p.Series) || row[2] != strconv.Itoa(p.Parallel) {
			t.Errorf("row %d %v, point %s ×%d ×%d", i, row[:3], p.CellID, p.Series, p.Parallel)
		}
		if v, err := strconv.ParseFloat(row[3], 64); err != nil || v != p.CellV {
			t.Errorf("row %d cell_v %q, want %v exactly", i, row[3], p.CellV)
		}
		if row[13] != strconv.FormatBool(p.Pareto) {
			t.Errorf("row %d pareto %q, want %v", i, row[13], p.Pareto)
		}
	}
}

// TestExploreRefusesBadObjectives: an objective that is not a figure is
// refused by field.
func TestExploreRefusesBadObjectives(t *testing.T) {
	t.Parallel()
	_, err := explore.Explore(t.Context(), demoDesign(t, "actuator-pulses.json"), explore.Options{Objectives: []string{"price", "colour"}})
	ve, ok := err.(sizing.ValidationError)
	if !ok || len(ve) != 1 || ve[0].Field != "explore.objectives[1]" {
		t.Fatalf("want one problem on explore.objectives[1], got %v", err)
	}
}
