package main

import (
	"io"
	"os"
	"time"

	"golang.org/x/term"
)

// IO holds the streams and environment a command may use. Tests build one
// over buffers; nothing in this package touches os.Stdout directly.
type IO struct {
	In            io.Reader
	Out           io.Writer
	ErrOut        io.Writer
	ErrIsTerminal bool // progress bars only when stderr is a terminal
	OutIsTerminal bool // JSON is indented by default only on a terminal
	Getenv        func(string) string
	Now           func() time.Time
}

func defaultIO() *IO {
	return &IO{
		In:            os.Stdin,
		Out:           os.Stdout,
		ErrOut:        os.Stderr,
		ErrIsTerminal: isTerminal(os.Stderr),
		OutIsTerminal: isTerminal(os.Stdout),
		Getenv:        os.Getenv,
		Now:           time.Now,
	}
}

// isTerminal reports whether f is a terminal (not merely a character
// device: /dev/null is one too).
func isTerminal(f *os.File) bool {
	return term.IsTerminal(int(f.Fd()))
}

// now is the injected clock, or the real one.
func (io *IO) now() time.Time {
	if io.Now != nil {
		return io.Now()
	}
	return time.Now()
}
