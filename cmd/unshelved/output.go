package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"reflect"
	"strconv"
	"strings"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/tw"

	"unshelved/analysis"
	"unshelved/ingest"
)

// This file is the only place that renders results. Commands build report
// values and hand them here with a header and rows for the table and CSV
// forms; JSON is the report value itself.

// grid is a rectangular view of a result. Header and Table are for people
// (rounded cells); Columns and CSV are for scripts (stable snake_case names,
// full precision). A nil Header means Columns serve both.
type grid struct {
	Header  []string
	Table   [][]string
	Columns []string
	CSV     [][]string
	Notes   []string // printed under the table (table format only)
	Extra   []titled // further tables printed after the notes (table format only)
}

// titled is an extra table with a title line.
type titled struct {
	Title  string
	Header []string
	Rows   [][]string
	Notes  []string
}

// render writes v in the chosen format: JSON from v, table or CSV from g.
func render(w io.Writer, format string, v any, g grid) error {
	switch format {
	case "json":
		return writeJSON(w, v)
	case "jsonl":
		return writeJSONLines(w, v)
	case "csv":
		return writeCSV(w, g.Columns, g.CSV)
	default:
		header := g.Header
		if header == nil {
			header = g.Columns
		}
		if err := writeTable(w, header, g.Table); err != nil {
			return err
		}
		if err := writeLines(w, g.Notes); err != nil {
			return err
		}
		for _, x := range g.Extra {
			if _, err := fmt.Fprintf(w, "\n%s\n", x.Title); err != nil {
				return err
			}
			if len(x.Rows) > 0 {
				if err := writeTable(w, x.Header, x.Rows); err != nil {
					return err
				}
			}
			if err := writeLines(w, x.Notes); err != nil {
				return err
			}
		}
		return nil
	}
}

func writeLines(w io.Writer, lines []string) error {
	for _, n := range lines {
		if _, err := fmt.Fprintln(w, n); err != nil {
			return err
		}
	}
	return nil
}

func writeJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	return enc.Encode(v)
}

// writeJSONLines writes v as compact JSON: each element of a slice on a
// line of its own, anything else on one line.
func writeJSONLines(w io.Writer, v any) error {
	rv := reflect.ValueOf(v)
	if rv.Kind() != reflect.Slice && rv.Kind() != reflect.Array {
		return writeCompactLine(w, v)
	}
	for i := range rv.Len() {
		if err := writeCompactLine(w, rv.Index(i).Interface()); err != nil {
			return err
		}
	}
	return nil
}

func writeCompactLine(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetEscapeHTML(false)
	return enc.Encode(v)
}

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

// writeTable prints a bordered table with the column names as given.
func writeTable(w io.Writer, header []string, rows [][]string) error {
	t := tablewriter.NewTable(w,
		tablewriter.WithHeaderAutoFormat(tw.Off),
		tablewriter.WithRowAutoWrap(tw.WrapNone),
		tablewriter.WithHeaderAlignment(tw.AlignLeft),
		tablewriter.WithRowAlignmentConfig(tw.CellAlignment{Global: tw.AlignLeft, PerColumn: columnAligns(len(header), rows)}),
	)
	t.Header(anySlice(header)...)
	for _, r := range rows {
		if err := t.Append(anySlice(r)...); err != nil {
			return err
		}
	}
	return t.Render()
}

// columnAligns right-aligns the columns that hold only numbers (and
// intervals or placeholders) and left-aligns text.
func columnAligns(n int, rows [][]string) []tw.Align {
	aligns := make([]tw.Align, n)
	for c := range aligns {
		aligns[c] = tw.AlignRight
		for _, r := range rows {
			if c < len(r) && !numericCell(r[c]) {
				aligns[c] = tw.AlignLeft
				break
			}
		}
	}
	return aligns
}

func numericCell(c string) bool {
	if c == "" || c == "-" {
		return true
	}
	switch c[0] {
	case '-', '+', '[', '<', '.', '0', '1', '2', '3', '4', '5', '6', '7', '8', '9':
		return !strings.ContainsAny(c, "abcdfghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ")
	}
	return false
}

func anySlice(s []string) []any {
	out := make([]any, len(s))
	for i, x := range s {
		out[i] = x
	}
	return out
}

// writeCSV writes RFC 4180 CSV. Cells that a spreadsheet would run as a
// formula are neutralised with a leading apostrophe.
func writeCSV(w io.Writer, header []string, rows [][]string) error {
	return newCSVStream(w, header).add(rows)
}

// full formats a number at full precision for CSV; NaN and Inf are empty.
func full(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return ""
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}

// fullPtr formats an optional number for CSV.
func fullPtr(x *float64) string {
	if x == nil {
		return ""
	}
	return full(*x)
}

// round formats a number for people with d decimals; NaN and Inf are "-".
func round(x float64, d int) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "-"
	}
	s := strconv.FormatFloat(x, 'f', d, 64)
	if strings.Trim(s, "-0.") == "" {
		s = strings.TrimPrefix(s, "-") // no "-0.00"
	}
	return s
}

func roundPtr(x *float64, d int) string {
	if x == nil {
		return "-"
	}
	return round(*x, d)
}

// pValue formats a p value for people, as everywhere ("< 0.001", else
// three decimals).
func pValue(p float64) string { return analysis.FormatP(p) }

func yesNo(b bool) string {
	if b {
		return "yes"
	}
	return "no"
}

// boolPtr writes an optional flag for CSV: true, false or empty for null.
func boolPtr(b *bool) string {
	if b == nil {
		return ""
	}
	return fmt.Sprint(*b)
}
