package main

import (
	"encoding/json"
	"fmt"
	"io"
	"reflect"
	"strings"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/tw"
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
