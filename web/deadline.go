package web

import (
	"context"
	"errors"
	"fmt"
	"runtime/debug"
	"strconv"
	"sync"
	"time"

	"github.com/labstack/echo/v4"

	"capbank/sizing"
)

// DefaultComputeTimeout is how long one request may spend sizing a design
// or writing an export when Config.ComputeTimeout is zero.
const DefaultComputeTimeout = 10 * time.Second

// deadlineError is a request whose computation ran past the server's
// compute deadline; it is answered 503 with what to make smaller.
type deadlineError struct {
	limit time.Duration
	// measurement is set for the analysis of a measurement log, whose
	// message asks for a shorter log rather than a smaller design.
	measurement bool
}

func (e *deadlineError) Error() string {
	return "the computation took longer than " + seconds(e.limit)
}

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

// compute runs fn under the server's compute deadline, counted from the
// call, and returns its result; a *deadlineError when the deadline passes
// first; errClientGone when the client leaves first.
//
// sizing.Size takes no context and cannot be stopped part way, so fn runs
// in a goroutine of its own and compute selects on its result and the
// deadline. A computation that misses the deadline runs on to its end in
// the background and its result is dropped; the solver's own bounds
// (sizing.MaxPassSteps, sizing.MaxParallel, the limits on steps and cells
// per design) bound how long that is. fn must therefore not touch the
// echo.Context, which echo reuses for the next request once the handler
// returns: read everything it needs from the request first.
func compute[T any](s *Server, c echo.Context, fn func() (T, error)) (T, error) {
	ctx, cancel := context.WithTimeout(c.Request().Context(), s.computeTimeout)
	defer cancel()
	type result struct {
		v   T
		err error
	}
	done := make(chan result, 1) // buffered: a late result is dropped, not blocked on
	method, path := c.Request().Method, c.Request().URL.Path
	go func() {
		defer func() {
			// A panic here is outside echo's handler and its recover
			// middleware: without this it would end the process.
			if r := recover(); r != nil {
				s.log.Error("panic in handler", "method", method, "path", path,
					"panic", fmt.Sprint(r), "stack", string(debug.Stack()))
				done <- result{err: errPanic}
			}
		}()
		v, err := fn()
		done <- result{v, err}
	}()
	select {
	case r := <-done:
		return r.v, r.err
	case <-ctx.Done():
		var zero T
		if errors.Is(ctx.Err(), context.DeadlineExceeded) {
			s.log.Warn("compute deadline passed", "method", method, "path", path, "limit", s.computeTimeout.String())
			return zero, &deadlineError{limit: s.computeTimeout}
		}
		return zero, errClientGone
	}
}

// computeWithLookup is compute for a computation that looks cells up in
// the library: fn gets a lookup that is closed once the request is over,
// so a computation left running in the background past the deadline never
// reaches the request's context (see compute).
func computeWithLookup[T any](s *Server, c echo.Context, fn func(find cellLookup) (T, error)) (T, error) {
	lib := &closableLookup{lookup: s.lookup(c)}
	defer lib.close()
	return compute(s, c, func() (T, error) { return fn(lib.find) })
}

// evaluateWithin is evaluate under the compute deadline.
func (s *Server) evaluateWithin(c echo.Context, f *designForm) (*evaluation, error) {
	return computeWithLookup(s, c, func(find cellLookup) (*evaluation, error) { return evaluate(f, find), nil })
}

// measureWithin is measure under the compute deadline: a measurement log
// may hold up to sizing.MeasurementCSVMaxRows rows, which takes seconds to
// read and fit. A deadline error is marked as a measurement's, whose
// message asks for a shorter log.
func (s *Server) measureWithin(c echo.Context, in measureInput) (*measureOutcome, error) {
	out, err := computeWithLookup(s, c, func(find cellLookup) (*measureOutcome, error) { return measure(in, find) })
	var de *deadlineError
	if errors.As(err, &de) {
		de.measurement = true
	}
	return out, err
}

// closableLookup is a cell lookup that finds nothing once closed; close
// waits for a lookup in progress to finish.
type closableLookup struct {
	mu     sync.RWMutex
	closed bool
	lookup cellLookup
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
