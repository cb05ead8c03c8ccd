package ingest

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
	"time"
)

// csvTable reads one of our CSV formats: a header row naming the columns
// (in any order; unknown ones ignored unless close to one of ours, see
// columns.CheckHeader), UTF-8 with an optional BOM, CRLF or LF line ends,
// empty lines skipped, fields separated by commas (or the separator given
// with WithDelimiter).
type csvTable struct {
	src  Source
	r    *csv.Reader
	col  map[string]int
	row  []string
	line int
}

// newCSVTable reads the header and checks that the required columns exist.
func newCSVTable(r io.Reader, src Source, required ...string) (*csvTable, *ParseError, error) {
	return newTable(r, src, columns{required: required})
}

// newTable reads the header and checks it against the format's columns.
func newTable(r io.Reader, src Source, spec columns) (*csvTable, *ParseError, error) {
	r, comma := delimiterOf(r)
	br := bufio.NewReader(r)
	if b, err := br.Peek(3); err == nil && bytes.Equal(b, []byte("\xef\xbb\xbf")) {
		br.Discard(3)
	}
	first, _ := br.Peek(4096)
	cr := csv.NewReader(br)
	cr.Comma = comma
	cr.FieldsPerRecord = -1
	cr.ReuseRecord = true
	t := &csvTable{src: src, r: cr, col: map[string]int{}}
	header, err := cr.Read()
	if err == io.EOF {
		return nil, &ParseError{File: src.Path, Line: 1, Err: errorf(ErrEmpty, "no header row")}, nil
	}
	if err != nil {
		if pe := t.csvError(err); pe != nil {
			return nil, pe, nil
		}
		return nil, nil, fmt.Errorf("read %s: %w", src.Path, err)
	}
	line, _ := cr.FieldPos(0)
	if h := delimiterHint(header, first, comma); h != "" {
		return nil, &ParseError{File: src.Path, Line: line, Err: errorf(ErrHeader, "%s", h)}, nil
	}
	for i, h := range header {
		h = strings.ToLower(strings.TrimSpace(h))
		if _, dup := t.col[h]; dup && h != "" {
			return nil, &ParseError{File: src.Path, Line: line, Field: h, Err: errorf(ErrBadValue, "column named twice in the header")}, nil
		}
		t.col[h] = i
	}
	if msg := spec.CheckHeader(header); msg != "" {
		return nil, &ParseError{File: src.Path, Line: line, Err: errorf(ErrHeader, "%s", msg)}, nil
	}
	return t, nil, nil
}

// next reads the next row; at the end it returns false. A CSV syntax error
// ends the table and is returned as a *ParseError.
func (t *csvTable) next() (bool, *ParseError, error) {
	for {
		row, err := t.r.Read()
		if err == io.EOF {
			return false, nil, nil
		}
		if err != nil {
			if pe := t.csvError(err); pe != nil {
				return false, pe, nil
			}
			return false, nil, fmt.Errorf("read %s: %w", t.src.Path, err)
		}
		t.line, _ = t.r.FieldPos(0)
		blank := true
		for _, f := range row {
			if strings.TrimSpace(f) != "" {
				blank = false
				break
			}
		}
		if blank {
			continue
		}
		t.row = row
		return true, nil, nil
	}
}

func (t *csvTable) csvError(err error) *ParseError {
	var ce *csv.ParseError
	if errors.As(err, &ce) {
		return &ParseError{File: t.src.Path, Line: ce.Line, Err: errorf(ErrCSVSyntax, "%v", ce.Err)}
	}
	return nil
}

// get returns the trimmed value of a column, "" when the column is absent.
func (t *csvTable) get(name string) string {
	i, ok := t.col[name]
	if !ok || i >= len(t.row) {
		return ""
	}
	return strings.TrimSpace(t.row[i])
}

func (t *csvTable) source() Source {
	return Source{Path: t.src.Path, SHA256: t.src.SHA256, Position: "line " + strconv.Itoa(t.line)}
}

// rowErrors gathers the first problem of a row.
type rowErrors struct {
	t      *csvTable
	record string
	err    *ParseError
}

func (e *rowErrors) fail(field string, kind error, format string, args ...any) {
	if e.err == nil {
		e.err = &ParseError{File: e.t.src.Path, Line: e.t.line, Record: e.record, Field: field, Err: errorf(kind, format, args...)}
	}
}

func (e *rowErrors) required(field string) string {
	v := e.t.get(field)
	if v == "" {
		e.fail(field, ErrMissing, "empty")
	}
	return v
}

// float reads an optional number; "" gives nil.
func (e *rowErrors) float(field string) *float64 {
	s := e.t.get(field)
	if s == "" {
		return nil
	}
	n := ParseNum(s)
	if !n.OK {
		e.notNumber(field, s, "not a number: %q")
		return nil
	}
	return &n.Value
}

// integer reads an optional integer; "" gives nil.
func (e *rowErrors) integer(field string) *int {
	s := e.t.get(field)
	if s == "" {
		return nil
	}
	v, err := strconv.Atoi(s)
	if err != nil {
		e.notNumber(field, s, "not an integer: %q")
		return nil
	}
	return &v
}

// notNumber rejects a value that should be a number, with a hint when it
// was written with a decimal comma.
func (e *rowErrors) notNumber(field, s, format string) {
	if h := decimalCommaHint(s); h != "" {
		e.fail(field, ErrBadValue, "%s", h)
		return
	}
	e.fail(field, ErrBadValue, format, s)
}

func (e *rowErrors) enum(field string, allowed ...string) string {
	s := e.t.get(field)
	for _, a := range allowed {
		if strings.EqualFold(s, a) {
			return a
		}
	}
	e.fail(field, ErrBadValue, "%q is not one of %s", s, strings.Join(quoteAll(allowed), ", "))
	return ""
}

func (e *rowErrors) boolean(field string) bool {
	switch s := strings.ToLower(e.t.get(field)); s {
	case "", "no", "false", "0":
		return false
	case "yes", "true", "1":
		return true
	default:
		e.fail(field, ErrBadValue, "not yes/no/true/false/1/0: %q", e.t.get(field))
		return false
	}
}

// date reads an optional yyyy-MM-dd date.
func (e *rowErrors) date(field string) string {
	s := e.t.get(field)
	if s == "" {
		return ""
	}
	if _, err := time.Parse("2006-01-02", s); err != nil {
		e.fail(field, ErrBadValue, "not a yyyy-MM-dd date: %q", s)
		return ""
	}
	return s
}

// registryDate reads an optional yyyy, yyyy-MM or yyyy-MM-dd date.
func (e *rowErrors) registryDate(field string) string {
	s := e.t.get(field)
	if s == "" {
		return ""
	}
	for _, layout := range []string{"2006-01-02", "2006-01", "2006"} {
		if len(s) == len(layout) {
			if _, err := time.Parse(layout, s); err == nil {
				return s
			}
		}
	}
	e.fail(field, ErrBadValue, "not a yyyy, yyyy-MM or yyyy-MM-dd date: %q", s)
	return ""
}

func quoteAll(s []string) []string {
	out := make([]string, len(s))
	for i, v := range s {
		out[i] = strconv.Quote(v)
	}
	return out
}

// splitList splits a ';'-separated list, trimming items and dropping empty ones.
func splitList(s string) []string {
	if s == "" {
		return nil
	}
	var out []string
	for _, p := range strings.Split(s, ";") {
		if p = strings.TrimSpace(p); p != "" {
			out = append(out, p)
		}
	}
	return out
}
