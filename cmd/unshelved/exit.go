package main

import (
	"context"
	"errors"
	"fmt"
)

// Exit codes. Scripts rely on these; keep them stable.
const (
	exitOK          = 0   // success
	exitError       = 1   // runtime error: the work could not finish
	exitUsage       = 2   // usage or flag error
	exitRejected    = 3   // finished, but some input records were rejected
	exitInterrupted = 130 // interrupted (Ctrl-C)
)

// flagError marks a usage mistake; Main prints the usage hint with it.
type flagError struct{ err error }

func (e *flagError) Error() string { return e.err.Error() }
func (e *flagError) Unwrap() error { return e.err }

func flagErrorf(format string, args ...any) error {
	return &flagError{err: fmt.Errorf(format, args...)}
}

// rejectedError reports a run that finished while rejecting records (or,
// with what set, reviews). The reasons are printed before it, even under
// --quiet, so the message itself only counts.
type rejectedError struct {
	n    int
	what [2]string // singular and plural phrase; zero means "record rejected"
}

func (e *rejectedError) Error() string {
	what := e.what
	if what[0] == "" {
		what = [2]string{"record rejected", "records rejected"}
	}
	return countOf(e.n, what[0], what[1])
}

// countOf writes "1 review" or "3 reviews".
func countOf(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return fmt.Sprintf("%d %s", n, many)
}

// exitCode maps an error from a command to the process exit code.
func exitCode(err error) int {
	var fe *flagError
	var re *rejectedError
	switch {
	case err == nil:
		return exitOK
	case errors.Is(err, context.Canceled):
		return exitInterrupted
	case errors.As(err, &fe):
		return exitUsage
	case errors.As(err, &re):
		return exitRejected
	default:
		return exitError
	}
}
