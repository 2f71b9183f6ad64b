package sizing

import (
	"context"
	"fmt"
	"sync"
)

// SeriesSizer sizes a design's candidate cells at series counts the caller
// chooses, for the design explorer: each answer is the candidate Size
// gives for the design with its series key set to that count (the same
// solver, the same fewest strings), while the design is validated once and
// its steps compiled once per series count. Safe for concurrent use.
type SeriesSizer struct {
	d     *Design
	root  *plan
	mu    sync.Mutex
	plans map[int]*plan
}

// NewSeriesSizer validates d and readies it for sizing at any series
// count; the design's own series key is ignored (every count is asked
// for). A design that fails Validate returns its ValidationError.
func NewSeriesSizer(d *Design) (*SeriesSizer, error) {
	free := *d
	free.Series = nil
	if err := Validate(&free); err != nil {
		return nil, err
	}
	return &SeriesSizer{d: &free, root: newPlan(&free), plans: map[int]*plan{}}, nil
}

// Design is the design being swept, without its series key.
func (z *SeriesSizer) Design() *Design { return z.d }

// LeastSeries returns the fewest cells in series cell i may have (the count
// Size chooses without a series key, at the ambient's ceiling) and the
// step between series counts (its module's series count, or the design's
// series_multiple; 1 for single cells).
func (z *SeriesSizer) LeastSeries(i int) (least, step int) {
	c := &z.d.Cells[i]
	var flags []Flag
	least = z.root.limits(c, &flags).s
	step, _ = z.d.seriesStep(c)
	return least, step
}

// Size sizes cell i with s cells in series: the candidate Size reports for
// the design with series s. s must be at least LeastSeries(i). A ctx done
// before or during the sizing returns its error, wrapped.
func (z *SeriesSizer) Size(ctx context.Context, i, s int) (Candidate, error) {
	if least, _ := z.LeastSeries(i); s < least || s > MaxSeries {
		return Candidate{}, fmt.Errorf("sizing: cell %q cannot have %d in series (at least %d)", z.d.Cells[i].ID, s, least)
	}
	if err := ctx.Err(); err != nil {
		return Candidate{}, fmt.Errorf("sizing: %w", err)
	}
	p := z.plan(s)
	halt := make(chan struct{})
	stop := context.AfterFunc(ctx, func() { p.halt.Store(true); close(halt) })
	c := &z.d.Cells[i]
	cand := p.forCell(c).sizeCell(c)
	if !stop() {
		<-halt
		return Candidate{}, fmt.Errorf("sizing: %w", context.Cause(ctx))
	}
	return cand, nil
}

// plan is the plan of the design with series s, made once. Each has its
// own cancel flag, so one Size's cancellation stops only the sizings of
// that count; a cancelled plan is made again.
func (z *SeriesSizer) plan(s int) *plan {
	z.mu.Lock()
	defer z.mu.Unlock()
	if p, ok := z.plans[s]; ok && !p.halt.Load() {
		return p
	}
	d := *z.d
	d.Series = &s
	p := newPlan(&d)
	z.plans[s] = p
	return p
}
