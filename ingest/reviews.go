package ingest

import (
	"io"
	"strconv"
	"strings"
)

// ReadReviews reads reviews.csv: review_id, title, measure (MD|SMD),
// outcome, unit, better (lower|higher), timepoint_weeks, search_date
// (yyyy-MM-dd), conditions, interventions, comparator, mid. Lists are
// ';'-separated; timepoint_weeks and mid are optional numbers. Bad rows are
// returned as *ParseError and skipped; a repeated review_id is an error
// naming both lines. The error result is for reading failures only.
func ReadReviews(r io.Reader, src Source) ([]Review, []*ParseError, error) {
	t, pe, err := newTable(r, src, ReviewsColumns)
	if err != nil || pe != nil {
		return nil, pes(pe), err
	}
	var out []Review
	var bad []*ParseError
	seen := map[string]int{}
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
		e := rowErrors{t: t, record: t.get("review_id")}
		rv := Review{
			ReviewID:       e.required("review_id"),
			Title:          t.get("title"),
			Measure:        strings.ToUpper(e.enum("measure", "MD", "SMD")),
			Outcome:        e.required("outcome"),
			Unit:           t.get("unit"),
			Better:         e.enum("better", "lower", "higher"),
			TimepointWeeks: e.float("timepoint_weeks"),
			SearchDate:     e.date("search_date"),
			Conditions:     splitList(t.get("conditions")),
			Interventions:  splitList(t.get("interventions")),
			Comparator:     t.get("comparator"),
			MID:            e.float("mid"),
			Source:         t.source(),
		}
		if rv.TimepointWeeks != nil && *rv.TimepointWeeks < 0 {
			e.fail("timepoint_weeks", ErrBadValue, "negative: %q", t.get("timepoint_weeks"))
		}
		if first, dup := seen[rv.ReviewID]; dup && e.err == nil {
			e.fail("review_id", ErrDuplicateID, "%q already on line %d", rv.ReviewID, first)
		}
		if e.err != nil {
			bad = append(bad, e.err)
			continue
		}
		seen[rv.ReviewID] = t.line
		out = append(out, rv)
	}
}

func pes(pe *ParseError) []*ParseError {
	if pe == nil {
		return nil
	}
	return []*ParseError{pe}
}

// ReadStudies reads studies.csv: review_id, study, registry_id, year and
// either effect and se or treat_mean, treat_sd, treat_n, ctrl_mean,
// ctrl_sd, ctrl_n (both sets may be given), plus note. A row with neither
// complete set, a half-filled arm set, non-numeric values, se <= 0, sd < 0
// or n not a whole number >= 1 is a *ParseError; so is a repeated
// (review_id, study).
func ReadStudies(r io.Reader, src Source) ([]ReviewStudy, []*ParseError, error) {
	return readStudies(r, src, true)
}

// ReadMetaAnalysis reads one meta-analysis in studies.csv form for direct
// pooling: as ReadStudies, but the review_id column may be left out (or
// empty), since the file is one meta-analysis.
func ReadMetaAnalysis(r io.Reader, src Source) ([]ReviewStudy, []*ParseError, error) {
	return readStudies(r, src, false)
}

func readStudies(r io.Reader, src Source, needReview bool) ([]ReviewStudy, []*ParseError, error) {
	spec := StudiesColumns
	if !needReview {
		spec = columns{required: []string{"study"}, optional: append([]string{"review_id"}, StudiesColumns.optional...)}
	}
	t, pe, err := newTable(r, src, spec)
	if err != nil || pe != nil {
		return nil, pes(pe), err
	}
	var out []ReviewStudy
	var bad []*ParseError
	seen := map[[2]string]int{}
	effectCols := []string{"effect", "se"}
	armCols := []string{"treat_mean", "treat_sd", "treat_n", "ctrl_mean", "ctrl_sd", "ctrl_n"}
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
		e := rowErrors{t: t, record: strings.Trim(t.get("review_id")+"/"+t.get("study"), "/")}
		reviewID := t.get("review_id")
		if needReview {
			reviewID = e.required("review_id")
		}
		s := ReviewStudy{
			ReviewID:   reviewID,
			Study:      e.required("study"),
			RegistryID: t.get("registry_id"),
			Year:       e.integer("year"),
			Note:       t.get("note"),
			Source:     t.source(),
		}
		effectSet := filled(t, effectCols)
		armSet := filled(t, armCols)
		switch {
		case effectSet == 0 && armSet == 0:
			e.fail("effect", ErrMissing, "neither effect and se nor both arms' mean, sd and n")
		case effectSet == 1:
			e.fail(firstEmpty(t, effectCols), ErrMissing, "empty while %s is given", firstFilled(t, effectCols))
		case armSet > 0 && armSet < len(armCols):
			e.fail(firstEmpty(t, armCols), ErrMissing, "empty while %s is given (give all six arm columns or none)", firstFilled(t, armCols))
		}
		if effectSet == 2 {
			s.Effect, s.SE = e.float("effect"), e.float("se")
			if s.SE != nil && *s.SE <= 0 {
				e.fail("se", ErrBadValue, "must be positive: %q", t.get("se"))
			}
		}
		if armSet == len(armCols) {
			s.TreatMean, s.TreatSD, s.TreatN = e.float("treat_mean"), e.float("treat_sd"), e.count("treat_n")
			s.CtrlMean, s.CtrlSD, s.CtrlN = e.float("ctrl_mean"), e.float("ctrl_sd"), e.count("ctrl_n")
			for _, c := range []struct {
				name string
				sd   *float64
			}{{"treat_sd", s.TreatSD}, {"ctrl_sd", s.CtrlSD}} {
				if c.sd != nil && *c.sd < 0 {
					e.fail(c.name, ErrBadValue, "negative: %q", t.get(c.name))
				}
			}
		}
		key := [2]string{s.ReviewID, s.Study}
		if first, dup := seen[key]; dup && e.err == nil {
			e.fail("study", ErrDuplicateID, "%q of review %q already on line %d", s.Study, s.ReviewID, first)
		}
		if e.err != nil {
			bad = append(bad, e.err)
			continue
		}
		seen[key] = t.line
		out = append(out, s)
	}
}

// count reads a group size: a whole number >= 1 ("12.0" is accepted).
func (e *rowErrors) count(field string) *int {
	s := e.t.get(field)
	if s == "" {
		return nil
	}
	v, err := strconv.Atoi(s)
	if err != nil {
		n := ParseNum(s)
		if !n.OK || n.Value != float64(int(n.Value)) {
			e.notNumber(field, s, "not an integer: %q")
			return nil
		}
		v = int(n.Value)
	}
	if v < 1 {
		e.fail(field, ErrBadValue, "must be at least 1: %q", s)
		return nil
	}
	return &v
}

func filled(t *csvTable, cols []string) int {
	n := 0
	for _, c := range cols {
		if t.get(c) != "" {
			n++
		}
	}
	return n
}

func firstEmpty(t *csvTable, cols []string) string {
	for _, c := range cols {
		if t.get(c) == "" {
			return c
		}
	}
	return ""
}

func firstFilled(t *csvTable, cols []string) string {
	for _, c := range cols {
		if t.get(c) != "" {
			return c
		}
	}
	return ""
}
