// Package fault classifies the failures of a run: bad input, an unusable
// output directory, an interruption or an internal defect, each with its
// process exit code; it also keeps the first error of a pool of goroutines
// and turns a worker's panic into an internal error. It knows nothing of
// specs, files or statistics.
package fault

import (
	"context"
	"errors"
	"fmt"
	"os"
	"runtime/debug"
	"sync"
)

// Kind is the class of a failure of a run; it decides the process exit code.
type Kind int

const (
	// Internal is a defect of swellgrid itself (exit code 1).
	Internal Kind = iota
	// BadInput is an input file or a spec that cannot be used as it is,
	// including a refused resume, update or merge (exit code 2).
	BadInput
	// Interrupted is a run stopped by a signal or its context (exit code 3);
	// its state is resumable.
	Interrupted
	// OutputUnusable is an output directory that is locked by another run
	// or cannot be written (exit code 4).
	OutputUnusable
)

// ExitCode is the documented exit code of the kind.
func (k Kind) ExitCode() int {
	switch k {
	case BadInput:
		return 2
	case Interrupted:
		return 3
	case OutputUnusable:
		return 4
	}
	return 1
}

func (k Kind) String() string {
	return [...]string{"internal error", "bad input or spec", "interrupted", "output directory unusable"}[k]
}

// Error is the one error type of the run machinery: a failure with its kind.
// Err says what, where and what to do; Stack, for an internal error caught
// from a panic, is the goroutine's stack.
type Error struct {
	Kind  Kind
	Err   error
	Stack []byte
}

func (e *Error) Error() string { return e.Err.Error() }
func (e *Error) Unwrap() error { return e.Err }

// inputError is an error that declares itself bad input wherever it is
// wrapped (export.LinkError: a link planted in a run directory; a damaged
// product of a finished run): the user's files, not the machine, must change.
type inputError interface{ IsBadInput() bool }

// KindOf is the kind of err: that of the outermost *Error it wraps;
// BadInput for an error that declares itself so (IsBadInput); Interrupted
// for a cancelled context; Internal otherwise.
func KindOf(err error) Kind {
	var e *Error
	var in inputError
	switch {
	case errors.As(err, &e):
		return e.Kind
	case errors.As(err, &in) && in.IsBadInput():
		return BadInput
	case errors.Is(err, context.Canceled), errors.Is(err, context.DeadlineExceeded):
		return Interrupted
	}
	return Internal
}

// ExitCode is the process exit code for err (0 for nil).
func ExitCode(err error) int {
	if err == nil {
		return 0
	}
	return KindOf(err).ExitCode()
}

// Input marks err as bad input or a bad spec (exit code 2), unless it
// already carries a kind (an internal error caught from a panic stays one).
func Input(err error) error { return withKind(BadInput, err) }

// Output marks err as an unusable output directory (exit code 4),
// unless it already carries a kind.
func Output(err error) error { return withKind(OutputUnusable, err) }

func withKind(k Kind, err error) error {
	var e *Error
	if errors.As(err, &e) {
		return err
	}
	if in := inputError(nil); errors.As(err, &in) && in.IsBadInput() {
		k = BadInput
	}
	return &Error{Kind: k, Err: err}
}

// IsOutput reports whether err is marked as an unusable output directory.
func IsOutput(err error) bool { return KindOf(err) == OutputUnusable }

// panicError turns a recovered panic value into an internal error with the
// stack of the goroutine that panicked.
func panicError(r any) error {
	return &Error{Kind: Internal, Err: fmt.Errorf("internal error: %v", r), Stack: debug.Stack()}
}

// Catch runs f and returns its error, or the panic it raised as an
// internal error: a panic in a worker goroutine must not end the process
// with the runtime's exit code 2, which means bad input.
func Catch(f func() error) (err error) {
	defer func() {
		if r := recover(); r != nil {
			err = panicError(r)
		}
	}()
	return f()
}

// First keeps the first error of a pool of goroutines.
type First struct {
	mu  sync.Mutex
	err error
}

func (f *First) Record(err error) {
	if err == nil {
		return
	}
	f.mu.Lock()
	if f.err == nil {
		f.err = err
	}
	f.mu.Unlock()
}

func (f *First) Get() error {
	f.mu.Lock()
	defer f.mu.Unlock()
	return f.err
}

func (f *First) Set() bool { return f.Get() != nil }

// testPanic names a stage (fit, stream) whose workers panic: a hook for the
// tests that an internal error exits 1 with its stack saved (environment
// variable SWELLGRID_TEST_PANIC). Unset in normal use.
var testPanic = os.Getenv("SWELLGRID_TEST_PANIC")

func Hook(stage string) {
	if testPanic == stage {
		panic("test panic in stage " + stage + " (SWELLGRID_TEST_PANIC)")
	}
}
