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

// rejectedError reports a run that finished while rejecting records.
type rejectedError struct{ n int }

func (e *rejectedError) Error() string {
	return fmt.Sprintf("%d record(s) rejected; see the messages above", e.n)
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
