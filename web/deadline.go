package web

import (
	"capbank/web/form"
	"context"
	"errors"
	"fmt"
	"runtime"
	"runtime/debug"
	"strconv"
	"sync"
	"time"

	"github.com/labstack/echo/v4"

	"capbank/sizing"
	"capbank/web/fault"
)

// DefaultComputeTimeout is how long one request may spend sizing a design
// or writing an export when Config.ComputeTimeout is zero.
const DefaultComputeTimeout = 10 * time.Second

// seconds writes a duration for a message: "10 s", "2.5 s"; below a
// second in milliseconds: "1 ms", "0.001 ms".
func seconds(d time.Duration) string {
	if d < time.Second {
		return strconv.FormatFloat(float64(d)/float64(time.Millisecond), 'g', 3, 64) + " ms"
	}
	return strconv.FormatFloat(d.Seconds(), 'g', 3, 64) + " s"
}

// errClientGone is a request whose client went away while it computed (an
// htmx request replaced by the next keystroke): nothing is answered and
// nothing is logged.
var errClientGone = errors.New("the client closed the request")

// compute runs fn under the server's compute deadline and returns its
// result; pastDeadline when the deadline passes first; computeBusy when
// every compute slot stays taken for the whole queue wait;
// errClientGone when the client leaves first.
//
// At most Config.ComputeSlots computations run at once (one per core by
// default); a request that finds them all taken waits for one up to
// queueWait, then is answered 503 with Retry-After, so a few heavy
// anonymous requests can hold the cores but never the server.
//
// The deadline is counted from when the computation gets its slot. fn
// gets a context that is cancelled at the deadline or when the client
// leaves; sizing.SizeContext checks it every thousand steps or so, so a
// computation that misses the deadline stops within a millisecond of it and its
// goroutine returns. compute waits for it to return before giving the
// slot back, so a slot is only ever free when nothing runs in it. fn must
// not touch the echo.Context, which echo reuses for the next request
// once the handler returns: read everything it needs from the request
// first.
func compute[T any](s *Server, c echo.Context, fn func(ctx context.Context) (T, error)) (T, error) {
	var zero T
	method, path := c.Request().Method, c.Request().URL.Path
	if c.Request().Context().Err() != nil {
		return zero, errClientGone
	}
	if err := s.slots.acquire(c.Request().Context()); err != nil {
		if errors.Is(err, errBusy) {
			s.log.Warn("compute slots busy", "method", method, "path", path, "slots", cap(s.slots.c))
			return zero, computeBusy(s.slots.wait)
		}
		return zero, errClientGone
	}
	ctx, cancel := context.WithTimeout(c.Request().Context(), s.computeTimeout)
	defer cancel()
	type result struct {
		v   T
		err error
	}
	done := make(chan result, 1) // buffered: a late result is dropped, not blocked on
	go func() {
		defer s.slots.release()
		defer func() {
			// A panic here is outside echo's handler and its recover
			// middleware: without this it would end the process.
			if r := recover(); r != nil {
				s.log.Error("panic in handler", "method", method, "path", path,
					"panic", fmt.Sprint(r), "stack", string(debug.Stack()))
				done <- result{err: errPanic}
			}
		}()
		v, err := fn(ctx)
		if dl, _ := ctx.Deadline(); ctx.Err() != nil {
			s.log.Info("computation stopped", "method", method, "path", path, "after_deadline", time.Since(dl).String())
		}
		done <- result{v, err}
	}()
	select {
	case r := <-done:
		if ctx.Err() == nil || r.err == nil {
			return r.v, r.err
		}
	case <-ctx.Done():
	}
	if errors.Is(ctx.Err(), context.DeadlineExceeded) {
		s.log.Warn("compute deadline passed", "method", method, "path", path, "limit", s.computeTimeout.String())
		return zero, pastDeadline(s.computeTimeout, false)
	}
	return zero, errClientGone
}

// errBusy is every compute slot staying taken for the whole queue wait.
var errBusy = errors.New("every compute slot is taken")

// computeSlots bounds the computations running at once: a buffered
// channel used as a counting semaphore.
type computeSlots struct {
	c    chan struct{}
	wait time.Duration // how long a request waits for a slot
}

// DefaultQueueWait is how long a computation waits for a free compute
// slot before it is answered 503.
const DefaultQueueWait = 2 * time.Second

func newComputeSlots(n int, wait time.Duration) *computeSlots {
	if n <= 0 {
		n = runtime.GOMAXPROCS(0)
	}
	if wait <= 0 {
		wait = DefaultQueueWait
	}
	return &computeSlots{c: make(chan struct{}, n), wait: wait}
}

// acquire takes a slot, waiting up to the queue wait; errBusy when none
// came free, ctx's error when the client left first.
func (q *computeSlots) acquire(ctx context.Context) error {
	select {
	case q.c <- struct{}{}:
		return nil
	default:
	}
	t := time.NewTimer(q.wait)
	defer t.Stop()
	select {
	case q.c <- struct{}{}:
		return nil
	case <-t.C:
		return errBusy
	case <-ctx.Done():
		return ctx.Err()
	}
}

func (q *computeSlots) release() { <-q.c }

// computeWithLookup is compute for a computation that looks cells up in
// the library: fn gets a lookup that is closed once the request is over,
// so a computation left running in the background past the deadline never
// reaches the request's context (see compute).
func computeWithLookup[T any](s *Server, c echo.Context, fn func(ctx context.Context, find form.CellLookup) (T, error)) (T, error) {
	lib := &closableLookup{lookup: s.lookup(c)}
	defer lib.close()
	return compute(s, c, func(ctx context.Context) (T, error) { return fn(ctx, lib.find) })
}

// evaluateWithin is evaluate under the compute deadline.
func (s *Server) evaluateWithin(c echo.Context, f *form.Form) (*evaluation, error) {
	return computeWithLookup(s, c, func(ctx context.Context, find form.CellLookup) (*evaluation, error) {
		ev := evaluate(ctx, f, find)
		return ev, ctx.Err()
	})
}

// measureWithin is measure under the compute deadline: a measurement log
// may hold up to measure.MaxRows rows, which takes seconds to
// read and fit. A deadline error is marked as a measurement's, whose
// message asks for a shorter log.
func (s *Server) measureWithin(c echo.Context, in measureInput) (*measureOutcome, error) {
	out, err := computeWithLookup(s, c, func(_ context.Context, find form.CellLookup) (*measureOutcome, error) {
		return runMeasurement(in, find)
	})
	if fe := fault.As(err); fe != nil && fe.Type == typeDeadline {
		return out, pastDeadline(s.computeTimeout, true)
	}
	return out, err
}

// closableLookup is a cell lookup that finds nothing once closed; close
// waits for a lookup in progress to finish.
type closableLookup struct {
	mu     sync.RWMutex
	closed bool
	lookup form.CellLookup
}

func (l *closableLookup) find(id string) (sizing.Cell, bool) {
	l.mu.RLock()
	defer l.mu.RUnlock()
	if l.closed || l.lookup == nil {
		return sizing.Cell{}, false
	}
	return l.lookup(id)
}

func (l *closableLookup) close() {
	l.mu.Lock()
	l.closed = true
	l.mu.Unlock()
}

// computeTimeoutOrDefault is the compute deadline of cfg.
func computeTimeoutOrDefault(cfg Config) time.Duration {
	if cfg.ComputeTimeout > 0 {
		return cfg.ComputeTimeout
	}
	return DefaultComputeTimeout
}
