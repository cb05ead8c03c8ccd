package ingest

import (
	"crypto/sha256"
	"encoding/hex"
	"io"
	"strconv"
	"strings"
)

var neutralParam = map[string]string{"mean": "MEAN", "ls_mean": "LEAST_SQUARES_MEAN", "median": "MEDIAN"}

var neutralDispersion = map[string]string{
	"sd": "STANDARD_DEVIATION", "se": "STANDARD_ERROR", "ci95": "CONFIDENCE_95",
	"iqr": "INTER_QUARTILE_RANGE", "range": "FULL_RANGE",
}

var neutralTrialCols = []string{"title", "sponsor", "completion_date", "results_posted_date", "publication"}

// ReadNeutralCSV reads the neutral registry format, one row per arm per
// outcome: registry, trial_id, title, sponsor, completion_date,
// results_posted_date, publication (yes|no|unknown), outcome, time_frame,
// unit, param (mean|ls_mean|median), dispersion (sd|se|ci95|iqr|range),
// group, role (experimental|comparator), n, value, spread, lower, upper.
//
// Rows of one (registry, trial_id) form one Trial, in order of first
// appearance; rows of one (outcome, time_frame) form one Outcome; groups
// get ids G1, G2, ... per outcome. spread holds an SD or SE, lower and
// upper the limits. A row whose trial-level columns disagree with the
// trial's first row, or whose outcome-level columns disagree with the
// outcome's first row, is rejected. ContentHash is the SHA-256 of the
// trial's rows as read.
func ReadNeutralCSV(r io.Reader, src Source) ([]Trial, []*ParseError, error) {
	t, pe, err := newCSVTable(r, src, "registry", "trial_id", "outcome", "param", "dispersion", "group", "role", "n", "value")
	if err != nil || pe != nil {
		return nil, pes(pe), err
	}
	type trialAcc struct {
		t        Trial
		firstRow map[string]string
		firstAt  int
		outcomes map[[2]string]int
		hash     []byte
		failed   bool // a row of this trial was rejected: the trial is left out whole
	}
	var order []*trialAcc
	byKey := map[[2]string]*trialAcc{}
	var bad []*ParseError
	for {
		ok, pe, err := t.next()
		if err != nil {
			return nil, bad, err
		}
		if pe != nil {
			bad = append(bad, pe)
		}
		if !ok {
			break
		}
		e := rowErrors{t: t, record: t.get("trial_id")}
		registry := strings.ToLower(e.required("registry"))
		id := e.required("trial_id")
		title := e.required("outcome")
		timeFrame := t.get("time_frame")
		param := neutralParam[strings.ToLower(t.get("param"))]
		if param == "" {
			e.fail("param", ErrBadValue, "%q is not one of mean, ls_mean, median", t.get("param"))
		}
		dispText := strings.ToLower(t.get("dispersion"))
		disp := neutralDispersion[dispText]
		if disp == "" {
			e.fail("dispersion", ErrBadValue, "%q is not one of sd, se, ci95, iqr, range", t.get("dispersion"))
		}
		group := e.required("group")
		role := e.enum("role", "experimental", "comparator")
		n := e.count("n")
		if n == nil && e.err == nil {
			e.fail("n", ErrMissing, "empty")
		}
		m := Measurement{GroupID: "", Value: e.neutralNum("value", true), Spread: e.neutralNum("spread", false),
			Lower: e.neutralNum("lower", false), Upper: e.neutralNum("upper", false)}
		pub := strings.ToLower(t.get("publication"))
		if pub == "" {
			pub = "unknown"
		}
		if pub != "yes" && pub != "no" && pub != "unknown" {
			e.fail("publication", ErrBadValue, "%q is not one of yes, no, unknown", t.get("publication"))
		}
		completion := e.registryDate("completion_date")
		posted := e.registryDate("results_posted_date")
		if e.err != nil {
			bad = append(bad, e.err)
			continue
		}
		key := [2]string{registry, id}
		acc := byKey[key]
		if acc == nil {
			yes := true
			acc = &trialAcc{
				t: Trial{Registry: registry, TrialID: id, BriefTitle: t.get("title"), LeadSponsor: Org{Name: t.get("sponsor")},
					CompletionDate: Date{Text: completion}, ResultsFirstPosted: Date{Text: posted},
					HasResults: &yes, Publication: pub, Source: t.source()},
				firstRow: map[string]string{}, firstAt: t.line, outcomes: map[[2]string]int{},
			}
			for _, c := range neutralTrialCols {
				acc.firstRow[c] = t.get(c)
			}
			acc.firstRow["publication"] = pub
			byKey[key] = acc
			order = append(order, acc)
		} else {
			for _, c := range neutralTrialCols {
				v := t.get(c)
				if c == "publication" {
					v = pub
				}
				if v != acc.firstRow[c] {
					e.fail(c, ErrBadValue, "%q differs from %q on line %d for the same trial", v, acc.firstRow[c], acc.firstAt)
					break
				}
			}
		}
		okey := [2]string{title, timeFrame}
		oi, seen := acc.outcomes[okey]
		if !seen {
			oi = len(acc.t.Outcomes)
			acc.t.Outcomes = append(acc.t.Outcomes, Outcome{Index: oi, Title: title, TimeFrame: timeFrame, ReportingStatus: "POSTED",
				ParamType: param, DispersionText: t.get("dispersion"), Dispersion: disp, Unit: t.get("unit"),
				Denoms: []Denom{{Units: "Participants"}}, Classes: []Class{{Categories: []Category{{}}}}})
		}
		o := &acc.t.Outcomes[oi]
		switch {
		case e.err != nil:
		case o.ParamType != param:
			e.fail("param", ErrBadValue, "%q differs from the outcome's first row", t.get("param"))
		case o.Dispersion != disp:
			e.fail("dispersion", ErrBadValue, "%q differs from the outcome's first row", t.get("dispersion"))
		case o.Unit != t.get("unit"):
			e.fail("unit", ErrBadValue, "%q differs from the outcome's first row", t.get("unit"))
		}
		for _, g := range o.Groups {
			if g.Title == group && e.err == nil {
				e.fail("group", ErrDuplicateID, "%q given twice for outcome %q", group, title)
			}
		}
		if e.err != nil {
			if !seen && len(o.Groups) == 0 {
				acc.t.Outcomes = acc.t.Outcomes[:oi]
			}
			acc.failed = true
			bad = append(bad, e.err)
			continue
		}
		acc.outcomes[okey] = oi
		gid := "G" + strconv.Itoa(len(o.Groups)+1)
		o.Groups = append(o.Groups, Group{ID: gid, Title: group, Role: role})
		o.Denoms[0].Counts = append(o.Denoms[0].Counts, Count{GroupID: gid, Value: ParseNum(t.get("n"))})
		m.GroupID = gid
		cat := &o.Classes[0].Categories[0]
		cat.Measurements = append(cat.Measurements, m)
		for _, f := range t.row {
			acc.hash = append(acc.hash, f...)
			acc.hash = append(acc.hash, 0x1f)
		}
		acc.hash = append(acc.hash, 0x1e)
	}
	out := make([]Trial, 0, len(order))
	for _, acc := range order {
		if len(acc.t.Outcomes) == 0 {
			continue
		}
		if acc.failed {
			// Storing the rows that parsed would post a trial with arms
			// missing; leave it out and say so once.
			bad = append(bad, &ParseError{File: src.Path, Line: acc.firstAt, Record: acc.t.TrialID, Field: "trial_id",
				Err: errorf(ErrBadValue, "trial left out because some of its rows were rejected")})
			continue
		}
		sum := sha256.Sum256(acc.hash)
		acc.t.ContentHash = hex.EncodeToString(sum[:])
		out = append(out, acc.t)
	}
	return out, bad, nil
}

// neutralNum reads a number column; "", "NA" and "NA (...)" are missing.
// A required one must be a number.
func (e *rowErrors) neutralNum(field string, required bool) Num {
	s := e.t.get(field)
	n := ParseNum(s)
	if n.OK {
		return n
	}
	missing := s == "" || strings.EqualFold(s, "NA") || strings.HasPrefix(strings.ToUpper(s), "NA ")
	if !missing || required {
		e.fail(field, ErrBadValue, "not a number: %q", s)
	}
	return n
}
