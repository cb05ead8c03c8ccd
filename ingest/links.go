package ingest

import (
	"encoding/csv"
	"io"
	"math"
	"strconv"
	"strings"
)

// The links file is both the proposals file that 'match --links' writes
// (one row per candidate outcome, with its class, score and reasons, for a
// person to decide on) and the decisions file that 'match --apply' and
// 'scan --links' read: WriteLinks and ReadLinks are its two halves.

// LinkFileColumns are the columns WriteLinks writes, in order. ReadLinks
// needs only those of LinksColumns' required set and reads the others
// when present.
var LinkFileColumns = []string{"review_id", "trial_id", "class", "outcome_index", "outcome_title", "time_frame",
	"treat_groups", "ctrl_groups", "flip", "unit_from", "score", "reasons", "decision"}

// WriteLinks writes links as a links file: a header of LinkFileColumns,
// then one row per link in the order given. A link whose OutcomeIndex is
// NoOutcomeIndex (a trial with no outcome proposed) has its outcome
// columns (outcome_index to unit_from) empty. Groups are joined by ';',
// flip is yes or no, a missing (or not finite) score is empty, numbers are written in
// their shortest exact form. Text cells that a spreadsheet would run as
// a formula are guarded (GuardCell).
func WriteLinks(w io.Writer, links []Link) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(LinkFileColumns); err != nil {
		return err
	}
	for _, l := range links {
		score := ""
		if l.Score != nil && !math.IsNaN(*l.Score) && !math.IsInf(*l.Score, 0) {
			score = strconv.FormatFloat(*l.Score, 'g', -1, 64)
		}
		idx, flip := "", ""
		if l.OutcomeIndex != NoOutcomeIndex {
			idx, flip = strconv.Itoa(l.OutcomeIndex), "no"
			if l.Flip {
				flip = "yes"
			}
		}
		row := []string{l.ReviewID, l.TrialID, l.Class, idx, l.OutcomeTitle, l.TimeFrame,
			strings.Join(l.TreatGroups, ";"), strings.Join(l.CtrlGroups, ";"), flip, l.UnitFrom, score, l.Reasons, l.Decision}
		for i := range row {
			row[i] = GuardCell(row[i])
		}
		if err := cw.Write(row); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// GuardCell guards a CSV cell against spreadsheet formula injection: a
// cell starting with =, +, @, tab or carriage return, or with - not
// followed by a number, gets a leading apostrophe. Negative numbers stay
// numbers.
func GuardCell(c string) string {
	if c == "" {
		return c
	}
	switch c[0] {
	case '=', '+', '@', '\t', '\r':
		return "'" + c
	case '-':
		if _, err := strconv.ParseFloat(c, 64); err == nil {
			return c
		}
		return "'" + c
	}
	return c
}

// unguardCell undoes GuardCell: an apostrophe that GuardCell would have
// added is dropped; any other cell is returned as it is.
func unguardCell(c string) string {
	if len(c) > 1 && c[0] == '\'' && GuardCell(c[1:]) == c {
		return c[1:]
	}
	return c
}

// ReadLinks reads a links file: review_id, trial_id, outcome_index
// (0-based), treat_groups and ctrl_groups (group ids joined by ';'), flip
// (yes|no|true|false|1|0, empty is no), decision (accept|reject|
// accept-duplicate|empty; accept-duplicate adds a trial that the audit
// would leave out as a copy of a published study) and
// the optional unit_from, class, outcome_title, time_frame, score (0..1),
// reasons, auto_accepted. A group in both lists is an error, and so is an
// accepted link without groups on either side. A text cell that
// WriteLinks guarded against spreadsheet formulas ("'=...") is read back
// without the apostrophe.
func ReadLinks(r io.Reader, src Source) ([]Link, []*ParseError, error) {
	t, pe, err := newTable(r, src, LinksColumns)
	if err != nil || pe != nil {
		return nil, pes(pe), err
	}
	var out []Link
	var bad []*ParseError
	for {
		ok, pe, err := t.next()
		if err != nil {
			return out, bad, err
		}
		if pe != nil {
			bad = append(bad, pe)
		}
		if !ok {
			return out, bad, nil
		}
		e := rowErrors{t: t, record: t.get("review_id") + "/" + t.get("trial_id") + "/" + t.get("outcome_index")}
		l := Link{
			ReviewID:     e.required("review_id"),
			TrialID:      e.required("trial_id"),
			TreatGroups:  splitList(t.get("treat_groups")),
			CtrlGroups:   splitList(t.get("ctrl_groups")),
			Flip:         e.boolean("flip"),
			UnitFrom:     unguardCell(t.get("unit_from")),
			Class:        t.get("class"),
			OutcomeTitle: unguardCell(t.get("outcome_title")),
			TimeFrame:    unguardCell(t.get("time_frame")),
			Score:        e.float("score"),
			Reasons:      unguardCell(t.get("reasons")),
			AutoAccepted: e.boolean("auto_accepted"),
			Source:       t.source(),
		}
		noResults := strings.EqualFold(l.Class, "no-results")
		switch idx := e.integer("outcome_index"); {
		case idx != nil && *idx < 0:
			e.fail("outcome_index", ErrBadValue, "negative: %q", t.get("outcome_index"))
		case idx != nil:
			l.OutcomeIndex = *idx
		case noResults && t.get("outcome_index") == "":
			// A trial with no results posted has no outcome to name.
			l.OutcomeIndex = NoOutcomeIndex
		default:
			e.fail("outcome_index", ErrMissing, "empty")
		}
		if t.get("decision") != "" {
			l.Decision = e.enum("decision", "accept", "reject", "accept-duplicate")
		}
		if l.Class != "" {
			l.Class = e.enum("class", "included", "possibly-included", "missed-publication", "registry-only", "no-results")
		}
		if l.Score != nil && (*l.Score < 0 || *l.Score > 1) {
			e.fail("score", ErrBadValue, "outside 0..1: %q", t.get("score"))
		}
		for _, g := range l.TreatGroups {
			for _, c := range l.CtrlGroups {
				if g == c {
					e.fail("ctrl_groups", ErrBadValue, "group %q is in both treat_groups and ctrl_groups", g)
				}
			}
		}
		if (l.Decision == "accept" || l.Decision == "accept-duplicate") && !noResults && (len(l.TreatGroups) == 0 || len(l.CtrlGroups) == 0) {
			e.fail(map[bool]string{true: "treat_groups", false: "ctrl_groups"}[len(l.TreatGroups) == 0], ErrMissing, "an accepted link needs groups on both sides")
		}
		if e.err != nil {
			bad = append(bad, e.err)
			continue
		}
		out = append(out, l)
	}
}
