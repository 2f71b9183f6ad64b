package cellmodel_test

import (
	"context"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"capbank/sizing/cellmodel"
)

// These tests run the same circuit in ngspice, an independent circuit
// simulator, and compare the terminal voltage at ten instants and the
// runtime to the window bottom with capbank's integrator. Cells and
// profiles are invented test data; no datasheet is quoted.

// ngspiceRelTol is the agreement required: 0.1 %, the acceptance criterion
// of the check.
const ngspiceRelTol = 1e-3

func ngspiceOrSkip(t *testing.T) string {
	t.Helper()
	path, err := exec.LookPath("ngspice")
	if err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("ngspice is not on PATH (%v); CI=true requires this check to run: install ngspice", err)
		}
		t.Skipf("ngspice is not on PATH (%v): skipping the circuit-simulator check (install ngspice to run it)", err)
	}
	return path
}

var measRE = regexp.MustCompile(`(?m)^\s*([a-z]\w*)\s*=\s*([-+]?[0-9.]+(?:[eE][-+]?[0-9]+)?)`)

func runNgspice(t *testing.T, bin, netlist string, want []string) map[string]float64 {
	t.Helper()
	dir := t.TempDir()
	file := filepath.Join(dir, "bench.cir")
	if err := os.WriteFile(file, []byte(netlist), 0o644); err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithTimeout(context.Background(), 120*time.Second)
	defer cancel()
	cmd := exec.CommandContext(ctx, bin, "-b", file)
	cmd.Dir = dir
	out, err := cmd.CombinedOutput()
	if ctx.Err() != nil {
		t.Fatalf("ngspice did not finish: %v", ctx.Err())
	}
	if err != nil {
		t.Fatalf("ngspice: %v\n%s\nnetlist:\n%s", err, out, netlist)
	}
	got := map[string]float64{}
	for _, m := range measRE.FindAllStringSubmatch(string(out), -1) {
		if x, err := strconv.ParseFloat(m[2], 64); err == nil {
			got[m[1]] = x
		}
	}
	for _, k := range want {
		if _, ok := got[k]; !ok {
			t.Fatalf("ngspice gave no measurement %q\n%s\nnetlist:\n%s", k, out, netlist)
		}
	}
	return got
}

func num(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

// profileStep is one step of a test profile: a load for a duration.
type profileStep struct {
	load cellmodel.Load
	durS float64
}

// runProfile repeats steps until the window bottom (or a collapse) and
// returns the runtime and the terminal voltage at the sample times.
func runProfile(t *testing.T, m cellmodel.Model, v0, minV float64, steps []profileStep, samples []float64) (float64, []float64) {
	t.Helper()
	sim := cellmodel.NewSim(m, v0, cellmodel.Tolerances{})
	got := make([]float64, len(samples))
	for i := range got {
		got[i] = math.NaN()
	}
	start := 0.0
	for range 100000 {
		for _, st := range steps {
			rel := make([]float64, len(samples))
			for i, ts := range samples {
				rel[i] = ts - start
			}
			r, err := sim.Run(st.load, st.durS, cellmodel.Limits{MinV: minV}, rel)
			if err != nil {
				t.Fatal(err)
			}
			for i, u := range r.SampleTerminalV {
				if rel[i] >= 0 && rel[i] <= r.DurationS && !math.IsNaN(u) {
					got[i] = u
				}
			}
			start += r.DurationS
			if r.Stop != cellmodel.Completed {
				return start, got
			}
		}
	}
	t.Fatal("the profile never reached the window bottom")
	return 0, nil
}

// TestNgspiceAgreesWithModels runs each model as a bank under a constant
// current, a constant power and a repeated pulse-then-rest profile.
// Expected values: ngspice 39 transient simulation of the subcircuit
// WriteSubckt writes (independent circuit simulator); tolerance 0.1 %.
func TestNgspiceAgreesWithModels(t *testing.T) {
	bin := ngspiceOrSkip(t)
	t.Parallel()
	f := func(x float64) *float64 { return &x }
	// REFERENCES.md 9.2's two-branch set; an invented three-branch cell.
	two := cellmodel.Spec{Kind: cellmodel.KindTwoBranch, R0Ohm: f(10.0478e-3), C0F: f(89.03), KvFPerV: f(29.1062),
		R2Ohm: f(17.4976), C2F: f(13.7162), RleakOhm: f(5000)}
	three := cellmodel.Spec{Kind: cellmodel.KindThreeBranch, RiOhm: f(2.5e-3), Ci0F: f(1100), Ci1FPerV: f(190),
		RdOhm: f(0.9), CdF: f(100), RlOhm: f(5.2), ClF: f(220), RleakOhm: f(9000)}
	type profile struct {
		name  string
		steps []profileStep
		cards []string // the load between node t and ground
	}
	profiles := func(scaleA float64) []profile {
		i, p := 2*scaleA, 8*scaleA
		pulseA := 8 * scaleA
		const edge = 1e-6
		return []profile{
			{"current", []profileStep{{cellmodel.Load{Kind: cellmodel.Current, Value: i}, 1e6}},
				[]string{fmt.Sprintf("ILOAD t 0 PWL(0 0 %s %s)", num(edge), num(i))}},
			{"power", []profileStep{{cellmodel.Load{Kind: cellmodel.Power, Value: p}, 1e6}},
				[]string{fmt.Sprintf("BLOAD t 0 I = %s / max(V(t), 1e-6)", num(p))}},
			// 2 s pulses every 10 s; the flat top is shortened by the edge so
			// each pulse carries the same charge as capbank's.
			{"pulse then rest", []profileStep{{cellmodel.Load{Kind: cellmodel.Current, Value: pulseA}, 2}, {cellmodel.Load{Kind: cellmodel.Rest}, 8}},
				[]string{fmt.Sprintf("ILOAD t 0 PULSE(0 %s 0 %s %s %s 10)", num(pulseA), num(edge), num(edge), num(2-edge))}},
		}
	}
	models := []struct {
		name   string
		spec   cellmodel.Spec
		series int
		par    int
		scaleA float64
	}{
		{"two-branch", two, 6, 2, 5},
		{"three-branch", three, 6, 1, 25},
	}
	for _, mc := range models {
		for _, pr := range profiles(mc.scaleA) {
			t.Run(mc.name+"/"+pr.name, func(t *testing.T) {
				t.Parallel()
				if err := mc.spec.Validate(2.7); err != nil {
					t.Fatal(err)
				}
				bank := mc.spec.Model().Bank(mc.series, mc.par)
				v0 := 2.7 * float64(mc.series)
				minV := v0 / 2
				runtime, _ := runProfile(t, bank, v0, minV, pr.steps, nil)
				samples := make([]float64, 10)
				for k := range samples {
					ts := runtime * (float64(k) + 0.5) / 10
					// Keep away from the pulse edges, where the terminal jumps.
					if r := math.Mod(ts, 10); math.Abs(r) < 0.01 || math.Abs(r-2) < 0.01 || math.Abs(r-10) < 0.01 {
						ts += 0.05
					}
					samples[k] = ts
				}
				_, us := runProfile(t, bank, v0, minV, pr.steps, samples)

				var sub strings.Builder
				if err := bank.WriteSubckt(&sub, "BANK", v0); err != nil {
					t.Fatal(err)
				}
				var b strings.Builder
				b.WriteString("* capbank check: " + mc.name + " bank, " + pr.name + "\n")
				b.WriteString(sub.String())
				b.WriteString("XB t 0 BANK\n")
				// The terminal's starting guess: the branches' voltage (a
				// constant-power load has a second, unphysical solution
				// near 0 V).
				fmt.Fprintf(&b, ".ic v(t)=%s\n", num(v0))
				for _, c := range pr.cards {
					b.WriteString(c + "\n")
				}
				stop := 1.05 * runtime
				tmax := stop / 20000
				fmt.Fprintf(&b, ".options reltol=1e-7 abstol=1e-12 vntol=1e-9 chgtol=1e-16 trtol=1\n")
				fmt.Fprintf(&b, ".tran %s %s 0 %s uic\n", num(tmax), num(stop), num(tmax))
				want := []string{"trun"}
				for k, ts := range samples {
					fmt.Fprintf(&b, ".meas tran u%d FIND v(t) AT=%s\n", k, num(ts))
					want = append(want, fmt.Sprintf("u%d", k))
				}
				fmt.Fprintf(&b, ".meas tran trun WHEN v(t)=%s FALL=1\n.end\n", num(minV))
				got := runNgspice(t, bin, b.String(), want)
				check := func(what string, capbank, ngspice float64) {
					rel := math.Abs(capbank-ngspice) / math.Abs(ngspice)
					t.Logf("%-12s capbank %.9g  ngspice %.9g  rel. diff %.2e", what, capbank, ngspice, rel)
					if !(rel <= ngspiceRelTol) {
						t.Errorf("%s: capbank %.9g, ngspice %.9g: relative difference %.3e above %g", what, capbank, ngspice, rel, ngspiceRelTol)
					}
				}
				for k, ts := range samples {
					check(fmt.Sprintf("u(%.4g s)", ts), us[k], got[fmt.Sprintf("u%d", k)])
				}
				check("runtime", runtime, got["trun"])
			})
		}
	}
}
