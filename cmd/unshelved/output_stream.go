package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"io"

	"unshelved/ingest"
)

// jsonStream writes the items of a JSON array one at a time, as they
// come, from each item's compact JSON text: the same bytes as
// writeJSON of the whole array when indent is set, or of json.Marshal
// plus a newline when not (for "jsonl", one item per line and no
// brackets). The writer is flushed after each item when it can be.
type jsonStream struct {
	w      io.Writer
	lines  bool // jsonl
	indent bool
	n      int
	buf    []byte
}

func (s *jsonStream) add(js []byte) error {
	b := s.buf[:0]
	switch {
	case s.lines:
	case s.n == 0 && s.indent:
		b = append(b, "[\n  "...)
	case s.n == 0:
		b = append(b, '[')
	case s.indent:
		b = append(b, ",\n  "...)
	default:
		b = append(b, ',')
	}
	if s.indent && !s.lines {
		var out bytes.Buffer
		if err := json.Indent(&out, js, "  ", "  "); err != nil {
			return err
		}
		b = append(b, out.Bytes()...)
	} else {
		b = append(b, js...)
	}
	if s.lines {
		b = append(b, '\n')
	}
	s.n++
	s.buf = b
	if _, err := s.w.Write(b); err != nil {
		return err
	}
	return flush(s.w)
}

func (s *jsonStream) close() error {
	var end string
	switch {
	case s.lines:
		return nil
	case s.n == 0:
		end = "[]\n"
	case s.indent:
		end = "\n]\n"
	default:
		end = "]\n"
	}
	if _, err := io.WriteString(s.w, end); err != nil {
		return err
	}
	return flush(s.w)
}

// flush flushes w when it buffers.
func flush(w io.Writer) error {
	if f, ok := w.(interface{ Flush() error }); ok {
		return f.Flush()
	}
	return nil
}

// csvStream writes CSV rows as they come, after the header.
type csvStream struct {
	cw     *csv.Writer
	header []string
	n      int
}

func newCSVStream(w io.Writer, header []string) *csvStream {
	return &csvStream{cw: csv.NewWriter(w), header: header}
}

func (s *csvStream) add(rows [][]string) error {
	if s.n == 0 {
		if err := s.cw.Write(s.header); err != nil {
			return err
		}
	}
	s.n++
	for _, r := range rows {
		safe := make([]string, len(r))
		for i, c := range r {
			safe[i] = ingest.GuardCell(c)
		}
		if err := s.cw.Write(safe); err != nil {
			return err
		}
	}
	s.cw.Flush()
	return s.cw.Error()
}

func (s *csvStream) close() error {
	if s.n == 0 {
		return s.add(nil)
	}
	return nil
}
