package main

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"

	"unshelved/compare"
	"unshelved/compare/workspace"
	"unshelved/ingest"
)

// scanWriter streams scan results: JSON array elements and CSV rows as
// they come, the table once all are in.
type scanWriter struct {
	w      io.Writer
	format string
	level  float64
	n      int
	cw     *csv.Writer
	js     *jsonStream
	table  [][]string
}

func newScanWriter(w io.Writer, format string, level float64) *scanWriter {
	return &scanWriter{w: w, format: format, level: level}
}

var scanColumns = []string{
	"question_id", "measure", "unit", "better", "eligible", "accepted",
	"linked_k", "linked_estimate", "linked_se", "linked_ci_low", "linked_ci_high", "linked_tau2",
	"all_k", "all_estimate", "all_se", "all_ci_low", "all_ci_high", "all_tau2", "ci_method",
	"shift_absolute", "shift_ci_low", "shift_ci_high", "shift_ci_method", "shift_sd_units", "shift_toward",
	"overstatement_sd", "overstatement_ci_low", "overstatement_ci_high",
	"subgroup_difference", "subgroup_se", "subgroup_ci_low", "subgroup_ci_high", "subgroup_p",
	"unlinked_share", "linked_by_pmid_rate", "missing_k", "missing_enrollment",
}

func scanCSVRow(r compare.ScanResult) []string {
	var sh compare.Shift
	if r.Shift != nil {
		sh = *r.Shift
	}
	var sg compare.Subgroup
	if r.Subgroup != nil {
		sg = *r.Subgroup
	}
	l, a := r.Linked, r.All
	return []string{r.QuestionID, r.Measure, r.Unit, r.Better, fmt.Sprint(r.Flow.Eligible), fmt.Sprint(r.Flow.Accepted),
		fmt.Sprint(l.K), fullPtr(l.Estimate), fullPtr(l.SE), fullPtr(l.CILow), fullPtr(l.CIHigh), fullPtr(l.Tau2),
		fmt.Sprint(a.K), fullPtr(a.Estimate), fullPtr(a.SE), fullPtr(a.CILow), fullPtr(a.CIHigh), fullPtr(a.Tau2), a.CIMethod,
		fullPtr(sh.Absolute), fullPtr(sh.CILow), fullPtr(sh.CIHigh), sh.CIMethod, fullPtr(sh.SDUnits), sh.Toward,
		fullPtr(sh.OverstatementSD), fullPtr(sh.OverstatementCILow), fullPtr(sh.OverstatementCIHigh),
		fullPtr(sg.Difference), fullPtr(sg.SE), fullPtr(sg.CILow), fullPtr(sg.CIHigh), fullPtr(sg.P),
		fullPtr(r.UnlinkedShare), fullPtr(r.LinkedByPMIDRate), fmt.Sprint(r.Missing.K), fmt.Sprint(r.Missing.Enrollment)}
}

func poolCell(p compare.ScanPool) string {
	if p.K == 0 {
		return "-"
	}
	return fmt.Sprintf("%d: %s", p.K, estimateCell(compare.Estimate{Estimate: p.Estimate, CILow: p.CILow, CIHigh: p.CIHigh}))
}

func (s *scanWriter) add(r compare.ScanResult) error {
	if s.format == "json" || s.format == "jsonl" {
		var buf bytes.Buffer
		enc := json.NewEncoder(&buf)
		enc.SetEscapeHTML(false)
		if err := enc.Encode(r); err != nil {
			return err
		}
		return s.addJSON(r, bytes.TrimSuffix(buf.Bytes(), []byte("\n")))
	}
	return s.addJSON(r, nil)
}

// addJSON adds a result whose compact JSON is js (as stored with a run).
func (s *scanWriter) addJSON(r compare.ScanResult, js []byte) error {
	defer func() { s.n++ }()
	switch s.format {
	case "json", "jsonl":
		if s.js == nil {
			s.js = &jsonStream{w: s.w, lines: s.format == "jsonl", indent: s.format == "json"}
		}
		return s.js.add(js)
	case "csv":
		if s.cw == nil {
			s.cw = csv.NewWriter(s.w)
			if err := s.cw.Write(scanColumns); err != nil {
				return err
			}
		}
		row := scanCSVRow(r)
		for i := range row {
			row[i] = ingest.GuardCell(row[i])
		}
		if err := s.cw.Write(row); err != nil {
			return err
		}
		s.cw.Flush()
		return s.cw.Error()
	}
	shift, over := "-", "-"
	if sh := r.Shift; sh != nil {
		shift = estimateCell(compare.Estimate{Estimate: sh.Absolute, CILow: sh.CILow, CIHigh: sh.CIHigh})
		over = estimateCell(compare.Estimate{Estimate: sh.OverstatementSD, CILow: sh.OverstatementCILow, CIHigh: sh.OverstatementCIHigh})
	}
	var p *float64
	if r.Subgroup != nil {
		p = r.Subgroup.P
	}
	pct := func(x *float64) string {
		if x == nil {
			return "-"
		}
		return round(100**x, 0) + "%"
	}
	s.table = append(s.table, []string{r.QuestionID + " (" + r.Measure + ")", poolCell(r.Linked), poolCell(r.All),
		shift, over, roundPtr(p, 3), pct(r.UnlinkedShare), pct(r.LinkedByPMIDRate), fmt.Sprint(r.Missing.K)})
	return nil
}

func (s *scanWriter) finish() error {
	switch s.format {
	case "json", "jsonl":
		if s.js == nil {
			s.js = &jsonStream{w: s.w, lines: s.format == "jsonl", indent: s.format == "json"}
		}
		return s.js.close()
	case "csv":
		if s.cw == nil {
			return writeCSV(s.w, scanColumns, nil)
		}
		return nil
	}
	header := []string{"question", "linked k: estimate [CI]", "all k: estimate [CI]", "shift [CI]", "overstatement SD [CI]", "subgroup p",
		"unlinked share", "PMID rate", "no results"}
	if err := writeTable(s.w, header, s.table); err != nil {
		return err
	}
	return writeLines(s.w, append([]string{
		fmt.Sprintf("Registry-internal comparison: posted results of trials whose record links a publication (linked) vs all accepted trials, %g%% intervals.", 100*s.level),
		"Shift = all - linked random-effects estimate; overstatement SD > 0: the linked trials overstate the benefit (in pooled SDs).",
		"Subgroup p tests unlinked - linked; unlinked share is of randomized participants; PMID rate: pooled trials whose record gives a PMID.",
		"A missing RESULT reference does not prove non-publication: registry links to publications are incomplete.",
	}, cautions...))
}

// showScanRun re-prints a stored scan run in question order.
func showScanRun(ctx context.Context, g *globals, db *workspace.DB, run workspace.Run) error {
	var o struct {
		Audit struct {
			Level float64 `json:"level"`
		} `json:"audit"`
	}
	if err := json.Unmarshal([]byte(run.Options), &o); err != nil || !(o.Audit.Level > 0 && o.Audit.Level < 1) {
		return fmt.Errorf("run %d: options hold no confidence level: %s", run.ID, run.Options)
	}
	out := newScanWriter(g.IO.Out, g.Format, o.Audit.Level)
	err := db.EachRunResult(ctx, run.ID, func(id string, js []byte) error {
		var r compare.ScanResult
		if err := json.Unmarshal(js, &r); err != nil {
			return fmt.Errorf("decode question %s: %w", id, err)
		}
		return out.addJSON(r, js)
	})
	if err != nil {
		return err
	}
	return out.finish()
}
