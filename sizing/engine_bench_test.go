package sizing

import (
	"bytes"
	"context"
	"math"
	"os"
	"runtime"
	"runtime/metrics"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"gonum.org/v1/gonum/stat"
)

// The engine's speed, measured (go test ./sizing -run '^$' -bench . -benchmem):
// the 200-cell library against the logged day, serial and parallel; the
// exact steps side by side with a plain fixed-step RK4 integrator on the
// same day and against the closed form of REFERENCES.md 10.2(b); how the
// cost grows with the steps and the cells; and a 10^6-row profile CSV
// parsed and sized, with its peak memory. The profiles, cells and banks
// are invented demo data (bench_test.go). The figures are written in the
// README's Performance section.

// BenchmarkLibrary200Day sizes 200 invented cells against the 86 400-step
// logged day: the whole search (bound, trials, bisection, the runtime of
// each feasible bank, the recommended bank's curve), with one worker and
// with GOMAXPROCS workers. It reports the steps solved, the wall time per
// step and the allocations per step (runtime.MemStats.Mallocs over the
// loop ÷ steps; the inner loop itself allocates nothing, see
// TestInnerLoopAllocatesNothing).
func BenchmarkLibrary200Day(b *testing.B) {
	d := dayDesign(200)
	if err := Validate(d); err != nil {
		b.Fatal(err)
	}
	for _, w := range []struct {
		name    string
		workers int
	}{{"workers=1", 1}, {"workers=GOMAXPROCS", runtime.GOMAXPROCS(0)}} {
		b.Run(w.name, func(b *testing.B) {
			var steps int64
			var before, after runtime.MemStats
			runtime.ReadMemStats(&before)
			for b.Loop() {
				_, n, err := sizeWith(context.Background(), d, w.workers)
				if err != nil {
					b.Fatal(err)
				}
				steps += n
			}
			runtime.ReadMemStats(&after)
			b.ReportMetric(float64(steps)/float64(b.N), "steps/op")
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(steps), "ns/step")
			b.ReportMetric(float64(after.Mallocs-before.Mallocs)/float64(steps), "allocs/step")
			b.ReportMetric(float64(w.workers), "workers")
		})
	}
}

// rk4Pass is the obvious alternative to the exact steps: the capacitor
// voltage integrated by the classical fixed-step fourth-order Runge–Kutta
// method (Kutta 1901, REFERENCES.md 12.5), h seconds a step,
// C·dv/dt = −(i(v) + g·v), with the bank current i of each step kind
// (REFERENCES.md 3.9) in its cancellation-free form, the bank held at max_v
// while charging, and a stop where the terminal voltage crosses min_v,
// placed by linear interpolation between the two points around it. It
// returns the capacitor voltage at the end, the lowest terminal voltage,
// the time run and whether it stopped. It is compiled Go like capbank,
// on the same bank model, and nothing in it is made slow on purpose.
func rk4Pass(m bankModel, steps []compiledStep, v, minV, maxV, h float64) (vEnd, minU, t float64, stopped bool) {
	c, r, g := m.c, m.r, m.g
	minU = math.Inf(1)
	for _, st := range steps {
		cur := func(v float64) (i float64, ok bool) { // bank current, A
			switch st.kind {
			case kindCurrent:
				return st.x, true
			case kindPower:
				disc := v*v - 4*st.x*r
				if disc < 0 {
					return 0, false // past the maximum-power point
				}
				return 2 * st.x / (v + math.Sqrt(disc)), true
			case kindResistance:
				return v / (st.x + r), true
			}
			return 0, true
		}
		f := func(v float64) float64 {
			i, _ := cur(v)
			return -(i + g*v) / c
		}
		n := max(1, int(math.Round(st.dur/h)))
		hh := st.dur / float64(n)
		i, ok := cur(v)
		if !ok {
			return v, minU, t, true
		}
		u := v - i*r
		minU = min(minU, u)
		for range n {
			k1 := f(v)
			k2 := f(v + hh/2*k1)
			k3 := f(v + hh/2*k2)
			k4 := f(v + hh*k3)
			vn := v + hh/6*(k1+2*k2+2*k3+k4)
			in, ok := cur(vn)
			if !ok {
				return vn, minU, t + hh, true
			}
			if in < 0 && vn > maxV { // charging: held at the top
				vn, in = maxV, -g*maxV
			}
			un := vn - in*r
			if un < minV {
				return vn, minV, t + hh*(u-minV)/(u-un), true
			}
			v, u, t = vn, un, t+hh
			minU = min(minU, u)
		}
	}
	return v, minU, t, false
}

// BenchmarkVersusRK4 runs one pass of the 86 400-step logged day on one
// invented bank (200 F, 3 mΩ, leakage 5 kΩ, 48 → 24 V) with capbank's
// exact steps and with RK4 at 1 ms, and reports their times (ms per pass
// of the day), the speedup, how far RK4's end voltage is from capbank's,
// and each method's error against the closed form of REFERENCES.md
// 10.2(b): 5 kW on the 138.89 F, 7.2 mΩ bank from open-circuit 48 V to
// terminal 24 V, t = C·(u1² − u2²)/(2P) − R·C·ln(u1/u2) (3.10), 22.314 790 68 s.
func BenchmarkVersusRK4(b *testing.B) {
	const h = 1e-3 // s, RK4's fixed step
	steps := newPlan(dayDesign(1)).steps
	m := newBankModel(200, 0.003, 2e-4)

	// The closed form, in double precision, checked against REFERENCES.md.
	ref := refBank
	p := 5000.0
	u1 := (48 + math.Sqrt(48*48-4*p*ref.r)) / 2
	want := ref.c*(u1*u1-24*24)/(2*p) - ref.r*ref.c*math.Log(u1/24)
	if math.Abs(want-22.31479068) > 1e-8 {
		b.Fatalf("closed form %.10f s, REFERENCES.md 10.2(b) gives 22.31479068 s", want)
	}
	cut := []compiledStep{{kind: kindPower, x: p, dur: 1000}}
	exactErr := math.Abs(ref.run(cut, 1, 48, 24, 48).t - want)
	_, _, tRK4, stopped := rk4Pass(ref, cut, 48, 24, 48, h)
	if !stopped {
		b.Fatal("RK4 did not reach the cut-off of REFERENCES.md 10.2(b)")
	}
	rk4Err := math.Abs(tRK4 - want)

	// The day is run an hour at a time, each method carrying its own
	// state, the two timed in turn on every hour, so that a busy machine
	// slows both alike. The exact hour takes about a fifth of a
	// millisecond: it is timed as the mean of 5 runs.
	const hour = 3600
	var exact, rk4 time.Duration
	var dev float64
	for b.Loop() {
		vExact, vRK4 := 48.0, 48.0
		for h0 := 0; h0 < len(steps); h0 += hour {
			chunk := steps[h0:min(h0+hour, len(steps))]
			t0 := time.Now()
			var s passStats
			for range 5 {
				s = m.run(chunk, 1, vExact, 24, 48)
			}
			exact += time.Since(t0) / 5
			if s.stop != stopNone {
				b.Fatal("the bench bank must carry the day")
			}
			vExact = s.v
			t0 = time.Now()
			v, _, _, stopped := rk4Pass(m, chunk, vRK4, 24, 48, h)
			rk4 += time.Since(t0)
			if stopped {
				b.Fatal("RK4 stopped on a day capbank carries")
			}
			vRK4 = v
		}
		dev = math.Abs(vRK4 - vExact)
	}
	n := float64(b.N)
	b.ReportMetric(exact.Seconds()*1e3/n, "capbank_ms/day")
	b.ReportMetric(rk4.Seconds()*1e3/n, "rk4_ms/day")
	b.ReportMetric(float64(rk4)/float64(exact), "speedup")
	// In ns and µV: the benchmark output prints few decimals.
	b.ReportMetric(dev*1e6, "rk4_end_uV_off")
	b.ReportMetric(exactErr*1e9, "capbank_err_ns")
	b.ReportMetric(rk4Err*1e9, "rk4_err_ns")
	b.Logf("capbank %.3g s, RK4 %.3g s off the closed form; RK4's end voltage %.3g V from capbank's", exactErr, rk4Err, dev)
}

// dayAt returns the mean power (W) over [a, b] s of an invented logged
// day, smooth enough to log at any rate: a 2.5 W standby swinging ±0.5 W
// with a 30 min period, a 37.5 W radio burst of 2–5 s every 10 min, and a
// 15 W solar charge from 08:00 to 16:00. Logging it at n samples keeps
// the day's energy, so a sizing at any n asks the same of the bank.
func dayAt(a, b float64) float64 {
	const period = 1800.0
	w := 2 * math.Pi / period
	e := 2.5*(b-a) + 0.5/w*(math.Cos(w*a)-math.Cos(w*b))
	over := func(s, t float64) float64 { return max(0, min(b, t)-max(a, s)) }
	for k := math.Floor((a - 42) / 600); k*600 < b; k++ {
		if k >= 0 {
			s := k*600 + 37
			e += 37.5 * over(s, s+2+float64(int(k)%4))
		}
	}
	e -= 15 * over(8*3600, 16*3600)
	return e / (b - a)
}

// dayLogged is the day of dayAt logged at n samples (86 400/n s each).
func dayLogged(n int) []Step {
	dt := 86400 / float64(n)
	steps := make([]Step, n)
	vals := make([]float64, n)
	for i := range steps {
		vals[i] = dayAt(float64(i)*dt, float64(i+1)*dt)
		steps[i] = Step{PowerW: &vals[i], DurationS: dt}
	}
	return steps
}

// sizeTime is the best wall time of a few sizings of d (one when a
// sizing takes over 0.3 s).
func sizeTime(b *testing.B, d *Design) time.Duration {
	best := time.Duration(math.MaxInt64)
	for i := 0; i < 3; i++ {
		t0 := time.Now()
		if _, _, err := size(d); err != nil {
			b.Fatal(err)
		}
		best = min(best, time.Since(t0))
		if best > 300*time.Millisecond {
			break
		}
	}
	return best
}

// growth fits time = k·size^e by least squares on the logarithms (gonum
// stat.LinearRegression) and returns the exponent e: 1 is linear growth.
func growth(sizes []float64, times []time.Duration) float64 {
	x, y := make([]float64, len(sizes)), make([]float64, len(sizes))
	for i := range sizes {
		x[i], y[i] = math.Log10(sizes[i]), math.Log10(times[i].Seconds())
	}
	_, e := stat.LinearRegression(x, y, nil, false)
	return e
}

// libraryOf is n cells: the 10 invented cells of cellFamily(10) over and
// over, each copy with its own id, so that every library has the same mix
// and a cell costs the same on average whatever n is.
func libraryOf(n int) []Cell {
	base := cellFamily(10)
	cells := make([]Cell, n)
	for i := range cells {
		cells[i] = base[i%len(base)]
		cells[i].ID = base[i%len(base)].ID + "-" + strconv.Itoa(i/len(base))
	}
	return cells
}

// BenchmarkGrowth measures how the sizing time grows: 10 invented cells
// against the invented day logged at 10^3 … 10^6 samples, and 10, 100 and
// 1000 cells (the same 10 repeated, libraryOf) against the 86 400-step
// day. It reports each time (ms) and the fitted exponent of each series
// (1 is linear).
func BenchmarkGrowth(b *testing.B) {
	b.Run("steps", func(b *testing.B) {
		sizes := []float64{1e3, 1e4, 1e5, 1e6}
		times := make([]time.Duration, len(sizes))
		for b.Loop() {
			for i, n := range sizes {
				d := dayDesign(10)
				d.Load.Steps = dayLogged(int(n))
				times[i] = sizeTime(b, d)
			}
		}
		for i, n := range sizes {
			b.ReportMetric(float64(times[i].Microseconds())/1000, "ms_1e"+strconv.Itoa(int(math.Log10(n)))+"_steps")
		}
		b.ReportMetric(growth(sizes, times), "exponent")
	})
	b.Run("cells", func(b *testing.B) {
		sizes := []float64{10, 100, 1000}
		times := make([]time.Duration, len(sizes))
		for b.Loop() {
			for i, n := range sizes {
				d := dayDesign(10)
				d.Cells = libraryOf(int(n))
				times[i] = sizeTime(b, d)
			}
		}
		for i, n := range sizes {
			b.ReportMetric(float64(times[i].Microseconds())/1000, "ms_"+strconv.Itoa(int(n))+"_cells")
		}
		b.ReportMetric(growth(sizes, times), "exponent")
	})
}

// peakMemory samples the memory the Go runtime holds from the system
// (runtime/metrics: mapped minus returned) every millisecond until stop is
// called, which returns the largest value seen, in bytes. On Linux it
// also resets the process's resident-set high-water mark first
// (/proc/self/clear_refs) and returns it (VmHWM), or −1 where that is not
// available.
func peakMemory() (stop func() (goBytes, rssBytes float64)) {
	rssOK := os.WriteFile("/proc/self/clear_refs", []byte("5"), 0) == nil
	samples := []metrics.Sample{{Name: "/memory/classes/total:bytes"}, {Name: "/memory/classes/heap/released:bytes"}}
	var peak float64
	read := func() {
		metrics.Read(samples)
		peak = max(peak, float64(samples[0].Value.Uint64()-samples[1].Value.Uint64()))
	}
	done := make(chan struct{})
	var wg sync.WaitGroup
	wg.Go(func() {
		tick := time.NewTicker(time.Millisecond)
		defer tick.Stop()
		for {
			select {
			case <-done:
				return
			case <-tick.C:
				read()
			}
		}
	})
	return func() (float64, float64) {
		close(done)
		wg.Wait()
		read()
		rss := -1.0
		if rssOK {
			if st, err := os.ReadFile("/proc/self/status"); err == nil {
				for line := range strings.Lines(string(st)) {
					if kb, ok := strings.CutPrefix(line, "VmHWM:"); ok {
						if v, err := strconv.ParseFloat(strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(kb), "kB")), 64); err == nil {
							rss = v * 1024
						}
					}
				}
			}
		}
		return peak, rss
	}
}

// BenchmarkProfileCSV1e6Sized parses an invented 10^6-row logged profile
// (0.01 s rows, every row a new step: the most memory) from the bytes of
// an upload and sizes 10 invented cells against it, as capbank does with
// a long log. It reports the time to parse and to size (Size, with its
// validation, timed again apart), the peak memory the Go runtime held
// and, on Linux, the process's peak resident set during the run (both in
// MB, 10^6 bytes), the upload's 12 MB included.
func BenchmarkProfileCSV1e6Sized(b *testing.B) {
	data := profileCSVLog(ProfileCSVMaxRows, true)
	var peakGo, peakRSS float64
	var parse, sized, validate time.Duration
	for b.Loop() {
		runtime.GC()
		stop := peakMemory()
		t0 := time.Now()
		p, err := ParseProfileCSV(bytes.NewReader(data))
		if err != nil {
			b.Fatal(err)
		}
		t1 := time.Now()
		d := &Design{Name: "bench: a 10^6-row log", Window: Window{MaxV: 48, MinV: 24},
			Load: Load{Efficiency: fp(0.92), Steps: p.Steps}, Cells: cellFamily(10)}
		r, err := Size(d)
		if err != nil {
			b.Fatal(err)
		}
		if r.Recommended == nil {
			b.Fatal("no cell carries the bench log")
		}
		parse, sized = parse+t1.Sub(t0), sized+time.Since(t1)
		g, rss := stop()
		peakGo, peakRSS = max(peakGo, g), max(peakRSS, rss)
		// Outside the timed run: how much of Size is the validation.
		b.StopTimer()
		t0 = time.Now()
		if err := Validate(d); err != nil {
			b.Fatal(err)
		}
		validate += time.Since(t0)
		b.StartTimer()
	}
	n := float64(b.N)
	b.ReportMetric(parse.Seconds()*1e3/n, "parse_ms")
	b.ReportMetric(sized.Seconds()*1e3/n, "size_ms")
	b.ReportMetric(validate.Seconds()*1e3/n, "of_which_validate_ms")
	b.ReportMetric(peakGo/1e6, "peak_go_MB")
	if peakRSS > 0 {
		b.ReportMetric(peakRSS/1e6, "peak_rss_MB")
	}
}
