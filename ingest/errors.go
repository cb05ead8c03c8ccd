package ingest

import (
	"errors"
	"fmt"
	"strconv"
	"strings"
)

// ParseError is one rejected record or file. File is the path as given,
// Line the 1-based line in that file (or in the zip entry or JSON line named
// by Position; 0 when unknown), Record the trial or row id, Field the JSON
// path or CSV column at fault.
type ParseError struct {
	File     string
	Line     int
	Position string // "studies[3]", "line 12", "entry 35/NCT02252835.json"; "" for a whole file or a CSV row
	Record   string
	Field    string
	Err      error
}

// Error gives "file:line: position: record R: field "f": reason", leaving
// out the parts that are empty.
func (e *ParseError) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		b.WriteByte(':')
		b.WriteString(strconv.Itoa(e.Line))
	}
	if e.Position != "" {
		b.WriteString(": ")
		b.WriteString(e.Position)
	}
	if e.Record != "" {
		b.WriteString(": record ")
		b.WriteString(e.Record)
	}
	if e.Field != "" {
		fmt.Fprintf(&b, ": field %q", e.Field)
	}
	b.WriteString(": ")
	if e.Err != nil {
		b.WriteString(e.Err.Error())
	} else {
		b.WriteString("invalid")
	}
	return b.String()
}

// Unwrap returns the underlying reason.
func (e *ParseError) Unwrap() error { return e.Err }

// Reasons a record or file is rejected. Check them with errors.Is on a
// *ParseError.
var (
	ErrSyntax       = errors.New("ingest: invalid JSON")
	ErrCSVSyntax    = errors.New("ingest: invalid CSV")
	ErrTooDeep      = errors.New("ingest: nesting too deep")
	ErrTooLarge     = errors.New("ingest: too large")
	ErrInvalidUTF8  = errors.New("ingest: invalid UTF-8")
	ErrWrongType    = errors.New("ingest: wrong type")
	ErrLegacyFormat = errors.New("ingest: legacy classic-API format")
	ErrNotStudy     = errors.New("ingest: not a study record")
	ErrMissingID    = errors.New("ingest: missing nctId")
	ErrDuplicateID  = errors.New("ingest: duplicate id")
	ErrNotJSON      = errors.New("ingest: not a JSON document")
	ErrEmpty        = errors.New("ingest: empty file")
	ErrUnreadable   = errors.New("ingest: unreadable file")
	ErrBadValue     = errors.New("ingest: bad value")
	ErrMissing      = errors.New("ingest: missing value")
	ErrHeader       = errors.New("ingest: header")
)

var reasonLabels = []struct {
	err   error
	label string
}{
	{ErrLegacyFormat, "legacy format"},
	{ErrSyntax, "invalid json"},
	{ErrCSVSyntax, "invalid csv"},
	{ErrTooDeep, "too deep"},
	{ErrTooLarge, "too large"},
	{ErrInvalidUTF8, "invalid utf-8"},
	{ErrWrongType, "wrong type"},
	{ErrNotStudy, "not a study"},
	{ErrMissingID, "missing id"},
	{ErrDuplicateID, "duplicate id"},
	{ErrNotJSON, "not json"},
	{ErrEmpty, "empty file"},
	{ErrUnreadable, "unreadable file"},
	{ErrBadValue, "bad value"},
	{ErrMissing, "missing value"},
	{ErrHeader, "bad header"},
}

// Reason gives a short stable label for why err rejected a record, as used
// in ScanSummary.RejectedByReason ("invalid json", "duplicate id", ...).
func Reason(err error) string {
	for _, r := range reasonLabels {
		if errors.Is(err, r.err) {
			return r.label
		}
	}
	return "other"
}

// detail wraps a sentinel with specifics: "invalid JSON: unexpected end".
type detail struct {
	kind error
	msg  string
}

func (d *detail) Error() string {
	if d.msg == "" {
		return strings.TrimPrefix(d.kind.Error(), "ingest: ")
	}
	return strings.TrimPrefix(d.kind.Error(), "ingest: ") + ": " + d.msg
}

func (d *detail) Unwrap() error { return d.kind }

func errorf(kind error, format string, args ...any) error {
	return &detail{kind: kind, msg: fmt.Sprintf(format, args...)}
}
