package sizing

import "math"

// curvePoints is the most points a Curve holds (about; see curve).
const curvePoints = 2000

// curve traces the sizing pass on bank m. When every step edge fits in the
// budget, it keeps each edge (the jump at a step start shows as two points
// at one time) and adds points inside the steps whose voltage bends
// (resistor, constant power, and steps that reach the window top). Longer
// passes are decimated into time buckets that each keep their first, last,
// lowest and highest terminal voltage and current, so every extreme of the
// pass stays in the curve. Every point is on the exact solution.
func (m *bankModel) curve(steps []compiledStep, repeat int, v0, maxV, minV float64, budget int, heat *heatModel, ambientC float64) *Curve {
	n := len(steps) * repeat
	total := 0.0
	for _, s := range steps {
		total += s.dur
	}
	total *= float64(repeat)
	cv := &Curve{MaxV: maxV, MinV: minV}
	var sink pointSink
	if heat != nil {
		cv.TemperatureC = []float64{}
	}
	if 2*n+1 <= budget {
		sink = &fullSink{c: cv}
	} else {
		cv.Decimated = true
		sink = newBucketSink(cv, total, budget/6)
	}
	interior := 0
	if !cv.Decimated {
		bends := 0
		for _, s := range steps {
			if s.kind == kindPower || s.kind == kindResistance {
				bends++
			}
		}
		if bends > 0 {
			interior = min(24, (budget-2*n-1)/(bends*repeat))
		}
	}
	v, t := v0, 0.0
	// rise is the cell's temperature rise at the start of the step; riseAt
	// the rise d seconds into a step of mean loss w.
	rise, w := 0.0, 0.0
	riseAt := func(d float64) float64 {
		if heat == nil {
			return 0
		}
		return heat.advance(rise, w, d)
	}
	add := func(tt, u, vv, i, d float64) { sink.add(tt, u, vv, i, ambientC+riseAt(d)) }
	add(t, v, v, 0, 0)
	for range repeat {
		for j, s := range steps {
			if j%haltEvery == 0 && m.halted() {
				sink.flush()
				return cv
			}
			o := m.step(s, v, minV, maxV)
			if heat != nil {
				w = heat.loss(o.i2dt, o.t)
			}
			add(t, o.uStart, v, o.iStart, 0)
			k := 0
			if s.kind == kindPower || s.kind == kindResistance {
				k = interior
			}
			for i := 1; i <= k; i++ {
				sub := s
				sub.dur = o.t * float64(i) / float64(k+1)
				q := m.step(sub, v, minV, maxV)
				add(t+sub.dur, q.uEnd, q.v1, q.iEnd, sub.dur)
			}
			if o.tTop > 0 && o.tTop < o.t && !cv.Decimated {
				sub := s
				sub.dur = o.tTop
				q := m.step(sub, v, minV, maxV)
				add(t+o.tTop, q.uEnd, q.v1, q.iEnd, o.tTop)
			}
			add(t+o.t, o.uEnd, o.v1, o.iEnd, o.t)
			rise = riseAt(o.t)
			t += o.t
			v = o.v1
			if o.stop != stopNone {
				sink.flush()
				return cv
			}
		}
	}
	sink.flush()
	return cv
}

type pointSink interface {
	add(t, u, v, i, temp float64)
	flush()
}

type fullSink struct{ c *Curve }

func (s *fullSink) add(t, u, v, i, temp float64) {
	s.c.append(point{t: t, u: u, v: v, i: i, temp: temp})
}
func (s *fullSink) flush() {}

type point struct {
	t, u, v, i, temp float64
	seq              int // arrival order, to keep a jump's two points in order
}

func (c *Curve) append(p point) {
	c.TimeS = append(c.TimeS, p.t)
	c.TerminalV = append(c.TerminalV, p.u)
	c.CapacitorV = append(c.CapacitorV, p.v)
	c.CurrentA = append(c.CurrentA, p.i)
	if c.TemperatureC != nil {
		c.TemperatureC = append(c.TemperatureC, p.temp)
	}
}

// bucketSink keeps, per time bucket, the first and last point and the
// points of lowest and highest terminal voltage and current.
type bucketSink struct {
	c      *Curve
	width  float64
	bucket int
	have   bool
	keep   [6]point // first, last, minU, maxU, minI, maxI
	seq    int
}

func newBucketSink(c *Curve, total float64, buckets int) *bucketSink {
	if buckets < 1 {
		buckets = 1
	}
	return &bucketSink{c: c, width: total / float64(buckets)}
}

func (s *bucketSink) add(t, u, v, i, temp float64) {
	s.seq++
	p := point{t: t, u: u, v: v, i: i, temp: temp, seq: s.seq}
	b := 0
	if s.width > 0 {
		// t lies within the pass, so the quotient is at most the bucket
		// count; the bound only keeps the conversion to int defined.
		b = int(min(t/s.width, math.MaxInt32))
	}
	if s.have && b != s.bucket {
		s.flush()
	}
	if !s.have {
		s.keep = [6]point{p, p, p, p, p, p}
		s.bucket, s.have = b, true
		return
	}
	s.keep[1] = p
	if u < s.keep[2].u {
		s.keep[2] = p
	}
	if u > s.keep[3].u {
		s.keep[3] = p
	}
	if i < s.keep[4].i {
		s.keep[4] = p
	}
	if i > s.keep[5].i {
		s.keep[5] = p
	}
}

func (s *bucketSink) flush() {
	if !s.have {
		return
	}
	s.have = false
	pts := s.keep
	// Emit in time order, each distinct point once.
	for i := 1; i < len(pts); i++ {
		for j := i; j > 0 && pts[j].seq < pts[j-1].seq; j-- {
			pts[j], pts[j-1] = pts[j-1], pts[j]
		}
	}
	last := point{t: math.NaN()}
	for _, p := range pts {
		if p != last {
			s.c.append(p)
			last = p
		}
	}
}
