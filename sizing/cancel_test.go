package sizing

import (
	"context"
	"errors"
	"testing"
	"time"
)

// A halted plan solves no step: each trial of the string search, the
// runtime, the heat and the curve ends at its first step, unsolved (the
// count below is of steps attempted, one per loop), so a cancelled
// sizing's workers return at once whatever the design. Without the halt flag this cell solves hundreds of thousands of
// steps (the day of bench_test.go, repeated).
func TestHaltedPlanSolvesNothing(t *testing.T) {
	t.Parallel()
	d := dayDesign(1)
	d.Load.Repeat = ip(3)
	if err := Validate(d); err != nil {
		t.Fatal(err)
	}
	live := newPlan(d)
	live.sizeCell(&d.Cells[0])
	if live.work.Load() < 100_000 {
		t.Fatalf("the live sizing solved %d steps; the case must be heavy", live.work.Load())
	}
	p := newPlan(d)
	p.halt.Store(true)
	p.sizeCell(&d.Cells[0])
	if n := p.work.Load(); n > 100 {
		t.Errorf("the halted sizing attempted %d steps, want one per loop (under 100)", n)
	}
}

// SizeContext returns the context's error and no report when the context
// ends part way; a context that is already done sizes nothing.
func TestSizeContextStops(t *testing.T) {
	t.Parallel()
	d := dayDesign(24)
	d.Load.Repeat = ip(20) // seconds of work on one core, far past the cancel
	ctx, cancel := context.WithCancel(context.Background())
	time.AfterFunc(20*time.Millisecond, cancel)
	r, err := SizeContext(ctx, d)
	if !errors.Is(err, context.Canceled) || r != nil {
		t.Fatalf("SizeContext after cancel: report %v, error %v; want no report and context.Canceled", r != nil, err)
	}
	r, err = SizeContext(ctx, d)
	if !errors.Is(err, context.Canceled) || r != nil {
		t.Fatalf("SizeContext on a done context: report %v, error %v", r != nil, err)
	}
}
