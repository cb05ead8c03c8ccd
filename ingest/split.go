package ingest

import (
	"bytes"
	"io"
)

// splitter cuts a JSON byte stream into raw values without decoding them,
// holding only a bounded window plus the value being cut. It tracks the
// line number and can copy the bytes it consumes into a record buffer.
type splitter struct {
	r        io.Reader
	buf      []byte
	pos, end int
	err      error // sticky read error, io.EOF at the end
	line     int   // 1-based line of buf[pos]
	rec      *[]byte
	over     bool // rec reached MaxRecordBytes; later bytes were dropped
}

func newSplitter(r io.Reader) *splitter {
	return &splitter{r: r, buf: make([]byte, 256<<10), line: 1}
}

// fill makes sure unread bytes are buffered; false at the end or on error.
func (s *splitter) fill() bool {
	for s.pos >= s.end {
		if s.err != nil {
			return false
		}
		n, err := s.r.Read(s.buf)
		s.pos, s.end = 0, n
		if err != nil {
			s.err = err
		}
	}
	return true
}

// readErr is the read error other than io.EOF.
func (s *splitter) readErr() error {
	if s.err == io.EOF {
		return nil
	}
	return s.err
}

// take consumes buf[pos:i].
func (s *splitter) take(i int) {
	chunk := s.buf[s.pos:i]
	s.line += bytes.Count(chunk, []byte{'\n'})
	if s.rec != nil && !s.over {
		if len(*s.rec)+len(chunk) > MaxRecordBytes {
			s.over = true
		} else {
			*s.rec = append(*s.rec, chunk...)
		}
	}
	s.pos = i
}

// peek skips whitespace and returns the next byte; ok is false at the end.
func (s *splitter) peek() (byte, bool) {
	for s.fill() {
		i := s.pos
		for i < s.end && isSpace(s.buf[i]) {
			i++
		}
		s.take(i)
		if i < s.end {
			return s.buf[i], true
		}
	}
	return 0, false
}

func isSpace(c byte) bool { return c == ' ' || c == '\n' || c == '\t' || c == '\r' }

// byte1 consumes one byte.
func (s *splitter) byte1() {
	s.take(s.pos + 1)
}

// value consumes one JSON value starting at the next significant byte. It
// checks only the nesting of brackets and strings; the parser checks the
// rest. ok is false when the input ends inside the value.
func (s *splitter) value() (ok bool) {
	c, more := s.peek()
	if !more {
		return false
	}
	depth, inStr, esc := 0, false, false
	switch c {
	case '{', '[':
		depth = 1
	case '"':
		inStr = true
	default:
		// A scalar: runs to the next delimiter.
		for s.fill() {
			i := s.pos
			for i < s.end && !isSpace(s.buf[i]) && s.buf[i] != ',' && s.buf[i] != ']' && s.buf[i] != '}' && s.buf[i] != ':' {
				i++
			}
			s.take(i)
			if i < s.end {
				return true
			}
		}
		return s.readErr() == nil
	}
	s.byte1()
	for s.fill() {
		b := s.buf[s.pos:s.end]
		for i := 0; i < len(b); i++ {
			c := b[i]
			if inStr {
				switch {
				case esc:
					esc = false
				case c == '\\':
					esc = true
				case c == '"':
					inStr = false
					if depth == 0 {
						s.take(s.pos + i + 1)
						return true
					}
				}
				continue
			}
			switch c {
			case '"':
				inStr = true
			case '{', '[':
				depth++
			case '}', ']':
				depth--
				if depth == 0 {
					s.take(s.pos + i + 1)
					return true
				}
			}
		}
		s.take(s.end)
	}
	return false
}
