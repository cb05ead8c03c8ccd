package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"strconv"
	"strings"
	"time"

	"unshelved/compare"
	"unshelved/compare/workspace"
)

// runJSON is one line of the runs list.
type runJSON struct {
	ID       int64  `json:"id"`
	Kind     string `json:"kind"`
	Status   string `json:"status"`
	Started  string `json:"started"`
	Finished string `json:"finished"`
	Version  string `json:"version"`
	Seed     uint64 `json:"seed"`
	Reviews  int    `json:"reviews"`
	Size     int64  `json:"size"`
	Options  string `json:"options"`
}

func timeCell(t time.Time) string {
	if t.IsZero() {
		return ""
	}
	return t.UTC().Format(time.RFC3339)
}

// byteSize formats a size for people.
func byteSize(n int64) string {
	switch {
	case n >= 1<<20:
		return fmt.Sprintf("%.1f MB", float64(n)/(1<<20))
	case n >= 1<<10:
		return fmt.Sprintf("%.1f KB", float64(n)/(1<<10))
	}
	return fmt.Sprintf("%d B", n)
}

// showSummaryText prints a stored summary's JSON text in the chosen
// format.
func showSummaryText(g *globals, run workspace.Run, js []byte) error {
	switch g.Format {
	case "json":
		var buf bytes.Buffer
		if err := json.Indent(&buf, js, "", "  "); err != nil {
			return err
		}
		buf.WriteByte('\n')
		_, err := g.IO.Out.Write(buf.Bytes())
		return err
	case "jsonl":
		_, err := g.IO.Out.Write(append(js, '\n'))
		return err
	}
	var s compare.Summary
	if err := json.Unmarshal(js, &s); err != nil {
		return fmt.Errorf("decode summary run %d: %w", run.ID, err)
	}
	return render(g.IO.Out, g.Format, s, summaryGrid([]storedSummary{{RunID: run.ID, Summary: s}}))
}

var diffColumns = []string{"review_id", "field", "before", "after", "difference"}

// diffOutput writes the review diffs as they come (the table at the end).
type diffOutput struct {
	g             *globals
	first, second int64
	json          *jsonStream
	csv           *csvStream
	rows          [][]string
}

func newDiffOutput(g *globals, indent bool, first, second int64) *diffOutput {
	o := &diffOutput{g: g, first: first, second: second}
	switch g.Format {
	case "json", "jsonl":
		o.json = &jsonStream{w: g.IO.Out, lines: g.Format == "jsonl", indent: indent || g.IO.OutIsTerminal}
	case "csv":
		o.csv = newCSVStream(g.IO.Out, diffColumns)
	}
	return o
}

func (o *diffOutput) add(d workspace.ReviewDiff) error {
	if o.json != nil {
		js, err := workspace.CompactJSON(d)
		if err != nil {
			return err
		}
		return o.json.add(js)
	}
	var rows [][]string
	switch {
	case !d.InSecond:
		rows = append(rows, []string{d.ReviewID, "(review)", "audited", "absent", ""})
	case !d.InFirst:
		rows = append(rows, []string{d.ReviewID, "(review)", "absent", "audited", ""})
	}
	for _, c := range d.Changes {
		rows = append(rows, []string{d.ReviewID, c.Field, rawCell(c.Before), rawCell(c.After), fullPtr(c.Difference)})
	}
	if o.csv != nil {
		return o.csv.add(rows)
	}
	for _, r := range rows {
		if x, err := strconv.ParseFloat(r[4], 64); err == nil {
			r[4] = strconv.FormatFloat(x, 'g', 4, 64)
		}
		o.rows = append(o.rows, r)
	}
	return nil
}

// rawCell is a JSON scalar as a cell: strings unquoted, null empty.
func rawCell(raw json.RawMessage) string {
	s := string(raw)
	if s == "null" {
		return ""
	}
	var str string
	if strings.HasPrefix(s, `"`) && json.Unmarshal(raw, &str) == nil {
		return str
	}
	return s
}

func (o *diffOutput) close() error {
	switch {
	case o.json != nil:
		return o.json.close()
	case o.csv != nil:
		return o.csv.close()
	}
	w := o.g.IO.Out
	if len(o.rows) == 0 {
		_, err := fmt.Fprintf(w, "Runs %d and %d give the same results for every review.\n", o.first, o.second)
		return err
	}
	if err := writeTable(w, []string{"review", "field", fmt.Sprintf("run %d", o.first), fmt.Sprintf("run %d", o.second), "difference"}, o.rows); err != nil {
		return err
	}
	return writeLines(w, []string{
		fmt.Sprintf("Difference = run %d - run %d. Lists (studies, funnel points, warnings) are not compared; see --format json of each run.", o.second, o.first),
	})
}
