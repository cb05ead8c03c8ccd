package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"unshelved/compare"
	"unshelved/compare/workspace"
	"unshelved/store"
)

type runsOptions struct {
	g      *globals
	Indent bool
	Keep   int
}

func newCmdRuns(g *globals) *cobra.Command {
	opts := &runsOptions{g: g}
	cmd := &cobra.Command{
		Use:   "runs",
		Short: "List, re-show, compare and remove the stored audit and summary runs",
		Long: `Without a subcommand, list the stored runs: id, kind, status, start and
finish times, tool version, seed, the number of reviews stored and their size
in bytes.

Every audit, report and summary stores a run unless --no-store is given.
'runs show N' re-prints a stored run from what was stored, without
recomputing, in any --format; 'runs diff N M' lists per review what changed
between two audit runs; 'runs delete' and 'runs prune' remove runs and give
their space back to the file system.`,
		Args: exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error { return runsListRun(cmd, opts) },
	}
	cmd.PersistentFlags().BoolVar(&opts.Indent, "indent", false, "indent --format json even when stdout is not a terminal")
	show := &cobra.Command{
		Use:   "show N",
		Short: "Re-print a stored audit or summary run exactly as it was printed, in any --format",
		Args:  exactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			id, err := runID(args[0])
			if err != nil {
				return err
			}
			return showRun(cmd, g, id, "", opts.Indent)
		},
	}
	diff := &cobra.Command{
		Use:   "diff N M",
		Short: "Per review, the estimates and flags that differ between audit runs N and M",
		Long: `Compare two stored audit runs review by review: every number, flag and label
of each review's result that differs (lists such as the studies, the funnel
points and the warnings are not compared), and the reviews found in one run
only. Differences are M minus N.`,
		Args: exactArgs(2),
		RunE: func(cmd *cobra.Command, args []string) error {
			a, err := runID(args[0])
			if err != nil {
				return err
			}
			b, err := runID(args[1])
			if err != nil {
				return err
			}
			return runsDiffRun(cmd, opts, a, b)
		},
	}
	del := &cobra.Command{
		Use:   "delete N...",
		Short: "Delete stored runs and give their space back",
		Args:  minArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			var ids []int64
			for _, a := range args {
				id, err := runID(a)
				if err != nil {
					return err
				}
				ids = append(ids, id)
			}
			return runsDeleteRun(cmd, opts, ids)
		},
	}
	prune := &cobra.Command{
		Use:   "prune --keep K",
		Short: "Delete all but the K most recent runs of each kind",
		Args:  exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error {
			if !cmd.Flags().Changed("keep") || opts.Keep < 0 {
				return flagErrorf("--keep K is required: the number of most recent runs of each kind to keep (0 or more)")
			}
			return runsPruneRun(cmd, opts)
		},
	}
	prune.Flags().IntVar(&opts.Keep, "keep", 0, "number of most recent runs of each kind to keep")
	cmd.AddCommand(show, diff, del, prune)
	return cmd
}

func runID(s string) (int64, error) {
	id, err := strconv.ParseInt(s, 10, 64)
	if err != nil || id <= 0 {
		return 0, flagErrorf("run id %q is not a positive whole number; list the runs with 'unshelved runs'", s)
	}
	return id, nil
}

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

func runsListRun(cmd *cobra.Command, opts *runsOptions) error {
	g := opts.g
	db, err := g.openDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	runs, err := db.RunSummaries(cmd.Context())
	if err != nil {
		return err
	}
	out := []runJSON{}
	gr := grid{Columns: []string{"id", "kind", "status", "started", "finished", "version", "seed", "reviews", "size"}}
	var total int64
	for _, r := range runs {
		j := runJSON{ID: r.ID, Kind: r.Kind, Status: r.Status, Started: timeCell(r.Started), Finished: timeCell(r.Finished),
			Version: r.Version, Seed: r.Seed, Reviews: r.Reviews, Size: r.Bytes, Options: r.Options}
		out = append(out, j)
		total += r.Bytes
		row := []string{fmt.Sprint(j.ID), j.Kind, j.Status, j.Started, j.Finished, j.Version, fmt.Sprint(j.Seed), fmt.Sprint(j.Reviews)}
		gr.CSV = append(gr.CSV, append(row, fmt.Sprint(j.Size)))
		gr.Table = append(gr.Table, append(row, byteSize(j.Size)))
	}
	gr.Notes = []string{fmt.Sprintf("%s, %s of stored results. Re-print one with 'unshelved runs show N'.", countOf(len(runs), "run", "runs"), byteSize(total))}
	return render(g.IO.Out, g.Format, out, gr)
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

// showRun re-prints stored run id; kind, when not empty, is the kind the
// caller expects.
func showRun(cmd *cobra.Command, g *globals, id int64, kind string, indent bool) error {
	db, err := g.openDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	ctx := cmd.Context()
	run, err := db.Run(ctx, id)
	if errors.Is(err, store.ErrNotFound) {
		return fmt.Errorf("no run %d in workspace %s; list the runs with 'unshelved runs'", id, db.Path())
	}
	if err != nil {
		return err
	}
	if kind != "" && run.Kind != kind {
		return fmt.Errorf("run %d is a %s run, not an %s run; show it with 'unshelved runs show %d'", id, run.Kind, kind, id)
	}
	if run.Status != store.RunComplete {
		g.progressf("run %d is %s: it holds only the results stored before it stopped", id, run.Status)
	}
	switch run.Kind {
	case "audit":
		var o struct {
			Level float64 `json:"level"`
		}
		if err := json.Unmarshal([]byte(run.Options), &o); err != nil || !(o.Level > 0 && o.Level < 1) {
			return fmt.Errorf("run %d: options hold no confidence level: %s", id, run.Options)
		}
		out := newAuditOutput(g, o.Level, indent)
		err := db.EachRunResult(ctx, id, func(reviewID string, js []byte) error {
			if !out.wantsAudit() {
				return out.add(nil, js)
			}
			var a compare.ReviewAudit
			if err := json.Unmarshal(js, &a); err != nil {
				return fmt.Errorf("decode review %s: %w", reviewID, err)
			}
			return out.add(&a, js)
		})
		if err != nil {
			return err
		}
		return out.close()
	case "summary":
		js, err := db.RunResult(ctx, id, "")
		if err != nil {
			return fmt.Errorf("summary run %d (%s) holds no result: %w", id, run.Status, err)
		}
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
			return fmt.Errorf("decode summary run %d: %w", id, err)
		}
		return render(g.IO.Out, g.Format, s, summaryGrid([]storedSummary{{RunID: run.ID, Summary: s}}))
	case "scan":
		return showScanRun(ctx, g, db, run)
	}
	return fmt.Errorf("run %d is a %s run, which 'runs show' cannot print", id, run.Kind)
}

// fieldChange is one field that differs between two runs.
type fieldChange struct {
	Field      string          `json:"field"`
	Before     json.RawMessage `json:"before"`
	After      json.RawMessage `json:"after"`
	Difference *float64        `json:"difference"`
}

// reviewDiff is what changed in one review between two runs.
type reviewDiff struct {
	ReviewID string        `json:"review_id"`
	InFirst  bool          `json:"in_first"`
	InSecond bool          `json:"in_second"`
	Changes  []fieldChange `json:"changes"`
}

var diffColumns = []string{"review_id", "field", "before", "after", "difference"}

func runsDiffRun(cmd *cobra.Command, opts *runsOptions, first, second int64) error {
	g := opts.g
	db, err := g.openDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	ctx := cmd.Context()
	for _, id := range []int64{first, second} {
		r, err := db.Run(ctx, id)
		if errors.Is(err, store.ErrNotFound) {
			return fmt.Errorf("no run %d in workspace %s; list the runs with 'unshelved runs'", id, db.Path())
		}
		if err != nil {
			return err
		}
		if r.Kind != "audit" {
			return fmt.Errorf("run %d is a %s run; 'runs diff' compares audit runs", id, r.Kind)
		}
	}
	out := newDiffOutput(g, opts.Indent, first, second)
	seen := map[string]bool{}
	err = db.EachRunResult(ctx, first, func(reviewID string, js []byte) error {
		seen[reviewID] = true
		other, err := db.RunResult(ctx, second, reviewID)
		if errors.Is(err, store.ErrNotFound) {
			return out.add(reviewDiff{ReviewID: reviewID, InFirst: true, Changes: []fieldChange{}})
		}
		if err != nil {
			return err
		}
		changes, err := diffJSON(js, other)
		if err != nil {
			return fmt.Errorf("review %s: %w", reviewID, err)
		}
		if len(changes) == 0 {
			return nil
		}
		return out.add(reviewDiff{ReviewID: reviewID, InFirst: true, InSecond: true, Changes: changes})
	})
	if err != nil {
		return err
	}
	err = db.EachRunResult(ctx, second, func(reviewID string, _ []byte) error {
		if seen[reviewID] {
			return nil
		}
		return out.add(reviewDiff{ReviewID: reviewID, InSecond: true, Changes: []fieldChange{}})
	})
	if err != nil {
		return err
	}
	return out.close()
}

// diffJSON flattens two JSON objects into dotted paths of their scalar
// values (lists and the funnel plot's points are left out) and returns the
// paths whose values differ, in path order.
func diffJSON(a, b []byte) ([]fieldChange, error) {
	fa, err := flattenJSON(a)
	if err != nil {
		return nil, err
	}
	fb, err := flattenJSON(b)
	if err != nil {
		return nil, err
	}
	keys := map[string]bool{}
	for k := range fa {
		keys[k] = true
	}
	for k := range fb {
		keys[k] = true
	}
	var names []string
	for k := range keys {
		if fa[k] != fb[k] {
			names = append(names, k)
		}
	}
	sort.Strings(names)
	out := make([]fieldChange, 0, len(names))
	for _, k := range names {
		c := fieldChange{Field: k, Before: rawOrNull(fa[k], k, fa), After: rawOrNull(fb[k], k, fb)}
		x, errX := strconv.ParseFloat(fa[k], 64)
		y, errY := strconv.ParseFloat(fb[k], 64)
		if errX == nil && errY == nil {
			d := y - x
			c.Difference = &d
		}
		out = append(out, c)
	}
	return out, nil
}

// rawOrNull returns the JSON text of a path, null when the path is absent.
func rawOrNull(v, k string, m map[string]string) json.RawMessage {
	if _, ok := m[k]; !ok {
		return json.RawMessage("null")
	}
	return json.RawMessage(v)
}

func flattenJSON(js []byte) (map[string]string, error) {
	dec := json.NewDecoder(bytes.NewReader(js))
	dec.UseNumber()
	var v any
	if err := dec.Decode(&v); err != nil {
		return nil, err
	}
	out := map[string]string{}
	var walk func(prefix string, v any) error
	walk = func(prefix string, v any) error {
		switch x := v.(type) {
		case map[string]any:
			for k, e := range x {
				p := k
				if prefix != "" {
					p = prefix + "." + k
				}
				if p == "bias.funnel" {
					continue
				}
				if err := walk(p, e); err != nil {
					return err
				}
			}
		case []any:
		default:
			b, err := json.Marshal(x)
			if err != nil {
				return err
			}
			out[prefix] = string(b)
		}
		return nil
	}
	return out, walk("", v)
}

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

func (o *diffOutput) add(d reviewDiff) error {
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

func runsDeleteRun(cmd *cobra.Command, opts *runsOptions, ids []int64) error {
	g := opts.g
	db, err := g.openDBToWrite(cmd, false)
	if err != nil {
		return err
	}
	defer db.Close()
	return deleteRuns(cmd, g, db, ids)
}

func deleteRuns(cmd *cobra.Command, g *globals, db *store.DB, ids []int64) error {
	if len(ids) == 0 {
		g.progressf("runs: nothing to delete")
		return nil
	}
	reclaimed, err := db.DeleteRuns(cmd.Context(), ids)
	if errors.Is(err, store.ErrNotFound) {
		return fmt.Errorf("%w in workspace %s; nothing was deleted (list the runs with 'unshelved runs')", err, db.Path())
	}
	if err != nil {
		return err
	}
	names := make([]string, len(ids))
	for i, id := range ids {
		names[i] = fmt.Sprint(id)
	}
	msg := "their space is back to the file system"
	if !reclaimed {
		msg = "run 'unshelved db vacuum' once to give their space back to the file system (later deletions then do it at once)"
	}
	what := "runs"
	if len(names) == 1 {
		what = "run"
	}
	fmt.Fprintf(g.IO.Out, "deleted %s %s; %s\n", what, strings.Join(names, ", "), msg)
	return nil
}

func runsPruneRun(cmd *cobra.Command, opts *runsOptions) error {
	g := opts.g
	db, err := g.openDBToWrite(cmd, false)
	if err != nil {
		return err
	}
	defer db.Close()
	runs, err := db.Runs(cmd.Context(), "")
	if err != nil {
		return err
	}
	kept := map[string]int{}
	var drop []int64
	for i := len(runs) - 1; i >= 0; i-- { // newest first
		r := runs[i]
		if kept[r.Kind] < opts.Keep {
			kept[r.Kind]++
			continue
		}
		drop = append(drop, r.ID)
	}
	sort.Slice(drop, func(i, j int) bool { return drop[i] < drop[j] })
	return deleteRuns(cmd, g, db, drop)
}
