package cellmodel

import (
	"math"
	"testing"
)

type decay struct{ rate float64 }

func (d decay) Derivative(_ float64, y, dy []float64) { dy[0] = -d.rate * y[0] }

type oscillator struct{}

func (oscillator) Derivative(_ float64, y, dy []float64) { dy[0], dy[1] = y[1], -y[0] }

// TestDormandPrinceAgainstExactSolutions integrates y' = −y and the
// harmonic oscillator and compares the step ends, the dense output between
// them and a located event with the exact solutions (calculus: e^(−t),
// cos t and sin t; the event y = 1/2 of e^(−t) is at t = ln 2).
func TestDormandPrinceAgainstExactSolutions(t *testing.T) {
	t.Parallel()
	const tol = 1e-9
	t.Run("decay and dense output", func(t *testing.T) {
		it := newIntegrator(1, Tolerances{})
		y := []float64{1}
		worst := 0.0
		buf := []float64{0}
		r, err := it.solve(decay{1}, y, 0, 5, nil, func(s *Step, tEnd float64) {
			for _, th := range []float64{0.1, 0.37, 0.5, 0.81} {
				tt := s.T0 + th*(tEnd-s.T0)
				s.At(tt, buf)
				worst = math.Max(worst, math.Abs(buf[0]-math.Exp(-tt))/math.Exp(-tt))
			}
		})
		if err != nil {
			t.Fatal(err)
		}
		if r.t != 5 || r.event != -1 {
			t.Fatalf("stopped at %g (event %d), want 5 (none)", r.t, r.event)
		}
		// Exact: e^(−5).
		if rel := math.Abs(y[0]-math.Exp(-5)) / math.Exp(-5); rel > tol {
			t.Errorf("y(5) = %.15g, want e^-5 = %.15g (rel %.2e)", y[0], math.Exp(-5), rel)
		}
		if worst > tol {
			t.Errorf("dense output off by %.2e relative, want ≤ %g", worst, tol)
		}
	})
	t.Run("event", func(t *testing.T) {
		it := newIntegrator(1, Tolerances{})
		y := []float64{1}
		half := func(_ float64, y []float64) float64 { return y[0] - 0.5 }
		r, err := it.solve(decay{1}, y, 0, 5, []Event{half}, nil)
		if err != nil {
			t.Fatal(err)
		}
		// Exact: ln 2.
		if r.event != 0 || math.Abs(r.t-math.Ln2) > tol*math.Ln2 {
			t.Errorf("event %d at %.15g, want 0 at ln 2 = %.15g", r.event, r.t, math.Ln2)
		}
	})
	t.Run("oscillator", func(t *testing.T) {
		it := newIntegrator(2, Tolerances{})
		y := []float64{1, 0}
		if _, err := it.solve(oscillator{}, y, 0, 20, nil, nil); err != nil {
			t.Fatal(err)
		}
		// Exact: (cos 20, −sin 20).
		if d := math.Hypot(y[0]-math.Cos(20), y[1]+math.Sin(20)); d > tol {
			t.Errorf("y(20) = %v, want (%g, %g): off by %.2e", y, math.Cos(20), -math.Sin(20), d)
		}
	})
}

// TestDormandPrinceTableau checks the coefficients against the order
// conditions they must meet (Hairer, Nørsett, Wanner, Solving ODEs I,
// §II.5): row sums equal the nodes, the fifth-order weights sum to 1 and
// integrate t⁴ exactly, the error weights sum to 0, and the dense output
// at θ = 1 is the fifth-order solution.
func TestDormandPrinceTableau(t *testing.T) {
	t.Parallel()
	const tol = 1e-14
	for i := 1; i < 7; i++ {
		sum := 0.0
		for j := range i {
			sum += dpA[i][j]
		}
		if math.Abs(sum-dpC[i]) > tol {
			t.Errorf("row %d sums to %.17g, want c = %.17g", i, sum, dpC[i])
		}
	}
	b, e, t4 := 0.0, 0.0, 0.0
	for j := range 7 {
		b += dpA[6][j%6] * boolF(j < 6)
		e += dpE[j]
		t4 += dpA[6][j%6] * boolF(j < 6) * math.Pow(dpC[j], 4)
		dense := dpP[j][0] + dpP[j][1] + dpP[j][2] + dpP[j][3]
		want := 0.0
		if j < 6 {
			want = dpA[6][j]
		}
		if math.Abs(dense-want) > tol {
			t.Errorf("dense weight %d at θ = 1 is %.17g, want %.17g", j, dense, want)
		}
	}
	if math.Abs(b-1) > tol || math.Abs(e) > tol || math.Abs(t4-1.0/5) > tol {
		t.Errorf("Σb = %.17g (want 1), Σe = %.3g (want 0), Σb·c⁴ = %.17g (want 1/5)", b, e, t4)
	}
}

func boolF(b bool) float64 {
	if b {
		return 1
	}
	return 0
}
